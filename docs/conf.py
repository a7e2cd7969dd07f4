"""Sphinx configuration of the avalanche documentation (API reference from the docstrings, user guide)."""

import os
import sys

sys.path.insert(0, os.path.abspath(".."))

from avalanche import __version__  # noqa: E402

project = "avalanche"
author = "The avalanche developers"
copyright = "2026, The avalanche developers"
release = version = __version__
extensions = ["sphinx.ext.autodoc", "sphinx.ext.napoleon", "sphinx.ext.mathjax"]
napoleon_google_docstring = False
napoleon_numpy_docstring = True
napoleon_use_rtype = False
autodoc_member_order = "bysource"
autodoc_typehints = "description"
autodoc_default_options = {"members": True, "undoc-members": False, "show-inheritance": False}
exclude_patterns = ["_build"]
html_theme = "alabaster"
nitpicky = False
suppress_warnings = ["ref.python"]
napoleon_use_ivar = True


def _escape_bars(app, what, name, obj, options, lines):
    """Docstrings write |x| for magnitudes; reStructuredText would read a substitution: escape the bars."""
    for i, line in enumerate(lines):
        stripped = line.strip()
        grid_table = stripped.startswith(("|", "+")) and stripped.endswith(("|", "+"))
        if "|" in line and not grid_table:
            lines[i] = line.replace("|", r"\|")


def setup(app):
    app.connect("autodoc-process-docstring", _escape_bars)
