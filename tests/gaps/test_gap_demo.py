"""The gap demo (examples/gap_demo.py) in its quick mode: it finishes, writes its files and figures, prints the
high-voltage caution and stores it in the air gap's files (the project's rule for outputs of work that can hurt
someone: terminal and file metadata)."""

from __future__ import annotations

import importlib.util
from pathlib import Path

import h5py
import pytest

from avalanche.gaps.results import SAFETY_NOTE

DEMO = Path(__file__).resolve().parents[2] / "examples" / "gap_demo.py"


@pytest.mark.slow
def test_the_quick_demo_writes_its_files_and_cautions(tmp_path, capsys):
    spec = importlib.util.spec_from_file_location("gap_demo", DEMO)
    demo = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(demo)
    demo.main([str(tmp_path), "--quick"])
    printed = capsys.readouterr().out
    assert printed.count(SAFETY_NOTE) >= 2 and "space charge is neglected" in printed
    for name in ("wire_gain_curve", "wire_gain_distribution", "wire_ionization_map", "needle_gain_curve",
                 "needle_current"):
        assert (tmp_path / f"{name}.png").stat().st_size > 1000
    needle = sorted(tmp_path.glob("needle_*deg.h5"))
    assert len(needle) == 2 and len(list(tmp_path.glob("wire_*V.h5"))) == 2
    for path in needle:
        with h5py.File(path, "r") as f:
            assert f.attrs["caution"] == SAFETY_NOTE and "O2" in f.attrs["mixture"]
            assert f.attrs["inputs_json"] and f.attrs["checksums_json"]
    # the gain rises with the voltage: at the wire, and along the half-cycle with the voltage at release
    gains = [float(line.split("mean gain")[1].split()[0]) for line in printed.splitlines() if "mean gain" in line]
    assert len(gains) == 4
    wire_1100, wire_900, needle_90, needle_50 = gains
    assert wire_1100 > wire_900 > 1 and needle_90 > needle_50
