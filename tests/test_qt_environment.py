"""The installed Qt binding must keep Python's reference counts intact.

PySide6 6.12.0 on CPython 3.11 drops a reference to True on every Signal.emit() and to None on
every timer-driven slot; after a few thousand calls CPython aborts the process ("Fatal Python
error: bool_dealloc"), which would kill a window with unsaved work. pyproject.toml excludes that
release; these checks fail if such a build is ever installed again (measured here, 2026-12).
"""

from __future__ import annotations

import sys

import pytest
from PySide6.QtCore import QObject, QStringListModel, Qt, QTimer, Signal

pytestmark = pytest.mark.skipif(
    sys.version_info >= (3, 12), reason="None/True are immortal from CPython 3.12 on"
)


class _Emitter(QObject):
    ping = Signal()


def test_signal_emit_keeps_the_reference_to_true(qapp) -> None:
    emitter = _Emitter()
    before = sys.getrefcount(True)
    for _ in range(200):
        emitter.ping.emit()
    assert before - sys.getrefcount(True) < 10


def test_timer_slots_and_empty_model_data_keep_the_reference_to_none(qapp, qtbot) -> None:
    calls = []
    timer = QTimer()
    timer.timeout.connect(lambda: calls.append(1))
    model = QStringListModel(["only row"])
    before = sys.getrefcount(None)
    timer.start(0)
    qtbot.waitUntil(lambda: len(calls) >= 200, timeout=10_000)
    timer.stop()
    for _ in range(200):
        model.data(model.index(5, 0), Qt.ItemDataRole.DisplayRole)  # no such row: returns None
    assert before - sys.getrefcount(None) < 50
