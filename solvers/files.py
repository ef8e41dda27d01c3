"""Atomic file writes, shared by worksheets, CSV exports and the calculation sheet.

The data goes to a temporary file in the target's own folder, is flushed and fsynced, then
renamed over the target (``os.replace`` is atomic on one file system). A crash, a full disk
or an interrupt mid-write therefore leaves the previous file intact, and the temporary
file is removed.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path


def write_atomic(path: str | os.PathLike[str], data: bytes, *, overwrite: bool = True) -> Path:
    """Write ``data`` to ``path`` atomically; refuse to replace an existing file unless asked.

    Raises FileExistsError when the file exists and ``overwrite`` is False, OSError when
    the folder is missing or not writable or the disk is full; in every case nothing at
    ``path`` changes.
    """
    target = Path(path)
    if not overwrite and target.exists():
        raise FileExistsError(f"{target}: already exists (use --force to replace it)")
    folder = target.parent if str(target.parent) else Path(".")
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    return target
