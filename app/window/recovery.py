"""Autosave of unsaved work to a recovery folder, offered again at the next start.

The recovery folder is ``$ZEROTRACE_RECOVERY_DIR`` when set (tests point it at a
temporary folder), else ``<AppDataLocation>/recovery``. Each window writes
``unsaved-<session>.json`` (a normal worksheet, saved atomically, so a crash mid-write
leaves the previous copy) and ``unsaved-<session>.meta.json`` (where the worksheet came
from and when). Another window of the same session (the system window) keeps its own
copy beside it, ``unsaved-<session>-<tag>.json``, through :meth:`RecoveryStore.companion`.
A clean close removes both; files left behind by a session that ended without closing
cleanly are offered at the next start (a worksheet that holds a system reopens in the
system window).
"""

from __future__ import annotations

import json
import math
import os
import time
import uuid
from dataclasses import dataclass
from pathlib import Path

from app.documents import worksheet
from app.documents.files import read_limited, write_atomic
from app.documents.worksheet import Worksheet, WorksheetError

ENV_VAR = "ZEROTRACE_RECOVERY_DIR"
PREFIX = "unsaved-"
MAX_META_BYTES = 64_000  # the meta file is a few hundred bytes


def recovery_dir() -> Path:
    override = os.environ.get(ENV_VAR)
    if override:
        return Path(override)
    from PySide6.QtCore import QStandardPaths

    base = QStandardPaths.writableLocation(QStandardPaths.StandardLocation.AppDataLocation)
    return Path(base or Path.home() / ".zerotrace") / "recovery"


@dataclass(frozen=True)
class Recovered:
    """A worksheet left behind by an earlier session."""

    path: Path
    worksheet: Worksheet
    origin: str | None  # the file it was opened from, if any
    saved_at: float

    def discard(self) -> None:
        for p in (self.path, _meta_path(self.path)):
            try:
                p.unlink()
            except OSError:
                pass


def _meta_path(path: Path) -> Path:
    return path.with_name(path.name[: -len(".json")] + ".meta.json")


class RecoveryStore:
    """This window's recovery file, and the ones earlier sessions left behind."""

    def __init__(self, folder: Path | None = None, *, session: str | None = None,
                 tag: str = "") -> None:
        self.folder = folder if folder is not None else recovery_dir()
        self.session = session or f"{os.getpid()}-{uuid.uuid4().hex[:8]}"
        self.path = self.folder / f"{PREFIX}{self.session}{'-' + tag if tag else ''}.json"
        self.last_error = ""
        self.unreadable: list[tuple[Path, str]] = []  # filled by left_behind()

    def companion(self, tag: str) -> RecoveryStore:
        """A store for another window of this session, in the same folder: its copy is
        ``unsaved-<session>-<tag>.json``, never offered to this session."""
        return RecoveryStore(self.folder, session=self.session, tag=tag)

    def _ours(self, path: Path) -> bool:
        """A copy of this session (this window's or a companion's): not left behind."""
        return path == self.path or path.name.startswith(f"{PREFIX}{self.session}-") \
            or path.name == f"{PREFIX}{self.session}.json"

    def write(self, ws: Worksheet, origin: str | None) -> bool:
        """Save the recovery copy; False (with ``last_error``) if the folder is unusable."""
        try:
            self.folder.mkdir(parents=True, exist_ok=True)
            worksheet.save(ws, self.path)
            meta = {"origin": origin, "saved_at": time.time(), "session": self.session}
            write_atomic(_meta_path(self.path), json.dumps(meta).encode("utf-8"))
        except (OSError, ValueError) as exc:
            self.last_error = f"autosave failed: {exc}"
            return False
        self.last_error = ""
        return True

    def clear(self) -> None:
        for p in (self.path, _meta_path(self.path)):
            try:
                p.unlink()
            except OSError:
                pass

    def exists(self) -> bool:
        return self.path.exists()

    def left_behind(self) -> list[Recovered]:
        """Recovery files of other sessions, newest first.

        A copy that cannot be read is never offered and never deleted: it stays in the
        folder and is listed in :attr:`unreadable` with the reason, so the window can
        say where it is. Reading never blocks or fills memory (a FIFO or a link to a
        device in the folder is refused like any unreadable copy).
        """
        found: list[Recovered] = []
        self.unreadable = []
        try:
            candidates = sorted(self.folder.glob(f"{PREFIX}*.json"))
        except OSError:
            return []
        for path in candidates:
            if path.name.endswith(".meta.json") or self._ours(path):
                continue
            try:
                ws = worksheet.load(path)
            except WorksheetError as exc:
                self.unreadable.append((path, str(exc)))
                continue
            origin, saved_at = _read_meta(path)
            found.append(Recovered(path, ws, origin, saved_at))
        found.sort(key=lambda r: r.saved_at, reverse=True)
        return found


def _read_meta(path: Path) -> tuple[str | None, float]:
    """(origin, saved_at) from the meta file; the copy's own time where the meta is bad."""
    try:
        fallback = path.stat().st_mtime
    except OSError:
        fallback = time.time()
    fallback = _plausible_time(fallback, time.time())
    try:
        meta = json.loads(read_limited(_meta_path(path), MAX_META_BYTES).decode("utf-8"))
        if not isinstance(meta, dict):
            return None, fallback
        origin = meta.get("origin") if isinstance(meta.get("origin"), str) else None
        saved = meta.get("saved_at", fallback)
        if isinstance(saved, bool) or not isinstance(saved, (int, float)):
            return origin, fallback
        return origin, _plausible_time(float(saved), fallback)
    except (OSError, ValueError, RecursionError):
        return None, fallback


def _plausible_time(value: float, fallback: float) -> float:
    """``value`` if it is a time the clock can show (1e300 and NaN are not), else ``fallback``."""
    try:
        if math.isfinite(value) and value >= 0:
            time.localtime(value)
            time.strftime("%Y-%m-%d %H:%M", time.localtime(value))
            return value
    except (OverflowError, OSError, ValueError):
        pass
    return fallback
