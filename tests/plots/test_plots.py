"""Figures: files are written, and the data drawn (read back from the artists) equal the data given.

No pixel comparisons. References: the empirical Townsend formula and its validity range (Raizer, Gas Discharge
Physics, Springer 1991, table 4.1 — from memory, via avalanche.analysis.coefficients.HANDBOOK_TOWNSEND); exp(a x) is a
straight line of slope a on a log axis (analytic).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from matplotlib.backends.backend_agg import FigureCanvasAgg

from avalanche.analysis.breakdown import CAUTION, paschen_curve
from avalanche.analysis.coefficients import (
    CoefficientTable,
    handbook_alpha_N,
    handbook_validity_range_Td,
    townsend_formula,
)
from avalanche.analysis.emission import APPROXIMATION_NOTE
from avalanche.analysis.tables import SwarmTable
from avalanche.errors import ConfigError
from avalanche.plots import (
    PhaseCurve,
    SSTProfile,
    plot_eedf,
    plot_emission_spectrum,
    plot_paschen,
    plot_phase_resolved,
    plot_sst_profiles,
    plot_swarm_parameters,
    read_reference,
    save_figure,
)
from avalanche.plots.style import draw_errorbar, new_figure, set_log_y
from avalanche.quantities import rate_name
from avalanche.store.sweep_file import open_results


def lines_by_gid(figure) -> dict:
    return {line.get_gid(): line for ax in figure.axes for line in ax.lines if line.get_gid()}


def container(figure, gid):
    """The errorbar container whose data line is tagged ``gid``."""
    return next(c for ax in figure.axes for c in ax.containers if c.lines[0].get_gid() == gid)


def error_bars(figure, gid):
    """Half-lengths of the error bars of the series ``gid``, from its errorbar container."""
    segments = container(figure, gid).lines[2][0].get_segments()
    return np.array([(s[1][1] - s[0][1]) / 2.0 for s in segments])


@pytest.fixture(scope="module")
def argon(outputs_results):  # noqa: F811
    return SwarmTable.from_results(open_results(outputs_results), mixture="Ar")


def test_swarm_plot_shows_the_file_data(argon, outputs_results, tmp_path):  # noqa: F811
    figure = plot_swarm_parameters(argon)
    paths = save_figure(figure, tmp_path / "swarm")
    assert [p.suffix for p in paths] == [".png", ".pdf"] and all(p.stat().st_size > 0 for p in paths)
    results = open_results(outputs_results)
    rows = results.grid["mixture_index"] == 0
    drawn = lines_by_gid(figure)
    for name in ("mean_energy_eV", "drift_velocity_flux", "drift_velocity_bulk", "N_D_L_bulk", "alpha_N"):
        fields, values = results.grid["reduced_field_Td"][rows], results.value(name)[rows]
        errors = results.stderr(name)[rows]
        shown = np.isfinite(values) & (values > 0)  # log axes: zero or undefined values are left out
        order = np.argsort(fields[shown])
        np.testing.assert_array_equal(drawn[name].get_xdata(), fields[shown][order])
        np.testing.assert_array_equal(drawn[name].get_ydata(), values[shown][order])
        np.testing.assert_allclose(error_bars(figure, name), errors[shown][order], rtol=1e-12)
    flux_axes = next(ax for ax in figure.axes if drawn["drift_velocity_flux"] in ax.lines)
    assert drawn["drift_velocity_bulk"] in flux_axes.lines  # flux and bulk share a panel
    assert flux_axes.get_xscale() == "log" and flux_axes.get_yscale() == "log"
    assert "[m s$^{-1}$]" in flux_axes.get_ylabel() and "[Td]" in flux_axes.get_xlabel()


def test_handbook_overlay_only_inside_its_validity_range(argon):
    figure = plot_swarm_parameters(argon, ["alpha_N"])
    line = lines_by_gid(figure)["handbook_alpha_N"]
    low, high = handbook_validity_range_Td("Ar")
    x = np.asarray(line.get_xdata())
    assert x.min() >= low * (1 - 1e-12) and x.max() <= high * (1 + 1e-12)
    assert x.min() >= argon.reduced_field_Td.min() and x.max() <= argon.reduced_field_Td.max() * (1 + 1e-12)
    np.testing.assert_allclose(line.get_ydata(), handbook_alpha_N("Ar", x), rtol=1e-14)
    assert "Raizer" in line.get_label()
    assert "handbook_alpha_N" not in lines_by_gid(plot_swarm_parameters(argon, ["alpha_N"], handbook=None))
    narrow = SwarmTable([10.0, 20.0], {"alpha_N": ([1e-24, 2e-24], [0, 0])}, gas_label="Ar")  # below its range
    assert "handbook_alpha_N" not in lines_by_gid(plot_swarm_parameters(narrow, ["alpha_N"]))
    with pytest.raises(ConfigError, match="did you mean"):
        plot_swarm_parameters(argon, ["alpha_N"], handbook="Argn")


def test_reference_overlay(argon, tmp_path):
    values, _ = argon.get("drift_velocity_bulk")
    path = tmp_path / "ref.csv"
    path.write_text("# source: this very sweep (a self-check)\nreduced_field_Td,drift_velocity_bulk\n"
                    + "".join(f"{float(x)!r},{float(v)!r}\n" for x, v in zip(argon.reduced_field_Td[-2:], values[-2:],
                                                                     strict=True)))
    reference = read_reference(path)
    figure = plot_swarm_parameters(argon, ["drift_velocity"], reference)
    np.testing.assert_array_equal(lines_by_gid(figure)["reference:drift_velocity_bulk"].get_ydata(), values[-2:])
    assert container(figure, "reference:drift_velocity_bulk").get_label().startswith("this very sweep")
    path.write_text("reduced_field_Td,drift_velocity_bulck\n1,2\n")
    with pytest.raises(ConfigError, match="did you mean 'drift_velocity_bulk'"):
        read_reference(path)


def test_quantity_selection(argon):
    drawn = lines_by_gid(plot_swarm_parameters(argon, ["drift_velocity_bulk", "rate_coefficients"]))
    assert "drift_velocity_bulk" in drawn and "drift_velocity_flux" not in drawn
    assert "rate_coefficient_1s4_3p5_4s_3_2_1_resonant" in drawn
    with pytest.raises(ConfigError, match="did you mean 'mean_energy_eV'"):
        plot_swarm_parameters(argon, ["mean_energy"])


def test_labels_are_our_own_and_do_not_overlap(argon):
    # several quantities at once: no two tick or axis labels of the figure overlap once drawn (the figure's own
    # renderer measures them), the series of the computed data is not named after the package, the title holds
    # no file name, and a log axis spanning less than two decades shows plain numbers ("6", not "6×10⁰")
    figure = plot_swarm_parameters(argon, ["mean_energy_eV", "drift_velocity", "N_D_L",
                                           "N_D_T", "alpha_N", "eta_N", "rate_coefficients"])
    renderer = FigureCanvasAgg(figure).get_renderer()
    figure.draw(renderer)
    for ax in figure.axes:
        (x0, x1), (y0, y1) = sorted(ax.get_xlim()), sorted(ax.get_ylim())
        labels = [t for t in ax.get_yticklabels(which="both") if t.get_text() and y0 <= t.get_position()[1] <= y1]
        labels += [t for t in ax.get_xticklabels(which="both") if t.get_text() and x0 <= t.get_position()[0] <= x1]
        boxes = [t.get_window_extent(renderer) for t in labels]
        for i in range(len(boxes)):
            for j in range(i + 1, len(boxes)):
                assert not boxes[i].overlaps(boxes[j]), (labels[i].get_text(), labels[j].get_text())
        assert "avalanche" not in [text for text in ax.get_legend_handles_labels()[1]]
    assert ".h5" not in figure.get_suptitle()
    narrow, (ax,) = new_figure(1, columns=1)
    draw_errorbar(ax, [1.0, 2.0, 3.0], [2.0, 4.0, 8.0], None, "energy", "Monte Carlo", True)
    set_log_y(ax)
    FigureCanvasAgg(narrow).draw()
    texts = [t.get_text() for t in ax.get_yticklabels(minor=True) + ax.get_yticklabels() if t.get_text()]
    assert texts and not any("times" in text or "×" in text or "^" in text for text in texts), texts


def test_eedf_plot(argon, outputs_results):  # noqa: F811
    point = open_results(outputs_results).point(int(argon.point_index[-1]))
    eedf = point.eedf
    figure = plot_eedf({point.reduced_field_Td: (eedf.energy_edges_eV, eedf.value, eedf.stderr)})
    line = lines_by_gid(figure)[f"eedf:{point.reduced_field_Td:g}"]
    shown = eedf.value > 0
    np.testing.assert_allclose(line.get_xdata(), eedf.energy_eV[shown], rtol=1e-15)
    np.testing.assert_array_equal(line.get_ydata(), eedf.value[shown])


def test_phase_resolved_panels():
    phase = (np.arange(16) + 0.5) * 2 * math.pi / 16
    curves = [PhaseCurve(frequency, phase, {"mean_energy_eV": (2.0 + np.sin(phase + k), np.full(16, 0.01)),
                                            "drift_velocity_flux": (1e5 * np.cos(phase), np.full(16, 1e3))})
              for k, frequency in enumerate((13.56e6, 1e6))]
    figure = plot_phase_resolved(curves)
    drawn = lines_by_gid(figure)
    assert len(figure.axes) == 2  # the ionization rate is absent, so not drawn
    for k, frequency in enumerate((13.56e6, 1e6)):
        line = drawn[f"phase:mean_energy_eV:{frequency:g}"]
        np.testing.assert_array_equal(line.get_xdata(), phase)
        np.testing.assert_array_equal(line.get_ydata(), 2.0 + np.sin(phase + k))
    assert figure.axes[0].get_xlim() == (0.0, 2 * math.pi)
    with pytest.raises(ConfigError, match="did you mean 'mean_energy_eV'"):
        plot_phase_resolved(curves, ["mean_energy"])


def test_sst_profile_growth_line():
    x = np.linspace(0.0, 0.02, 21)
    alpha = 150.0
    flux = np.exp(alpha * x) * (1.0 - 0.5 * np.exp(-x / 0.002))  # relaxes, then grows as exp(alpha x)
    figure = plot_sst_profiles([SSTProfile(x, {"flux": (flux, 0.01 * flux)}, 100.0, alpha, 0.01)])
    drawn = lines_by_gid(figure)
    np.testing.assert_array_equal(drawn["sst:flux:100.0"].get_ydata(), flux)
    growth = drawn["sst_growth:100.0"]
    slope = np.diff(np.log(growth.get_ydata())) / np.diff(growth.get_xdata())
    np.testing.assert_allclose(slope, alpha, rtol=1e-9)  # exp(a x) has slope a in ln (analytic)
    assert growth.get_xdata().min() >= 0.01
    assert figure.axes[0].get_yscale() == "log"


def test_paschen_plot_carries_the_caution(tmp_path):
    field = np.geomspace(30.0, 30000.0, 200)
    alpha = townsend_formula(12.0, 342.0, field, 293.0)  # N2 constants, Raizer 1991 table 4.1 (from memory)
    table = CoefficientTable(field, alpha, np.full(field.size, alpha[40]), temperature_K=293.0, gas_label="model")
    curve = paschen_curve(table, 0.01, np.geomspace(0.6, 200.0, 40))
    figure = plot_paschen(curve)
    drawn = lines_by_gid(figure)
    ok = np.isfinite(curve.breakdown_voltage_V)
    np.testing.assert_array_equal(drawn["paschen"].get_ydata(), curve.breakdown_voltage_V[ok])
    np.testing.assert_array_equal(drawn["paschen_minimum"].get_xdata(), [curve.minimum_pd_Pa_m])
    assert "paschen_asymptote" in drawn  # an attaching gas
    # the caution goes with the file (metadata) and the terminal, never inside the figure (common practice for
    # figures meant for papers)
    assert not any("Caution" in text.get_text() for text in figure.texts)
    assert figure.avalanche_notes["caution"] == "Caution: " + CAUTION
    png, pdf, svg = save_figure(figure, tmp_path / "paschen", ("png", "pdf", "svg"))
    from PIL import Image

    assert Image.open(png).text["Description"] == "Caution: " + CAUTION
    assert "avalanche" in Image.open(png).text["Software"]
    assert b"Caution" in pdf.read_bytes()
    assert "Caution" in svg.read_text(encoding="utf-8")


def test_emission_sticks_and_note():
    figure = plot_emission_spectrum([104.82, 106.67], [0.4, 1.0], ["1s2", "1s4"])
    sticks = next(c for ax in figure.axes for c in ax.collections if c.get_gid() == "emission")
    segments = sticks.get_segments()
    np.testing.assert_array_equal([s[0][0] for s in segments], [104.82, 106.67])
    np.testing.assert_array_equal([s[1][1] for s in segments], [0.4, 1.0])
    assert not figure.texts and figure.avalanche_notes["note"] == APPROXIMATION_NOTE


def test_save_figure_rejects_unknown_formats(tmp_path):
    with pytest.raises(ConfigError, match="did you mean 'png'"):
        save_figure(plot_emission_spectrum([100.0], [1.0], ["a"]), tmp_path / "x", ["pgn"])


def test_no_text_overlaps_with_many_quantities_in_any_figure(argon):
    # Every text of the figure (tick labels, axis labels, titles, legends, annotations), measured by the figure's
    # own renderer once drawn, has a box of its own: with every panel at once, for the emission sticks of close
    # lines, the phase panels and the Paschen plot (common practice for figures meant for papers).
    from overlap import overlaps

    swarm = plot_swarm_parameters(argon, ["mean_energy_eV", "drift_velocity", "N_D_L",
                                          "N_D_T", "alpha_N", "eta_N", "rate_coefficients",
                                          "ionization_rate_coefficient", "N_mu"])
    assert overlaps(swarm) == []
    fields = np.array([50.0, 100.0, 200.0, 400.0])  # a short figure: long labels and a long legend, 2 rows
    data = {"mean_energy_eV": (np.array([3.0, 5.0, 7.0, 9.0]), np.full(4, 0.05)),
            "alpha_N": (3e-21 * (1 + fields / 1000), np.full(4, 1e-24)),
            "N_mu": (np.full(4, 1e24), np.full(4, 1e22)),
            **{rate_name(f"level {k} (3p5 4s)"): (1e-16 * (k + 1) * fields / 100, np.full(4, 1e-18))
               for k in range(12)}}
    short = SwarmTable(fields, data, gas_label="Ar")
    assert overlaps(plot_swarm_parameters(short, ["rate_coefficients", "mean_energy_eV", "alpha_N",
                                                  "N_mu"])) == []
    wavelengths = [104.82, 105.2, 106.67, 106.9, 750.4, 751.5, 811.5, 811.8, 763.5]
    emission = plot_emission_spectrum(wavelengths, [0.4, 0.5, 1.0, 0.9, 0.3, 0.35, 0.6, 0.55, 0.7],
                                      [f"level {k}" for k in range(9)])
    assert overlaps(emission) == []
    phase = (np.arange(16) + 0.5) * 2 * math.pi / 16
    curves = [PhaseCurve(f, phase, {name: (1e5 * np.cos(phase + k), np.full(16, 1e3)) for name in
                                    ("mean_energy_eV", "drift_velocity_flux", "ionization_rate_coefficient")}, 300.0)
              for k, f in enumerate((13.56e6, 1e6, 2e5))]
    assert overlaps(plot_phase_resolved(curves)) == []
    field = np.geomspace(30.0, 30000.0, 200)
    alpha = townsend_formula(12.0, 342.0, field, 293.0)  # N2 constants, Raizer 1991 table 4.1 (from memory)
    table = CoefficientTable(field, alpha, np.full(field.size, alpha[40]), temperature_K=293.0, gas_label="N2")
    assert overlaps(plot_paschen(paschen_curve(table, 0.01, np.geomspace(0.6, 200.0, 40)))) == []
