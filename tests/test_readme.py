"""The README's promises: its two set-up commands, and .ci/run running exactly the test command."""

from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def _setup_commands():
    text = (ROOT / "README.md").read_text()
    blocks = re.findall(r"```bash\n(.*?)```", text, flags=re.S)
    return [b.strip() for b in blocks[:2]]


def test_readme_has_two_setup_commands():
    demo, tests = _setup_commands()
    assert "\n" not in demo and "\n" not in tests
    assert demo.endswith("avalanche demo")
    assert "[test]" in tests and tests.endswith("pytest")


def test_ci_runs_exactly_the_readme_test_command():
    _, tests = _setup_commands()
    ci = (ROOT / ".ci" / "run").read_text()
    assert tests in ci.splitlines()
    assert "set -euo pipefail" in ci
    assert '"$status" -eq 5' in ci  # pytest's "no tests collected" exit code fails CI
