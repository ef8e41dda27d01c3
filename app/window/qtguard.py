"""Guard against a reference-count defect of PySide6 6.12.0 on CPython 3.11.

Measured in this project's environment (PySide6-Essentials 6.12.0, CPython 3.11.7):
``SignalInstance.emit()`` returns ``True`` without taking a reference, a Python slot
run by a QTimer or a queued connection gives up two or one references to ``None``
that it never took, and ``QModelIndex.data()`` returning no value does the same. Each
call moves the count of ``True``/``None`` one step towards zero; when it gets there
CPython aborts the process ("Fatal Python error: none_dealloc" or "bool_dealloc"),
which in a window with a 10 ms timer is a matter of minutes, and would lose the
user's work. (CPython 3.12 made these singletons immortal, so the same wheels are fine
there; the defect looks like code that assumes that.)

:func:`install` checks for the defect with one throwaway signal and, only if the
reference to ``True`` really went missing, does on CPython < 3.12 what 3.12 does by
design: it gives ``None``, ``True`` and ``False`` a reference count so large that no
leak can exhaust it. These three objects are never deallocated in a healthy process,
so nothing else changes. The proper fix is a PySide6 build without the defect (or
Python >= 3.12); this guard keeps the program safe until then.
"""

from __future__ import annotations

import ctypes
import sys

_HEADROOM = 1 << 40  # references added: ~1e12, more than any session can leak
_state = {"checked": False, "defect": False}


def defect_present() -> bool:
    """True when ``emit()`` drops a reference to ``True`` (checked once, cheaply)."""
    if not _state["checked"]:
        from PySide6.QtCore import QObject, Signal

        class _Probe(QObject):
            ping = Signal()

        probe = _Probe()
        before = sys.getrefcount(True)
        for _ in range(8):
            probe.ping.emit()
        lost = before - sys.getrefcount(True)
        _state["checked"] = True
        _state["defect"] = lost >= 8
        # Give back what the probe itself lost.
        if lost > 0:
            _add_references(True, lost)
    return bool(_state["defect"])


def _add_references(obj: object, count: int) -> None:
    # ob_refcnt is the first field of every object header (Py_ssize_t) on CPython < 3.12.
    cell = ctypes.c_ssize_t.from_address(id(obj))
    cell.value += count


def install() -> bool:
    """Protect None/True/False if (and only if) the defect is present; True if it was."""
    if sys.implementation.name != "cpython" or sys.version_info >= (3, 12):
        return False
    if not defect_present():
        return False
    if _state.get("installed"):
        return True
    for obj in (None, True, False):
        _add_references(obj, _HEADROOM)
    _state["installed"] = True
    return True
