"""Command line: gases, check, demo, error handling."""

from __future__ import annotations

from avalanche.cli import main


def test_gases_lists_model_gases_with_provenance(capsys):
    assert main(["gases"]) == 0
    out = capsys.readouterr().out
    for name in ("maxwell", "reid-ramp", "lucas-saelee", "ness-robson"):
        assert name in out
    assert "Reid I D (1979)" in out
    assert "source:" in out


def test_check_accepts_valid_and_rejects_malformed(capsys, write_set, set_text):
    good = write_set(set_text, "good.toml")
    assert main(["check", str(good)]) == 0
    assert "OK" in capsys.readouterr().out
    bad = write_set(set_text.replace("threshold_eV = 11.5\n", ""), "bad.toml")
    assert main(["check", str(bad)]) == 1
    err = capsys.readouterr().err
    assert "bad.toml" in err and "threshold_eV" in err and "Traceback" not in err


def test_no_command_prints_help(capsys):
    assert main([]) == 2
    assert "COMMAND" in capsys.readouterr().out
