"""The documentation (user guide and API reference from the docstrings) builds with Sphinx, warnings as errors.

Reference: Sphinx's own builder (``python -m sphinx -W``): a docstring that is not valid reStructuredText, a broken
cross-reference inside the guide or a module that does not import fails the build.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

DOCS = Path(__file__).resolve().parents[1] / "docs"


def test_documentation_builds_without_warnings(tmp_path):
    pytest.importorskip("sphinx")
    done = subprocess.run([sys.executable, "-m", "sphinx", "-E", "-W", "--keep-going", "-q", "-b", "html",
                           str(DOCS), str(tmp_path / "html")], capture_output=True, text=True, timeout=600)
    assert done.returncode == 0, done.stdout[-3000:] + done.stderr[-5000:]
    api = (tmp_path / "html" / "api.html").read_text(encoding="utf-8")
    for name in ("avalanche.swarm", "avalanche.townsend", "avalanche.Mixture", "avalanche.run_sweep"):
        assert name in api, f"{name} is missing from the API reference"
