"""Safe reads and atomic writes, shared by worksheets, CSV exports and the calculation sheet.

Reading (:func:`read_limited`)
    Only a regular file is read, and only up to a byte limit checked before and
    during the read. The file is opened without blocking, so a path that names a
    FIFO, a device (``/dev/zero``), a socket or a folder, directly or through a
    symbolic link, is refused at once with one line naming it instead of hanging
    or filling memory.

Writing (:func:`write_atomic`, :func:`write_group`)
    The data goes to a temporary file in the target's own folder, is flushed and
    fsynced, then renamed over the target (``os.replace`` is atomic on one file
    system). A crash, a full disk or an interrupt mid-write therefore leaves the
    previous file intact. Several files that belong together (a calculation sheet
    and its CSV files) are all written to temporary files first and renamed only
    when every one of them is complete, so a full disk leaves none of them.

    Modes: a new file gets the permissions the user's umask gives any new file
    (0666 less the umask, like ``touch``); a file that is replaced keeps its mode
    and, where the system allows, its group, so saving over a shared 0664 calc
    file leaves it readable by the checker. Saving through a symbolic link writes
    the file the link points to and leaves the link in place.

    Temporary files are named ``.<target>.~zt-<host>-<pid>-<random>.tmp``. A writer
    killed mid-save (``kill -9``, power cut) cannot remove its own; the next write
    into the same folder removes those of ours that are stale: older than
    :data:`STALE_AFTER_S` and left by a process of this machine that no longer
    runs (or, from another machine sharing the folder, older than a day).
"""

from __future__ import annotations

import errno
import hashlib
import os
import re
import secrets
import socket
import stat
import sys
import time
from collections.abc import Sequence
from pathlib import Path

STALE_AFTER_S = 120.0  # a save takes well under a second; two minutes is surely abandoned
FOREIGN_STALE_AFTER_S = 86_400.0  # another machine's pid cannot be checked from here
_READ_CHUNK = 1 << 16


class FileRefused(ValueError):
    """A path that is not a readable regular file of acceptable size; one-line message."""


# ----------------------------------------------------------------------------- reading


def read_limited(path: str | os.PathLike[str], limit: int, *, what: str = "file") -> bytes:
    """The bytes of the regular file at ``path``, at most ``limit`` of them.

    ``what`` names the kind of file in messages ("worksheet"). Never blocks: the
    file is opened with ``O_NONBLOCK`` (a FIFO opens at once without a writer) and
    checked with ``fstat`` on the open descriptor, so a swap between check and read
    cannot sneak a device in. A file that grows past ``limit`` while being read is
    refused too.

    Raises :class:`FileRefused` (a ``ValueError``) for a folder, FIFO, device or
    socket, or a file over ``limit`` bytes; ``FileNotFoundError`` and other
    ``OSError`` for a missing or unreadable path.
    """
    p = Path(path)
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_CLOEXEC", 0)
    flags |= getattr(os, "O_BINARY", 0)
    fd = os.open(p, flags)
    try:
        st = os.fstat(fd)
        if stat.S_ISDIR(st.st_mode):
            raise FileRefused(f"{p}: is a folder, not a {what} file")
        if not stat.S_ISREG(st.st_mode):
            raise FileRefused(f"{p}: is {_kind(st.st_mode)}, not a regular {what} file")
        if st.st_size > limit:
            raise FileRefused(
                f"{p}: file too large for a {what} ({st.st_size} bytes, limit {limit})"
            )
        chunks: list[bytes] = []
        total = 0
        while True:
            chunk = os.read(fd, min(_READ_CHUNK, limit + 1 - total))
            if not chunk:
                break
            chunks.append(chunk)
            total += len(chunk)
            if total > limit:
                raise FileRefused(f"{p}: file too large for a {what} (over {limit} bytes)")
        return b"".join(chunks)
    finally:
        os.close(fd)


def _kind(mode: int) -> str:
    kinds = (
        (stat.S_ISFIFO, "a pipe (FIFO)"),
        (stat.S_ISCHR, "a character device"),
        (stat.S_ISBLK, "a block device"),
        (stat.S_ISSOCK, "a socket"),
    )
    return next((name for test, name in kinds if test(mode)), "not a regular file")


# ----------------------------------------------------------------------------- writing


def _host_tag() -> str:
    return hashlib.sha256(socket.gethostname().encode("utf-8", "replace")).hexdigest()[:6]


_TEMP_RE = re.compile(r"\..*\.~zt-([0-9a-f]{6})-([0-9]{1,10})-[0-9a-f]{8}\.tmp", re.DOTALL)


def temp_name(target_name: str) -> str:
    """Our temporary file name for ``target_name`` (kept under the 255-byte name limit)."""
    stem = target_name.encode("utf-8", "surrogateescape")[:120].decode("utf-8", "ignore")
    return f".{stem}.~zt-{_host_tag()}-{os.getpid()}-{secrets.token_hex(4)}.tmp"


def _pid_running(pid: int) -> bool:
    if sys.platform.startswith("win"):  # os.kill(pid, 0) would send CTRL_C_EVENT there
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:  # EPERM: it runs, under another user
        return True
    return True


def clean_stale_temps(folder: str | os.PathLike[str], *, now: float | None = None) -> list[Path]:
    """Remove our stale temporary files in ``folder``; the paths removed.

    Only names made by :func:`temp_name` are considered, only regular files (never a
    link), and only when stale (see the module docstring). Best effort: a file that
    cannot be removed is left, silently (it is never the user's).
    """
    now = time.time() if now is None else now
    host, removed = _host_tag(), []
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return removed
    for entry in entries:
        match = _TEMP_RE.fullmatch(entry.name)
        if match is None:
            continue
        try:
            st = entry.stat(follow_symlinks=False)
        except OSError:
            continue
        if not stat.S_ISREG(st.st_mode):
            continue
        age = now - st.st_mtime
        tag, pid = match.group(1), int(match.group(2))
        if tag == host:
            stale = age > STALE_AFTER_S and pid != os.getpid() and not _pid_running(pid)
        else:
            stale = age > FOREIGN_STALE_AFTER_S
        if stale:
            try:
                os.unlink(entry.path)
                removed.append(Path(entry.path))
            except OSError:
                pass
    return removed


def _resolved(path: Path) -> Path:
    """The file a write to ``path`` must replace: the target of a symbolic link."""
    if os.path.islink(path):
        return Path(os.path.realpath(path))
    return path


def _stage(target: Path, data: bytes) -> Path:
    """Write ``data`` to a fsynced temporary file beside ``target``; its path."""
    folder = target.parent if str(target.parent) else Path(".")
    try:
        old = os.stat(target)
    except FileNotFoundError:
        old = None
    if old is not None and stat.S_ISDIR(old.st_mode):
        raise IsADirectoryError(errno.EISDIR, "is a folder, not a file", str(target))
    if old is not None and not stat.S_ISREG(old.st_mode):
        raise OSError(errno.EINVAL, f"is {_kind(old.st_mode)}, not a regular file", str(target))
    tmp = folder / temp_name(target.name)
    flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_CLOEXEC", 0)
    flags |= getattr(os, "O_BINARY", 0)
    # A new file: 0666 less the umask, applied by the system as for any new file.
    # A replaced file: created private, then given the old file's group and mode.
    fd = os.open(tmp, flags, 0o666 if old is None else 0o600)
    try:
        if old is not None:
            if hasattr(os, "fchown"):
                try:
                    os.fchown(fd, -1, old.st_gid)
                except OSError:  # not a member of that group: the mode is still kept
                    pass
            if hasattr(os, "fchmod"):
                os.fchmod(fd, stat.S_IMODE(old.st_mode) & 0o777)  # never set-id bits
        view = memoryview(data)
        while view:
            written = os.write(fd, view)
            view = view[written:]
        os.fsync(fd)
    except BaseException:
        os.close(fd)
        _unlink(tmp)
        raise
    os.close(fd)
    return tmp


def _unlink(path: Path) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


def write_group(
    items: Sequence[tuple[str | os.PathLike[str], bytes]], *, overwrite: bool = True
) -> list[Path]:
    """Write several files all or nothing; the paths written, in order.

    Every file is first written and fsynced to a temporary file beside its target;
    only when all of them are complete are they renamed into place, in the order
    given (put the file whose presence says "complete", such as a PDF, last). A
    failure while writing (a full disk, no permission) leaves every target as it
    was and removes every temporary file.

    Raises FileExistsError when a target exists and ``overwrite`` is False (before
    anything is written), OSError for a missing or unwritable folder or a full disk.
    """
    targets = [Path(p) for p, _ in items]
    if not overwrite:
        for path in targets:
            if os.path.lexists(path):
                raise FileExistsError(f"{path}: already exists (use --force to replace it)")
    real = [_resolved(p) for p in targets]
    for folder in dict.fromkeys(p.parent if str(p.parent) else Path(".") for p in real):
        clean_stale_temps(folder)
    staged: list[Path] = []
    try:
        for path, (_, data) in zip(real, items, strict=True):
            staged.append(_stage(path, data))
        for i, (tmp, path) in enumerate(zip(staged, real, strict=True)):
            os.replace(tmp, path)
            staged[i] = path  # renamed: no longer ours to remove
    except BaseException:
        for tmp, path in zip(staged, real, strict=False):
            if tmp != path:
                _unlink(tmp)
        raise
    return targets


def write_atomic(path: str | os.PathLike[str], data: bytes, *, overwrite: bool = True) -> Path:
    """Write ``data`` to ``path`` atomically; refuse to replace an existing file unless asked.

    Raises FileExistsError when the file exists and ``overwrite`` is False, OSError when
    the folder is missing or not writable or the disk is full; in every case nothing at
    ``path`` changes. Modes, links and temporary files: see the module docstring.
    """
    return write_group([(path, data)], overwrite=overwrite)[0]


def check_writable(folder: str | os.PathLike[str]) -> None:
    """Raise OSError unless a file can be created in ``folder`` (by creating one).

    ``os.access`` is no test: it says yes to root on a read-only mount. The probe has
    our temporary name, so a kill between create and remove leaves nothing that the
    next write would not clean up.
    """
    probe = Path(folder) / temp_name("probe")
    fd = os.open(probe, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
    os.close(fd)
    _unlink(probe)
