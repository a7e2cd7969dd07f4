"""A non-editable install ships the cross-section library inside the package."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


@pytest.mark.slow
def test_installed_copy_finds_the_shipped_library(tmp_path):
    target = tmp_path / "site"
    build = subprocess.run(
        [sys.executable, "-m", "pip", "install", "--no-deps", "--quiet",
         "--target", str(target), str(ROOT)],
        capture_output=True, text=True, cwd=tmp_path)
    assert build.returncode == 0, build.stderr
    env = dict(os.environ, PYTHONPATH=str(target))
    code = ("import avalanche.gas.library as L; from pathlib import Path; d = L.shipped_dir(); "
            "print(d); print(sorted(p.name for p in d.glob('*.toml')))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, cwd=tmp_path)
    assert out.returncode == 0, out.stderr
    folder = Path(out.stdout.splitlines()[0])
    assert str(target) in str(folder), "the installed copy must use its own packaged data"
    shipped = sorted(p.name for p in (ROOT / "crosssections").glob("*.toml"))
    assert eval(out.stdout.splitlines()[1]) == shipped
