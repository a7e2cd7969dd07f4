"""Command line: one module per command family (library, point, sweep, outputs, breakdown, demo) and the registry.

May import every other layer; nothing else imports it. ``avalanche.cli.main`` is the entry point.
"""

from .main import main

__all__ = ["main"]
