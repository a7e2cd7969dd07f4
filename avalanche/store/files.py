"""Safe output files: checked before any computing, never overwritten without being told, written whole or not at all.

* :func:`check_output_file` and :func:`check_output_folder` run before a command computes anything: a folder
  given as a file, an existing file without ``--force``, a folder that cannot be created or written are refused
  with one message naming the path and the fix.
* :func:`write_atomically` writes a file under a temporary name in the same folder and renames it into place
  (``os.replace`` is atomic on POSIX file systems), so a crash or a full disk never leaves a half-written file
  under the final name.
* :func:`disk_error` turns an ``OSError`` of a write (full disk, quota, read-only file system) into one clear line.
"""

from __future__ import annotations

import errno
import os
from collections.abc import Callable, Iterable
from pathlib import Path

from ..errors import AvalancheError, ConfigError

_DISK_FULL = (errno.ENOSPC, errno.EDQUOT)


def disk_error(exc: OSError, path: str | Path, doing: str) -> AvalancheError:
    """One clear error for an ``OSError`` raised while ``doing`` something to ``path`` (no traceback, no errno
    number alone)."""
    if exc.errno in _DISK_FULL or "No space left" in str(exc) or "quota" in str(exc).lower():
        return AvalancheError(f"{path}: the disk is full (or over quota) while {doing}; free some space and run again")
    if exc.errno == errno.EROFS:
        return AvalancheError(f"{path}: read-only file system while {doing}; write to another folder")
    if exc.errno in (errno.EACCES, errno.EPERM):
        return AvalancheError(f"{path}: permission denied while {doing}; write to a folder you may write in")
    return AvalancheError(f"{path}: {exc.strerror or exc} while {doing}")


def check_output_folder(folder: str | Path, option: str = "--out") -> Path:
    """Create ``folder`` if needed and check that it is a writable folder; raise :class:`ConfigError` otherwise."""
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise ConfigError(f"{option} '{folder}' is a file, not a folder; give a folder for the outputs")
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise ConfigError(f"{option}: cannot create the folder '{folder}' ({exc.strerror or exc}); create it or "
                          "choose another place") from None
    if not os.access(folder, os.W_OK | os.X_OK):
        raise ConfigError(f"{option}: the folder '{folder}' is not writable; choose a folder you may write in")
    return folder


def check_output_file(path: str | Path, *, force: bool = False, option: str = "--out") -> Path:
    """Check, before computing, that ``path`` may be written: not a folder, not an existing file unless
    ``force``, in a folder that exists (created if missing) and is writable.

    Raises
    ------
    ConfigError
        Naming the path and the fix (``--force``, another name, another folder).
    """
    path = Path(path)
    if not path.name or path.is_dir():
        raise ConfigError(f"{option} '{path}' is a folder; give a file name, e.g. {Path(path, 'result.h5')}")
    if (path.exists() or path.is_symlink()) and not force:
        raise ConfigError(f"{option} '{path}' already exists; add --force to overwrite it, or choose another name")
    check_output_folder(path.parent, option)
    return path


def check_output_files(paths: Iterable[str | Path], *, force: bool = False, option: str = "--out") -> None:
    """Refuse (without ``force``) when any of ``paths`` exists, naming the first one."""
    if force:
        return
    for path in paths:
        if Path(path).exists():
            raise ConfigError(f"{option}: '{path}' already exists; add --force to overwrite it, or choose another "
                              "folder")


def write_atomically(path: str | Path, write: Callable[[Path], object]) -> Path:
    """Call ``write(temporary_path)`` and rename the temporary file to ``path``.

    The temporary file sits in the same folder (so the rename stays on one file system) under a hidden name; it is
    removed when ``write`` fails. An ``OSError`` of the write or the rename becomes an :class:`AvalancheError`
    (:func:`disk_error`).
    """
    path = Path(path)
    temporary = path.with_name(f".{path.name}.{os.getpid()}.partial")
    try:
        write(temporary)
        os.replace(temporary, path)
    except OSError as exc:
        raise disk_error(exc, path, "writing it") from None
    finally:
        if temporary.exists():
            temporary.unlink()
    return path


class FileLock:
    """An advisory lock of a results file, held in ``<file>.lock`` with ``fcntl.flock``.

    It works whatever HDF5's own locking does (``HDF5_USE_FILE_LOCKING=FALSE`` is common on cluster file systems),
    is released by the operating system when its process ends (even by ``kill -9``), and records ``host:pid`` of its
    holder for the message of a second writer. The lock file is removed when the lock is released.

    Raises
    ------
    AvalancheError
        When another process holds the lock (its ``host:pid`` named), or the lock file cannot be created.
    """

    def __init__(self, path: str | Path):
        import fcntl
        import socket

        self.path = Path(path)
        self.lock_path = self.path.with_name(self.path.name + ".lock")
        while True:
            try:
                fd = os.open(self.lock_path, os.O_RDWR | os.O_CREAT, 0o644)
            except OSError as exc:
                raise disk_error(exc, self.lock_path, "creating the lock file of the results file") from None
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except OSError:
                holder = os.pread(fd, 200, 0).decode(errors="replace").strip() or "another process"
                os.close(fd)
                raise AvalancheError(f"results file '{self.path}' is in use by another sweep ({holder}, lock file "
                                     f"'{self.lock_path}'); wait for it to finish, or write to another file with "
                                     "--out") from None
            try:
                same = os.fstat(fd).st_ino == os.stat(self.lock_path).st_ino
            except FileNotFoundError:
                same = False
            if same:  # not a lock file its previous holder removed meanwhile
                break
            os.close(fd)
        os.ftruncate(fd, 0)
        os.pwrite(fd, f"{socket.gethostname()}:{os.getpid()}\n".encode(), 0)
        self._fd = fd

    def release(self) -> None:
        """Remove the lock file and release the lock (idempotent)."""
        if self._fd is None:
            return
        try:
            self.lock_path.unlink(missing_ok=True)
        finally:
            os.close(self._fd)
            self._fd = None
