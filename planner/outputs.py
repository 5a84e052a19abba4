"""Writing the files a plan produces (calendars, reports, charts): never over a user's file
without ``force``, always atomically.

A file is written to a temporary file in the same folder, flushed to disk (``fsync``) and then
renamed over the target with :func:`os.replace`, so a reader sees the old file or the new one,
never half of one, and an interrupted run leaves no partial file behind.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from planner.errors import InputError


def _reason(exc: OSError) -> str:
    return exc.strerror or exc.__class__.__name__


def check_target(path: str | os.PathLike, *, force: bool) -> Path:
    """Refuse a target that cannot be written, before any work is done.

    Parameters
    ----------
    path : str or path-like
        The file to write.
    force : bool
        Whether an existing file may be replaced.

    Returns
    -------
    Path
        The target as a :class:`~pathlib.Path`.

    Raises
    ------
    InputError
        ``FILE: exists; use --force to overwrite`` for an existing file without ``force``; a folder that
        is missing or not writable, or a target that is a folder, as one line naming the file.
    """
    target = Path(path)
    if len(target.name.encode("utf-8")) > 255:   # NAME_MAX of common file systems (POSIX limits.h)
        raise InputError("cannot write: the file name is longer than 255 bytes", source=str(target))
    if target.is_dir():
        raise InputError("is a folder; give a file name", source=str(target))
    if target.exists() and not force:
        raise InputError("exists; use --force to overwrite", source=str(target))
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"cannot write: folder {folder} does not exist", source=str(target))
    if not os.access(folder, os.W_OK | os.X_OK):
        raise InputError(f"cannot write: folder {folder} is not writable", source=str(target))
    return target


def write_atomic(path: str | os.PathLike, data: bytes | str, *, force: bool) -> Path:
    """Write ``data`` to ``path`` atomically (temporary file in the same folder, fsync, rename).

    Parameters
    ----------
    path : str or path-like
    data : bytes or str
        The content; text is written as UTF-8.
    force : bool
        Whether an existing file may be replaced.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    InputError
        As :func:`check_target`, or when the operating system refuses the write (one line with its reason).
    """
    target = check_target(path, force=force)
    payload = data.encode("utf-8") if isinstance(data, str) else data
    folder = target.parent if str(target.parent) else Path(".")
    try:
        handle, temporary = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=folder)
    except OSError as exc:
        raise InputError(f"cannot write: {_reason(exc)}", source=str(target)) from None
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(payload)
            stream.flush()
            os.fsync(stream.fileno())
        os.chmod(temporary, 0o644)
        if not force and target.exists():  # appeared while we were writing: still the user's file
            raise InputError("exists; use --force to overwrite", source=str(target))
        os.replace(temporary, target)
    except OSError as exc:
        raise InputError(f"cannot write: {_reason(exc)}", source=str(target)) from None
    finally:
        if os.path.exists(temporary):
            os.unlink(temporary)
    return target
