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


def read_user_text(path, what: str, error: type[AvalancheError] = ConfigError) -> str:
    """The text of a file the user named (a run file, a CSV table, a waveform, a reference), read as UTF-8.

    Every failure becomes one ``error`` naming the file and what to do: a missing path, a folder, a device or
    other non-regular file (e.g. a link to ``/dev/zero``), a file that cannot be read, or bytes that are not
    UTF-8 text. The message never quotes the file's content.

    Parameters
    ----------
    path : str or Path
        The file.
    what : str
        What the file should be, for the message (e.g. ``"run file"``).
    error : type
        The exception class raised (an :class:`AvalancheError`).
    """
    from pathlib import Path

    path = Path(path)
    if not path.exists():
        raise error(f"{what} '{path}' not found; check the path")
    if not path.is_file():
        kind = "a folder" if path.is_dir() else "not a regular file (a device, pipe or socket)"
        raise error(f"{what} '{path}' is {kind}; give the path of a text file")
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise error(f"{what} '{path}' cannot be read ({exc.strerror or exc}); check its permissions") from None
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise error(f"{what} '{path}' is not UTF-8 text (byte {exc.start} cannot be decoded); save it as UTF-8 "
                    "text") from None
