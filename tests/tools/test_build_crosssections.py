"""The build script of the shipped data (tools/build_crosssections.py): run on one species, its output equals the
shipped file. Needs the data package elmolcs (the ``build-data`` extra; the ``test`` extra installs it)."""

import importlib.util
from pathlib import Path

import pytest

pytest.importorskip("elmolcs")

ROOT = Path(__file__).resolve().parents[2]


def _build_module():
    spec = importlib.util.spec_from_file_location("build_crosssections", ROOT / "tools" / "build_crosssections.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.mark.parametrize("name", ["O2", "Ar@phelps", "Ar", "N2@lisbon"])
def test_build_reproduces_the_shipped_file(name, tmp_path):
    build = _build_module()
    assert build.main([name, "--out", str(tmp_path)]) == 0
    written = (tmp_path / build.OUTPUT_NAME[name]).read_text()
    assert written == (ROOT / "crosssections" / build.OUTPUT_NAME[name]).read_text()


def test_every_shipped_built_file_names_its_publication_and_carrier():
    build = _build_module()
    for name, recipe in build.RECIPES.items():
        text = (ROOT / "crosssections" / build.OUTPUT_NAME[name]).read_text()
        assert "elmolcs 0.0.3" in text and "GPL-3.0-or-later" in text
        for source in recipe["sources"]:
            assert source in text
