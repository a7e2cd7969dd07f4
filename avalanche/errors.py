"""The exception family of avalanche.

Every error a user can cause is an :class:`AvalancheError`. Errors in input data (cross-section files, run files,
arguments) also subclass :class:`ValueError`, so generic callers can catch them as such.
"""

from __future__ import annotations


class AvalancheError(Exception):
    """Base class of every error raised by avalanche."""


class CrossSectionError(AvalancheError, ValueError):
    """A cross-section set or one of its processes is malformed."""


class ConfigError(AvalancheError, ValueError):
    """A mixture, run file or argument is invalid."""


class PhysicsWarning(UserWarning):
    """A model is used outside its range of validity (e.g. energies beyond a table)."""
