"""Build the shipped N2, O2, CO2, H2O, Ar@phelps and Ar@hayashi cross-section files from published data.

A build-time tool, not part of the package: it reads the tables of the data package ``elmolcs`` 0.0.3
(GPL-3.0-or-later; ``pip install ".[build-data]"``) through that package's own table reader
(``elmolcs.tablehandler.TableHandler.readtable``; its higher-level ``loadCS`` fails on the O2, CO2 and H2O
compilations, so one reader serves every file) and writes our TOML format with the original publication of every
block. Only the published blocks are taken: blocks the carrier added of its own (bremsstrahlung, alternative
tables) are left out, and blocks it marked to skip are taken when they are the published ones (N2 ionization).

Usage::

    python tools/build_crosssections.py               # writes every file into crosssections/
    python tools/build_crosssections.py N2 --out DIR   # one set into DIR

The output is deterministic (no date of the run in it), so a test can compare it with the shipped file.
"""

from __future__ import annotations

import argparse
import logging
import os
import sys
import warnings
from functools import lru_cache
from pathlib import Path

import scipy.constants as sc

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from avalanche.gas.crosssections import SUSPICIOUS_m2, dumps_data, parse_set  # noqa: E402

CARRIER = ("carried by the data package elmolcs 0.0.3 (A. Jesenek, GPL-3.0-or-later), file {file}, read with its "
           "table reader elmolcs.tablehandler.TableHandler.readtable")
DATE = "2026-12-03"

PHELPS_N2 = ("A. V. Phelps and L. C. Pitchford (1985) Phys. Rev. A 31, 2932, doi:10.1103/PhysRevA.31.2932: "
             "anisotropic scattering of electrons by N2 and its effect on electron transport (the N2 set)")
RAPP = ("D. Rapp and P. Englander-Golden (1965) J. Chem. Phys. 43, 1464, doi:10.1063/1.1696957: total ionization "
        "cross sections")
CARTWRIGHT = ("D. C. Cartwright, A. Chutjian, S. Trajmar and W. Williams (1977) Phys. Rev. A 16, 1013, "
              "doi:10.1103/PhysRevA.16.1013: electronic excitation of N2")
SCHULZ = "G. J. Schulz (1964) Phys. Rev. 135, A988, doi:10.1103/PhysRev.135.A988: vibrational excitation of N2"
HAKE = ("R. D. Hake and A. V. Phelps (1967) Phys. Rev. 158, 70, doi:10.1103/PhysRev.158.70: single-level "
        "approximation to rotational excitation")
ZIPF = ("E. C. Zipf and R. W. McLaughlin (1978) Planet. Space Sci. 26, 449, doi:10.1016/0032-0633(78)90066-1: sum of "
        "singlet states")
LAWTON = ("S. A. Lawton and A. V. Phelps (1978) J. Chem. Phys. 69, 1055, doi:10.1063/1.436700: excitation of the "
          "b1Sigma_g+ state of O2 by low energy electrons (the O2 set)")
HAYASHI = ("M. Hayashi (1992) Electron collision cross sections, in Plasma Material Science Handbook (Japan Society "
           "for the Promotion of Science, Ohmsha, Tokyo) pp. 748-766: the CO2 set; dissociative attachment from "
           "D. Loffhagen (2016) in Plasma Modeling (IOP Publishing) ch. 3, fig. 3b")
ITIKAWA_H2O = ("Y. Itikawa and N. Mason (2005) J. Phys. Chem. Ref. Data 34, 1, doi:10.1063/1.1799251: cross sections "
               "for electron collisions with water molecules (recommended values)")
YAMABE = ("C. Yamabe, S. J. Buckman and A. V. Phelps (1983) Phys. Rev. A 27, 1345, doi:10.1103/PhysRevA.27.1345: "
          "the Ar set (effective momentum transfer, lumped excitation)")
RAPP_AR = RAPP + " (argon, as taken by Yamabe, Buckman and Phelps 1983)"
OPAL = ("C. B. Opal, W. K. Peterson and E. C. Beaty (1971) J. Chem. Phys. 55, 4100, doi:10.1063/1.1676707: "
        "measurements of secondary-electron spectra (energy-sharing parameter w, as tabulated in the carrier's "
        "elmolcs.constants.Constants.ION_FIT)")
HAYASHI_AR = ("M. Hayashi (2003) Bibliography of electron and photon cross sections with atoms and molecules "
              "published in the 20th century: argon, report NIFS-DATA-72 (National Institute for Fusion Science, "
              "Toki): the Ar set (momentum transfer as corrected to fig. 1 of that report)")
YANGUAS_GIL = ("A. Yanguas-Gil, J. Cotrino and L. L. Alves (2005) J. Phys. D: Appl. Phys. 38, 1588, "
               "doi:10.1088/0022-3727/38/10/014: an update of argon inelastic cross sections for plasma discharges "
               "(the "
               "Ar set of the Lisbon group)")
ALVES = ("L. L. Alves (2014) J. Phys.: Conf. Ser. 565, 012007, doi:10.1088/1742-6596/565/1/012007: the Lisbon "
         "group's complete cross-section sets, each validated against measured swarm parameters")
PHELPS_AR_MT = ("A. V. Phelps et al., the effective momentum transfer of C. Yamabe, S. J. Buckman and A. V. Phelps "
                "(1983) Phys. Rev. A 27, 1345, doi:10.1103/PhysRevA.27.1345, less the inelastic cross sections (the "
                "elastic momentum transfer of the Lisbon Ar set)")
KHAKOO = ("M. A. Khakoo et al. (2004) J. Phys. B: At. Mol. Opt. Phys. 37, 247, doi:10.1088/0953-4075/37/1/017: "
          "3p5 4s excitation (the resonant levels multiplied by 0.5 in the Lisbon set)")
CHILTON = ("J. E. Chilton, J. B. Boffard, R. S. Schappe and C. C. Lin (1998) Phys. Rev. A 57, 267, "
           "doi:10.1103/PhysRevA.57.267: 3p5 4p excitation")
HAYASHI_AR_3D = ("M. Hayashi (2003) report NIFS-DATA-72 (National Institute for Fusion Science, Toki): 3d and 5s "
                 "excitation, as taken by the Lisbon Ar set")
WEBER = "T. Weber et al. (2003) Phys. Rev. A 68, 032719, doi:10.1103/PhysRevA.68.032719: 3p5 5p excitation"
DRAWIN = ("H. W. Drawin (1967) report EUR-CEA-FC-383 (Fontenay-aux-Roses): formulae for the 4d and 6s excitation, "
          "as evaluated by the Lisbon Ar set")
RAPP_LISBON = RAPP + " (argon, as taken by the Lisbon Ar set)"
PUECH = ("V. Puech and L. Torchin (1986) J. Phys. D: Appl. Phys. 19, 2309, doi:10.1088/0022-3727/19/12/011: level list "
         "with Paschen designations, used only to name the 4s and 4p levels by matching thresholds (no cross section "
         "is taken from it)")
LOUREIRO = ("J. Loureiro and C. M. Ferreira (1986) J. Phys. D: Appl. Phys. 19, 17, doi:10.1088/0022-3727/19/1/007: "
            "coupled electron energy and vibrational distribution functions in stationary N2 discharges (the N2 set of "
            "the Lisbon group, compiled mostly from L. C. Pitchford and A. V. Phelps 1982 Bull. Am. Phys. Soc. 27, 109 "
            "and K. Tachibana and A. V. Phelps 1979 J. Chem. Phys. 71, 3544, extended to 1 keV)")
ISOLA = ("L. M. Isola, B. J. Gomez and V. Guerra (2010) J. Phys. D: Appl. Phys. 43, 015202, "
         "doi:10.1088/0022-3727/43/1/015202: partial ionization to N2+(B); the N2+(X) table of the set is the total of "
         "Rapp & Englander-Golden (1965) minus this partial one")
GOUSSET = ("G. Gousset, C. M. Ferreira, M. Pinheiro, P. A. Sa, M. Touzeau, M. Vialle and J. Loureiro (1991) "
           "J. Phys. D: Appl. Phys. 24, 290, doi:10.1088/0022-3727/24/3/010, and L. L. Alves, P. Coche, "
           "M. A. Ridenti and V. Guerra "
           "(2016) Eur. Phys. J. D 70, 124, doi:10.1140/epjd/e2016-70102-1: the O2 set of the Lisbon group, compiled "
           "from A. V. Phelps (1985) Technical Report 28, JILA Information Center, University of Colorado, extended to "
           "1 keV")
WAKIYA = ("K. Wakiya (1978) J. Phys. B 11, 3913, doi:10.1088/0022-3700/11/22/018: a1Delta_g excitation to 200 eV, as "
          "taken by the Lisbon O2 set")
LISBON_NOTE = ("The Lisbon sets ship without the rotational groups their authors provide separately (J -> J+2 "
               "transitions of Gerjuoy & Stein 1955), which matter below about 1 Td (N2) and 10 Td (O2) as the set's "
               "own header states; transitions between excited vibrational levels are left out as well.")
DOI_NOTE = "DOIs were written from memory and checked against nothing but the citation in the carrier's block headers."


SECOND_POSITIVE = {"wavelength_nm": 337.1}
"""0-0 band of the N2 second positive system C3Pi_u -> B3Pi_g in air: A. Lofthus and P. H. Krupenie (1977) J. Phys.
Chem. Ref. Data 6, 113 (from memory; a radiating wavelength for emission estimates, not a cross section)."""
N2_ELECTRONIC = (
    ("A3,v0-4", "A3Sigma_u+ (v=0-4)", {}), ("A3,v5-9", "A3Sigma_u+ (v=5-9)", {}),
    ("A3,v10-", "A3Sigma_u+ (v>=10)", {}), ("B3", "B3Pi_g", {}), ("W3", "W3Delta_u", {}),
    ("B'3", "B'3Sigma_u-", {}), ("a'1", "a'1Sigma_u-", {}), ("a1", "a1Pi_g", {}), ("w1", "w1Delta_u", {}),
    ("C3", "C3Pi_u", SECOND_POSITIVE), ("E3", "E3Sigma_g+", {}), ('a"1', "a''1Sigma_g+", {}),
)


def _vib(n: int, states=("X(v=0)", "X(v={})")) -> dict:
    return {"level_type": "vibrational", "superelastic": True, "statistical_weights": [1.0, 1.0],
            "initial_state": states[0], "final_state": states[1].format(n)}


AR_4S_LABELS = {
    "4s[3/2]3P2o": "1s5 (3p5 4s [3/2]2, metastable)", "4s[3/2]3P1o": "1s4 (3p5 4s [3/2]1, resonant)",
    "4s'[1/2]3P0o": "1s3 (3p5 4s' [1/2]0, metastable)", "4s'[1/2]1P1o": "1s2 (3p5 4s' [1/2]1, resonant)",
}
"""Our labels of the four 3p5 4s levels (kept from the earlier argon file, so Penning groups such as ``"Ar:1s"`` and
result keys stay valid): Paschen name as in Puech & Torchin (1986), the Racah name of the Lisbon block, and the
levels' character (J = 0, 2 metastable, J = 1 resonant: common practice)."""
AR_RESONANT = ("4s[3/2]3P1o", "4s'[1/2]1P1o")
"""The two 3p5 4s levels that radiate to the ground state: their resonance wavelength is h c / threshold."""


@lru_cache(maxsize=1)
def _paschen_names() -> dict[float, str]:
    """Threshold [eV] → Paschen name (1s…, 2p…) of the argon levels of Puech & Torchin (1986), read from the
    carrier's copy of their block headers."""
    names = {}
    for t in read_blocks("Ar/others/Cross section (puech).e-Ar"):
        header = t.attrs["header"]
        if _keyword(header) == "EXCITATION":
            name = _reaction(header, "EXCITATION").split("Ar(", 1)[1].strip()
            if name[:2] in ("1s", "2p") and name[2:].isdigit():
                names[_threshold(header, "EXCITATION")] = name
    return names


def _argon_level(header: dict, threshold_eV: float) -> dict:
    """Label and metadata of one excitation of the Lisbon argon set, from its PROCESS line."""
    state = header["PROCESS"].split("-> E +", 1)[1].rsplit(",", 1)[0].strip().replace("\u00b0", "o")
    racah = state.removeprefix("Ar(").removesuffix(")")
    entry = {"level_type": "electronic", "initial_state": "Ar(3p6 1S0)", "final_state": state, "group": "Ar*"}
    if racah in AR_4S_LABELS:
        entry["label"] = AR_4S_LABELS[racah]
        if racah in AR_RESONANT:  # lambda = h c / E, scipy.constants (CODATA)
            entry["wavelength_nm"] = round(sc.h * sc.c / (threshold_eV * sc.electron_volt) * 1e9, 2)
        entry["source"] = KHAKOO
        return entry
    paschen = [name for energy, name in _paschen_names().items() if abs(energy - threshold_eV) < 0.002]
    if racah.startswith("4p") and len(paschen) == 1:
        entry.update(label=f"{paschen[0]} ({racah})", source=CHILTON)
    else:
        entry["label"] = racah
        entry["source"] = (WEBER if racah.startswith("5p") else DRAWIN if racah[:2] in ("4d", "6s")
                           else HAYASHI_AR_3D)
    return entry


# Recipe: (keyword, reaction line of the block, our entry). The entry gives kind, label and any extra fields; the
# energy table, threshold and source come from the block.
RECIPES = {
    "N2": {
        "file": "N2/others/Cross section (phelps).e-N2", "set": "phelps",
        "species": {"name": "N2", "formula": "N2", "mass_amu": 28.0134, "ionization_energy_eV": 15.581,
                    "description": "Nitrogen, the swarm-consistent set of Phelps & Pitchford (1985)"},
        "sources": [PHELPS_N2, RAPP, CARTWRIGHT, SCHULZ, HAKE, ZIPF],
        "notes": ("Elastic scattering is given as the effective (total momentum-transfer) cross section; the elastic "
                  "momentum transfer is derived on loading by subtracting the inelastic cross sections. Vibrational "
                  "levels v=1-8 carry superelastic pairs (Boltzmann populations at the vibrational temperature; "
                  "negligible at 300 K). The rotational excitation is the single-level approximation prepared for "
                  "300 K (no de-excitation). Ionization: the total cross section of Rapp & Englander-Golden used by "
                  "the set (the carrier marks this block to skip; the partial N2+(B) ionization, part of the total, "
                  "and the carrier's own bremsstrahlung and integral-elastic blocks are left out). Ionization and "
                  "momentum transfer of the set are valid to 1000 eV and 10 keV. Ionization energy in the header: "
                  "NIST Chemistry WebBook 15.581 eV (from memory); the set's ionization threshold is 15.6 eV. The "
                  "C3Pi_u wavelength (337.1 nm, emission estimates) is from memory (Lofthus & Krupenie 1977). "
                  + DOI_NOTE),
        "blocks": [
            ("EFFECTIVE", "N2", {"kind": "effective", "label": "momentum transfer", "source": PHELPS_N2}),
            ("EXCITATION", "N2 -> N2(rot)", {"kind": "excitation", "label": "rotation (single-level approximation)",
                                             "source": HAKE, "level_type": "rotational"}),
            *[("EXCITATION", f"N2 -> N2(v{n})", {"kind": "excitation", "label": f"vibration v=0-{n}",
                                                 "source": PHELPS_N2 if n == 1 else SCHULZ, **_vib(n)})
              for n in range(1, 9)],
            *[("EXCITATION", f"N2 -> N2({s})", {"kind": "excitation", "label": label, "source": CARTWRIGHT,
                                                "level_type": "electronic", "initial_state": "X1Sigma_g+",
                                                "final_state": label, **extra})
              for s, label, extra in N2_ELECTRONIC],
            ("EXCITATION", "N2 -> N2(SUM)", {"kind": "excitation", "label": "sum of singlets", "source": ZIPF,
                                             "level_type": "electronic"}),
            ("IONIZATION", "N2 -> N2^+", {"kind": "ionization", "label": "total ionization", "source": RAPP,
                                          "comment": "RAPP", "max_energy_eV": 1000.0}),
        ],
    },
    "O2": {
        "file": "O2/others/Cross section (phelps).e-O2", "set": "phelps",
        "species": {"name": "O2", "formula": "O2", "mass_amu": 31.9988, "ionization_energy_eV": 12.0697,
                    "description": "Oxygen, the swarm-consistent set of Lawton & Phelps (1978)"},
        "sources": [LAWTON],
        "notes": ("Elastic scattering is given as the effective (total momentum-transfer) cross section; the elastic "
                  "momentum transfer is derived on loading. Three-body attachment e + O2 + O2: the cross section is "
                  "given for an O2 density of 1 cm^-3 (as the source states) and scales with the O2 density of the "
                  "mixture. Vibrational levels v=1-4 carry superelastic pairs. The rotational excitation is the "
                  "single-level approximation prepared for 300 K. The carrier's own bremsstrahlung block is left "
                  "out. Ionization energy in the header: NIST Chemistry WebBook 12.0697 eV (from memory); the set's "
                  "ionization threshold is 12.06 eV. " + DOI_NOTE),
        "blocks": [
            ("ATTACHMENT", "O2 -> O2-", {"kind": "attachment", "label": "three-body attachment e + O2 + O2 -> O2- + O2",
                                         "three_body": True, "reference_density_m3": 1e6, "third_body": "O2"}),
            ("ATTACHMENT", "O2 -> O^-+O", {"kind": "attachment", "label": "dissociative attachment O2 -> O- + O"}),
            ("EFFECTIVE", "O2", {"kind": "effective", "label": "momentum transfer"}),
            ("EXCITATION", "O2 -> O2(rot)", {"kind": "excitation", "label": "rotation (single-level approximation)",
                                             "level_type": "rotational"}),
            *[("EXCITATION", f"O2 -> O2(v{n})", {"kind": "excitation", "label": f"vibration v=0-{n}", **_vib(n)})
              for n in range(1, 5)],
            ("EXCITATION", "O2 -> O2(a1)", {"kind": "excitation", "label": "a1Delta_g", "level_type": "electronic"}),
            ("EXCITATION", "O2 -> O2(b1)", {"kind": "excitation", "label": "b1Sigma_g+", "level_type": "electronic"}),
            ("EXCITATION", "O2 -> O2(4.5 eV)", {"kind": "excitation", "label": "4.5 eV (A3Sigma_u+, C3Delta_u, "
                                                "c1Sigma_u- lumped)", "level_type": "electronic"}),
            ("EXCITATION", "O2 -> O2(6 eV)", {"kind": "excitation", "label": "6.0 eV (dissociation)",
                                              "level_type": "electronic"}),
            ("EXCITATION", "O2 -> O2(8.4eV)", {"kind": "excitation", "label": "8.4 eV (Schumann-Runge dissociation)",
                                               "level_type": "electronic"}),
            ("EXCITATION", "O2 -> O2(LB)", {"kind": "excitation", "label": "9.97 eV (higher states lumped)",
                                            "level_type": "electronic"}),
            ("IONIZATION", "O2 -> O2^+", {"kind": "ionization", "label": "total ionization"}),
        ],
    },
    "CO2": {
        "file": "CO2/others/Cross section (hayashi).e-CO2", "set": "hayashi",
        "species": {"name": "CO2", "formula": "CO2", "mass_amu": 44.0095, "ionization_energy_eV": 13.777,
                    "description": "Carbon dioxide, the swarm-derived set of Hayashi (1992)"},
        "sources": [HAYASHI],
        "notes": ("Elastic momentum transfer as tabulated. Vibrational excitations as lumped by the source (no "
                  "superelastic pairs: the levels are not resolved). Ionization energy in the header: NIST "
                  "Chemistry WebBook 13.777 eV (from memory); the set's ionization threshold is 13.7 eV."),
        "blocks": [
            ("ATTACHMENT", "CO2 -> CO + O-", {"kind": "attachment", "label": "dissociative attachment CO2 -> CO + O-"}),
            ("ELASTIC", "CO2", {"kind": "elastic", "label": "momentum transfer"}),
            *[("EXCITATION", f"CO2 -> CO2(V{n})({e}eV)", {"kind": "excitation", "label": f"vibration V{n} ({e} eV)",
                                                          "level_type": "vibrational"})
              for n, e in ((1, "0.083"), (2, "0.172"), (3, "0.291"), (4, "0.36"), (5, "2.5"))],
            *[("EXCITATION", f"CO2 -> CO2*({e}eV)", {"kind": "excitation", "label": f"electronic {e} eV",
                                                     "level_type": "electronic"})
              for e in ("5.7", "9.0", "11.0")],
            ("IONIZATION", "CO2 -> CO2^+", {"kind": "ionization", "label": "total ionization"}),
        ],
    },
    "H2O": {
        "file": "H2O/others/Cross section (itikawa).e-H2O", "set": "itikawa",
        "species": {"name": "H2O", "formula": "H2O", "mass_amu": 18.0153, "ionization_energy_eV": 12.621,
                    "description": "Water vapour, the recommended cross sections of Itikawa & Mason (2005)"},
        "sources": [ITIKAWA_H2O],
        "notes": ("A review's recommended values, not a swarm-adjusted set: momentum transfer (to 100 eV, constant "
                  "beyond), rotational excitation J=0-1, 0-2, 0-3 (from the ground level, no de-excitation), "
                  "vibrational (010) and (100)+(001), total ionization and the three dissociative-attachment "
                  "channels. The review gives no total electronic excitation (only emission cross sections, left "
                  "out), so energy losses between 7 and 13 eV are missing: use H2O as a minor admixture (humid air), "
                  "not as a pure gas. Ionization energy in the header: NIST Chemistry WebBook 12.621 eV (from "
                  "memory); the review's ionization threshold is 13.5 eV. The ionization table starts with a step "
                  "(two values at 13.5 eV): the upper value is kept. " + DOI_NOTE),
        "blocks": [
            ("ATTACHMENT", "H2O -> H+OH^-", {"kind": "attachment", "label": "dissociative attachment -> OH- + H"}),
            ("ATTACHMENT", "H2O -> H2+O^-", {"kind": "attachment", "label": "dissociative attachment -> O- + H2"}),
            ("ATTACHMENT", "H2O -> HO+H^-", {"kind": "attachment", "label": "dissociative attachment -> H- + OH"}),
            ("ELASTIC", "H2O", {"kind": "elastic", "label": "momentum transfer",
                                "comment": "Momentum transfer cross sections."}),
            ("EXCITATION", "H2O -> H2O(rot)", {"kind": "excitation", "label": "rotation J=0-1", "comment": "J=0-1.",
                                               "level_type": "rotational"}),
            ("EXCITATION", "H2O -> H2O(rot )", {"kind": "excitation", "label": "rotation J=0-2",
                                                "comment": "J=0-2.", "level_type": "rotational"}),
            ("EXCITATION", "H2O -> H2O(rot)", {"kind": "excitation", "label": "rotation J=0-3", "comment": "J=0-3.",
                                               "level_type": "rotational"}),
            ("EXCITATION", "H2O -> H2O(v 010)", {"kind": "excitation", "label": "vibration (010)",
                                                 "level_type": "vibrational"}),
            ("EXCITATION", "H2O -> H2O(v 100+001)", {"kind": "excitation", "label": "vibration (100)+(001)",
                                                     "level_type": "vibrational"}),
            ("IONIZATION", "H2O -> H2O^+", {"kind": "ionization", "label": "total ionization",
                                            "comment": "Total Ionization."}),
        ],
    },
    "Ar@phelps": {
        "file": "Ar/others/Cross section (phelps).e-Ar", "set": "phelps",
        "species": {"name": "Ar", "formula": "Ar", "mass_amu": 39.948, "ionization_energy_eV": 15.7596,
                    "description": "Argon, the swarm-consistent set of Yamabe, Buckman & Phelps (1983)"},
        "sources": [YAMABE, RAPP_AR],
        "notes": ("Effective momentum transfer (elastic part derived on loading), one lumped electronic excitation "
                  "at 11.5 eV and total ionization. Ionization energy in the header: NIST Atomic Spectra Database "
                  "15.7596 eV (from memory); the set's ionization threshold is 15.8 eV. " + DOI_NOTE),
        "blocks": [
            ("EFFECTIVE", "Ar", {"kind": "effective", "label": "momentum transfer"}),
            ("EXCITATION", "Ar -> Ar*(11.5eV)", {"kind": "excitation", "label": "electronic excitation (lumped)",
                                                 "level_type": "electronic"}),
            ("IONIZATION", "Ar -> Ar^+", {"kind": "ionization", "label": "total ionization", "source": RAPP_AR}),
        ],
    },
    "Ar@hayashi": {
        "file": "Ar/others/Cross section (hayashi).e-Ar", "set": "hayashi",
        "species": {"name": "Ar", "formula": "Ar", "mass_amu": 39.948, "ionization_energy_eV": 15.7596,
                    "description": "Argon, the set of Hayashi (2003): 25 resolved excited levels"},
        "sources": [HAYASHI_AR],
        "notes": ("Elastic momentum transfer, 25 excitations of resolved levels (4s, 4p, 3d, 4d, 6p) and total "
                  "ionization, as tabulated. Ionization energy in the header: NIST Atomic Spectra Database "
                  "15.7596 eV (from memory); the set's ionization threshold is 15.76 eV."),
        "blocks": [
            ("ELASTIC", "Ar", {"kind": "elastic", "label": "momentum transfer"}),
            ("EXCITATION", "*", {"kind": "excitation", "level_type": "electronic", "initial_state": "3p6 1S0"}),
            ("IONIZATION", "Ar -> Ar^+", {"kind": "ionization", "label": "total ionization"}),
        ],
    },
    "Ar": {
        "file": "Ar/others/Cross section (ist).e-Ar", "set": "lisbon",
        "species": {"name": "Ar", "formula": "Ar", "mass_amu": 39.948, "ionization_energy_eV": 15.75961,
                    "description": "Argon, the swarm-validated set of the Lisbon group (Yanguas-Gil, Cotrino & Alves "
                                   "2005): 4s, 4p, 3d, 5s, 5p, 4d, 6s levels resolved"},
        "sources": [YANGUAS_GIL, ALVES, PHELPS_AR_MT, KHAKOO, CHILTON, HAYASHI_AR_3D, WEBER, DRAWIN, RAPP_LISBON,
                    PUECH],
        "notes": ("The default argon set. Elastic momentum transfer (the set's ELASTIC block: Phelps's effective cross "
                  "section less the inelastic ones, as the source states), 37 excitations of resolved or paired levels "
                  "and total ionization, all as tabulated to 1 keV; the authors adjusted them against measured swarm "
                  "parameters. Labels: the four 4s levels keep our earlier names (Paschen 1s5-1s2 with the Racah "
                  "name), "
                  "the 4p levels carry their Paschen name (2p10-2p1, matched by threshold to the level list of Puech "
                  "& Torchin 1986) beside the Racah name of the set, the others the set's Racah name; every level is "
                  "in the group Ar*. The two resonant 4s levels carry the wavelength h c / threshold. Every cross "
                  "section is read from the published tables. Ionization energy in the header (Penning energies "
                  "use it): NIST Atomic Spectra Database 15.75961 eV (from memory); the set's ionization threshold is "
                  "15.76 eV. Mass: standard atomic weight (common practice). " + DOI_NOTE),
        "blocks": [
            ("ELASTIC", "Ar", {"kind": "elastic", "label": "momentum transfer", "source": PHELPS_AR_MT}),
            ("EXCITATION", "*", {"kind": "excitation", "namer": _argon_level}),
            ("IONIZATION", "Ar -> Ar+", {"kind": "ionization", "label": "total ionization", "source": RAPP_LISBON}),
        ],
    },
    "N2@lisbon": {
        "file": "N2/others/Cross section (ist).e-N2", "set": "lisbon",
        "species": {"name": "N2", "formula": "N2", "mass_amu": 28.0134, "ionization_energy_eV": 15.581,
                    "description": "Nitrogen, the swarm-validated set of the Lisbon group (Loureiro & Ferreira 1986)"},
        "sources": [LOUREIRO, ALVES, CARTWRIGHT, ZIPF, ISOLA, RAPP],
        "notes": ("Effective momentum transfer (elastic part derived on loading), vibrational excitation v=0-1 to "
                  "v=0-10 (superelastic pairs with weights 1, as the set's <-> blocks state), 13 electronic "
                  "excitations and the ionization to N2+(X) and N2+(B) (their sum is the total of Rapp & "
                  "Englander-Golden 1965). The authors state agreement with measured swarm parameters for 1-1000 Td. "
                  + LISBON_NOTE + " Ionization energy in the header: NIST Chemistry WebBook 15.581 eV (from memory); "
                  "the set's ionization threshold is 15.6 eV. " + DOI_NOTE),
        "blocks": [
            ("EFFECTIVE", "N2", {"kind": "effective", "label": "momentum transfer"}),
            *[("EXCITATION", f"N2 -> N2 (v=0 - v={n})", {"kind": "excitation", "label": f"vibration v=0-{n}",
                                                         **_vib(n)})
              for n in range(1, 11)],
            *[("EXCITATION", reaction, {"kind": "excitation", "label": label, "level_type": "electronic",
                                        "initial_state": "X1Sigma_g+", "final_state": label,
                                        **({"source": CARTWRIGHT} if cartwright else {})})
              for reaction, label, cartwright in (
                  ("N2 -> N2[A3SIGu+(v=0-4)]", "A3Sigma_u+ (v=0-4)", False),
                  ("N2 -> N2 [A3SIGu+(v=5-9)]", "A3Sigma_u+ (v=5-9)", False),
                  ("N2 -> N2 [A3SIGu+(v=10+)]", "A3Sigma_u+ (v>=10)", False),
                  ("N2 -> N2(B3PIg)", "B3Pi_g", True), ("N2 -> N2(W3DELu)", "W3Delta_u", True),
                  ("N2 -> N2(B3SIGu-)", "B'3Sigma_u-", True), ("N2 -> N2(a'1SIGu-)", "a'1Sigma_u-", True),
                  ("N2 -> N2(a1PIg)", "a1Pi_g", True), ("N2 -> N2(w1DELu)", "w1Delta_u", True),
                  ("N2 -> N2(C3PIu)", "C3Pi_u", False), ("N2 -> N2(E3SIGg+)", "E3Sigma_g+", False),
                  ('N2 -> N2(a"1SIGg+)', "a''1Sigma_g+", False))],
            ("EXCITATION", "N2 -> N2(sing-sup)", {"kind": "excitation", "label": "sum of singlets", "source": ZIPF,
                                                  "level_type": "electronic"}),
            ("IONIZATION", "N2 -> N2+(X)", {"kind": "ionization", "label": "ionization to N2+(X)"}),
            ("IONIZATION", "N2 -> N2+(B)", {"kind": "ionization", "label": "ionization to N2+(B)", "source": ISOLA}),
        ],
    },
    "O2@lisbon": {
        "file": "O2/others/Cross section (ist).e-O2", "set": "lisbon",
        "species": {"name": "O2", "formula": "O2", "mass_amu": 31.9988, "ionization_energy_eV": 12.0697,
                    "description": "Oxygen, the swarm-validated set of the Lisbon group (Gousset et al. 1991, Alves "
                                   "et al. 2016)"},
        "sources": [GOUSSET, ALVES, WAKIYA],
        "notes": ("Effective momentum transfer (elastic part derived on loading), dissociative attachment, vibrational "
                  "excitation v=0-1 to v=0-4 (superelastic pairs), a1Delta_g, b1Sigma_g+, the 4.5, 6.0, 8.4, 9.97 and "
                  "14.7 eV losses and total ionization. The set has no three-body attachment (e + O2 + M): at high "
                  "pressure and low E/N it underestimates attachment; use the default O2 set there. The authors state "
                  "agreement with measured swarm parameters for 10-1000 Td. " + LISBON_NOTE + " Ionization energy in "
                  "the header: NIST Chemistry WebBook 12.0697 eV (from memory); the set's ionization threshold is "
                  "12.1 eV. " + DOI_NOTE),
        "blocks": [
            ("ATTACHMENT", "O2 -> O- + O", {"kind": "attachment", "label": "dissociative attachment O2 -> O- + O"}),
            ("EFFECTIVE", "O2", {"kind": "effective", "label": "momentum transfer"}),
            *[("EXCITATION", f"O2 -> O2(v=0 - v={n})", {"kind": "excitation", "label": f"vibration v=0-{n}",
                                                        **_vib(n)})
              for n in range(1, 5)],
            ("EXCITATION", "O2 -> O2(a1Dg)", {"kind": "excitation", "label": "a1Delta_g", "level_type": "electronic",
                                              "source": f"{GOUSSET}; above 40 eV {WAKIYA}"}),
            ("EXCITATION", "O2 -> O2(b1Sg+)", {"kind": "excitation", "label": "b1Sigma_g+",
                                               "level_type": "electronic"}),
            ("EXCITATION", "O2 -> O2(A3Su+,C3Du,c1Su-)", {"kind": "excitation", "label": "4.5 eV (A3Sigma_u+, "
                                                          "C3Delta_u, c1Sigma_u- bound states)",
                                                          "level_type": "electronic"}),
            ("EXCITATION", "O2 -> O(3P)+O(3P)", {"kind": "excitation", "label": "6.0 eV (dissociation to O(3P) + "
                                                 "O(3P))", "level_type": "electronic"}),
            ("EXCITATION", "O2 -> O(3P)+O(1D)", {"kind": "excitation", "label": "8.4 eV (dissociation to O(3P) + "
                                                 "O(1D))", "level_type": "electronic"}),
            ("EXCITATION", "O2 -> O2(9.97eV)", {"kind": "excitation", "label": "9.97 eV", "level_type": "electronic"}),
            ("EXCITATION", "O2 -> O2(14.7eV)", {"kind": "excitation", "label": "14.7 eV", "level_type": "electronic"}),
            ("IONIZATION", "O2 -> O2+", {"kind": "ionization", "label": "total ionization"}),
        ],
    },
}
OUTPUT_NAME = {"N2": "N2.toml", "O2": "O2.toml", "CO2": "CO2.toml", "H2O": "H2O.toml", "Ar@phelps": "Ar@phelps.toml",
               "Ar@hayashi": "Ar@hayashi.toml", "Ar": "Ar.toml", "N2@lisbon": "N2@lisbon.toml",
               "O2@lisbon": "O2@lisbon.toml"}
OPAL_SPECIES = ("N2", "O2", "Ar", "H2O", "CO2")
"""Species whose ionization gets the Opal-Peterson-Beaty w of the carrier's constants table."""
KEYWORDS = ("EFFECTIVE", "ELASTIC", "EXCITATION", "IONIZATION", "ATTACHMENT")


def read_blocks(relative_file: str) -> list:
    """Every table of one data file of the carrier, with its header, through the carrier's own reader."""
    logging.disable(logging.CRITICAL)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        from elmolcs import reader, tablehandler

        path = os.path.join(reader.ROOT, "cs", relative_file)
        return tablehandler.TableHandler.readtable(path, key="SPECIES", NA=tablehandler.NA, minrow=3)


def opal_w_eV(species: str) -> float:
    """The Opal–Peterson–Beaty sharing parameter w [eV] of ``species`` from the carrier's constants table (which
    stores N2, O2, He, Ar, H2 in joules and the other species in eV)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        from elmolcs import constants

    value = float(constants.Constants.ION_FIT[species])
    return round(value / constants.eV, 6) if value < 1e-10 else value


def _keyword(header: dict) -> str:
    return next((k for k in header if k in KEYWORDS), "")


def _reaction(header: dict, keyword: str) -> str:
    keys = list(header)
    return keys[keys.index(keyword) + 1].strip()


def _find(tables, keyword: str, reaction: str, comment: str | None, where: str):
    found = [t for t in tables if _keyword(t.attrs["header"]) == keyword
             and _reaction(t.attrs["header"], keyword) == reaction
             and (comment is None or comment.lower() in t.attrs["header"].get("COMMENT", "").lower())]
    if len(found) != 1:
        raise SystemExit(f"{where}: expected one {keyword} block '{reaction}' (comment {comment!r}), found "
                         f"{len(found)}")
    return found[0]


def _threshold(header: dict, keyword: str) -> float:
    if keyword in ("EFFECTIVE", "ELASTIC", "ATTACHMENT"):
        return 0.0
    param = header.get("PARAM.", "")
    text = param.split("E =", 1)[1].split("eV", 1)[0] if "E =" in param else ""
    return float(text)


def build(name: str) -> str:
    """The TOML text of one shipped file (``name`` a key of RECIPES)."""
    recipe = RECIPES[name]
    tables = read_blocks(recipe["file"])
    carrier = CARRIER.format(file=recipe["file"])
    processes = []
    blocks = []
    for keyword, reaction, entry in recipe["blocks"]:
        if reaction != "*":
            blocks.append((keyword, reaction, entry))
            continue
        # every (not skipped) block of this keyword, labelled by its final state
        for t in tables:
            header = t.attrs["header"]
            if _keyword(header) == keyword and "@skip" not in header:
                state = _reaction(header, keyword).split("->", 1)[1].strip()
                namer = entry.get("namer")
                extra = namer(header, _threshold(header, keyword)) if namer else {"label": state, "final_state": state}
                blocks.append((keyword, _reaction(header, keyword),
                               {k: v for k, v in {**entry, **extra}.items() if k != "namer"}))
    for keyword, reaction, entry in blocks:
        entry = dict(entry)
        table = _find(tables, keyword, reaction, entry.pop("comment", None), f"{name} ({recipe['file']})")
        header = table.attrs["header"]
        if list(table.attrs["units"][:2]) != ["eV", "m2"]:
            raise SystemExit(f"{name}: block {reaction} has units {table.attrs['units']}, expected eV and m2")
        keep = table.iloc[:, 0] <= entry.pop("max_energy_eV", float("inf"))
        energy = [float(x) for x in table.iloc[:, 0][keep]]
        sigma = [float(x) for x in table.iloc[:, 1][keep]]
        steps = [i for i in range(len(energy) - 1) if energy[i] == energy[i + 1]]
        for i in reversed(steps):  # a step written as a repeated energy: our tables keep the upper value
            del energy[i], sigma[i]
        process = {"kind": entry.pop("kind"), "label": entry.pop("label"),
                   "threshold_eV": _threshold(header, keyword)}
        process.update({"energy_eV": energy, "cross_section": sigma, "units": "m2"})
        source = entry.pop("source", recipe["sources"][0])
        process["source"] = f"{source}; block '{header.get('PROCESS', reaction)}', {carrier}"
        process["original_keyword"] = keyword
        process.update(entry)
        if max(sigma) > SUSPICIOUS_m2:  # e.g. rotational excitation of a polar molecule near threshold: real
            process["allow_large_cross_section"] = True
        if process["kind"] == "ionization" and recipe["species"]["formula"] in OPAL_SPECIES:
            process["opb_w_eV"] = opal_w_eV(recipe["species"]["formula"])
            process["source"] += f"; opb_w_eV: {OPAL}"
        processes.append(process)
    species = dict(recipe["species"], set=recipe["set"])
    thresholds = [p["threshold_eV"] for p in processes if p["kind"] == "ionization"]
    if thresholds and abs(min(thresholds) - species["ionization_energy_eV"]) > 1e-3:
        species["ionization_energy_note"] = (
            f"the published ionization table starts at its own threshold, {min(thresholds):g} eV; the header keeps "
            "the spectroscopic ionization energy (provenance notes), which Penning transfer uses")
    data = {"format_version": 1, "species": species,
            "provenance": {"date": DATE, "sources": [*recipe["sources"], carrier.replace(", file", "; file")],
                           "notes": recipe["notes"]},
            "process": processes}
    text = ("# Built by tools/build_crosssections.py from published data (see [provenance]); do not edit by hand.\n"
            + dumps_data(data))
    parse_set(data, f"built {name}")  # the result must load and validate
    return text


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("names", nargs="*", choices=[*RECIPES, []], help="sets to build (default: all)")
    parser.add_argument("--out", default=str(ROOT / "crosssections"), help="output folder")
    args = parser.parse_args(argv)
    for name in args.names or list(RECIPES):
        path = Path(args.out) / OUTPUT_NAME[name]
        path.write_text(build(name))
        print(f"wrote {path}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
