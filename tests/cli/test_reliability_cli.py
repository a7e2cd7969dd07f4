"""The command line never overwrites a file without --force, checks its outputs before computing, refuses bad
numbers as run files do, and reports failures and warnings as single lines (issue 17).

The expected behaviour is the project's rule for bad input (DEVELOPERS.md, "Errors": one line naming the file,
field and value and the fix, exit status non-zero); the swarm points use tiny budgets (common practice).
"""

from __future__ import annotations

import errno
import json

import pytest

from avalanche.cli.main import main

TINY = ["--gas", "Ar", "--max-events", "2e5", "--electrons", "64"]

SWEEP = '''
[sweep]
name = "cli-reliability"
seed = 7

[gas]
mixture = "reid-ramp"
temperature_K = 0
number_density_m3 = 1e25

[grid]
reduced_field_Td = [6, 12, 24]

[engine]
precision = 0.05
max_events = 4e6
electrons = 500
'''
"""Three tiny points of the Reid ramp model gas (Reid 1979, Aust. J. Phys. 32 231)."""


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def one_line_error(err: str, *fragments: str) -> None:
    lines = [line for line in err.splitlines() if line.strip()]
    assert len(lines) == 1 and "Traceback" not in err, err
    for fragment in fragments:
        assert fragment in lines[0], lines[0]


def never_called(*args, **kwargs):
    raise AssertionError("the computation started before the output was checked")


@pytest.mark.parametrize("command, module, name", [("swarm", "avalanche.engine.time_of_flight", "swarm"),
                                                   ("townsend", "avalanche.engine.townsend", "townsend")])
def test_out_refuses_an_existing_file_before_computing(tmp_path, capsys, monkeypatch, command, module, name):
    monkeypatch.setattr(f"{module}.{name}", never_called)
    target = tmp_path / "sweep.toml"
    target.write_text("[sweep]\nname = 'precious'\n")
    code, _, err = run(capsys, command, "--en", 100, *TINY, "--out", target)
    assert code == 1
    one_line_error(err, str(target), "--force")
    assert target.read_text() == "[sweep]\nname = 'precious'\n"
    code, _, err = run(capsys, command, "--en", 100, *TINY, "--out", tmp_path)
    assert code == 1
    one_line_error(err, "is a folder")
    blocker = tmp_path / "plain"
    blocker.write_text("x")
    code, _, err = run(capsys, command, "--en", 100, *TINY, "--out", blocker / "sub" / "x.h5")
    assert code == 1
    one_line_error(err, "cannot create the folder")


def test_out_into_a_new_folder_is_written_and_only_replaced_with_force(tmp_path, capsys):
    target = tmp_path / "new" / "folder" / "point.h5"
    code, out, _ = run(capsys, "swarm", "--en", 100, *TINY, "--out", target)
    assert code == 0 and target.is_file() and f"result written to {target}" in out
    assert [p.name for p in target.parent.iterdir()] == ["point.h5"]  # no temporary file left
    code, _, err = run(capsys, "swarm", "--en", 100, *TINY, "--out", target)
    assert code == 1 and "--force" in err
    code, _, _ = run(capsys, "swarm", "--en", 100, *TINY, "--out", target, "--force")
    assert code == 0


@pytest.mark.parametrize("argv, fragment", [(["--precision", "5"], "--precision 5: give a relative standard error"),
                                            (["--precision", "0"], "between 0 and 1"),
                                            (["--max-events", "0"], "--max-events 0")])
def test_point_commands_apply_the_run_file_bounds(capsys, monkeypatch, argv, fragment):
    monkeypatch.setattr("avalanche.engine.time_of_flight.swarm", never_called)
    code, _, err = run(capsys, "swarm", "--en", 100, "--gas", "Ar", *argv)
    assert code == 1
    one_line_error(err, fragment)


def test_an_unrelaxed_point_is_marked_not_converged_and_warnings_are_single_clean_lines(capsys):
    # argon at 10 Td relaxes over ~1e7 events (mass ratio 1.4e-5; common practice): 2e5 events cannot relax it
    code, out, err = run(capsys, "swarm", "--en", 10, *TINY, "--json")
    data = json.loads(out)
    assert code == 0 and data["converged"] is False
    assert any("relaxation test" in note for note in data["convergence_notes"])
    warnings = [line for line in err.splitlines() if line.strip()]
    assert warnings and all(line.startswith("avalanche swarm: warning: ") for line in warnings), err
    assert ".py" not in err
    code, out, _ = run(capsys, "swarm", "--en", 10, *TINY)
    assert "NOT CONVERGED: the swarm did not pass the relaxation test" in out


def test_table_and_plot_refuse_to_overwrite(outputs_results, tmp_path, capsys, monkeypatch):
    table = tmp_path / "table.csv"
    table.write_text("mine\n")
    code, _, err = run(capsys, "table", outputs_results, "--mixture", "Ar", "--out", table)
    assert code == 1 and table.read_text() == "mine\n"
    one_line_error(err, str(table), "--force")
    assert run(capsys, "table", outputs_results, "--mixture", "Ar", "--out", table, "--force")[0] == 0
    assert table.read_text().startswith("# avalanche fluid-model table")
    figure = tmp_path / "outputs_swarm.png"
    figure.write_bytes(b"mine")
    code, _, err = run(capsys, "plot", outputs_results, "--mixture", "Ar", "--out", tmp_path, "--format", "png")
    assert code == 1 and figure.read_bytes() == b"mine"
    one_line_error(err, str(figure), "--force")
    code, _, err = run(capsys, "plot", outputs_results, "--mixture", "Ar", "--out", table)
    assert code == 1
    one_line_error(err, "is a file, not a folder")
    code, _, err = run(capsys, "table", outputs_results, "--mixture", "Ar", "--out", table / "x" / "t.csv")
    assert code == 1
    one_line_error(err, "cannot create the folder")


def test_sweep_workers_zero_and_an_uncreatable_output_are_refused_before_computing(tmp_path, capsys):
    runfile = tmp_path / "run.toml"
    runfile.write_text(SWEEP)
    code, _, err = run(capsys, "sweep", runfile, "--workers", 0)
    assert code == 1
    one_line_error(err, "--workers 0: give at least 1 worker")
    blocker = tmp_path / "plain"
    blocker.write_text("x")
    code, _, err = run(capsys, "sweep", runfile, "--out", blocker / "r.h5", "--quiet")
    assert code == 1
    one_line_error(err, "is a file, not a folder")


def test_a_full_disk_stops_the_sweep_with_one_line_and_keeps_the_committed_points(tmp_path, capsys, monkeypatch):
    from avalanche.store import point
    from avalanche.store.sweep_file import open_results

    real, calls = point.write_result, []

    def fills_the_disk(group, result):
        calls.append(1)
        if len(calls) > 1:
            raise OSError(errno.ENOSPC, "No space left on device")
        real(group, result)

    monkeypatch.setattr(point, "write_result", fills_the_disk)
    runfile = tmp_path / "run.toml"
    runfile.write_text(SWEEP)
    out = tmp_path / "r.h5"
    code, _, err = run(capsys, "sweep", runfile, "--out", out, "--workers", 1, "--quiet")
    assert code == 1
    one_line_error(err, "disk is full", "committed before are intact", "--resume")
    results = open_results(out)
    assert sorted(results.grid["status"]) == ["missing", "missing", "ok"]
    assert not (tmp_path / "r.h5.lock").exists()
    monkeypatch.setattr(point, "write_result", real)
    assert run(capsys, "sweep", runfile, "--out", out, "--workers", 1, "--quiet", "--resume")[0] == 0
    assert open_results(out).complete


def test_reference_files_that_are_not_utf8_or_not_regular_give_one_line(outputs_results, tmp_path, capsys):
    latin = tmp_path / "ref.csv"
    latin.write_bytes("# source: caf\xe9\nreduced_field_Td,alpha_N\n100,1e-21\n".encode("latin-1"))
    device = tmp_path / "zero.csv"
    device.symlink_to("/dev/zero")
    for path, fragment in ((latin, "is not UTF-8 text"), (device, "not a regular file")):
        code, _, err = run(capsys, "plot", outputs_results, "--mixture", "Ar", "--out", tmp_path / "p",
                           "--reference", path, "--format", "png")
        errors = [line for line in err.splitlines() if ": error: " in line]  # notes about the file may precede
        assert code == 1 and len(errors) == 1 and "Traceback" not in err, err
        assert str(path) in errors[0] and fragment in errors[0]
