"""Long work off the UI thread: one QThread per job, results delivered as queued signals.

A :class:`Job` wraps a plain function ``work(progress, cancel)`` from solvers/ (a scan,
a solve, a report). It runs in its own QThread; the UI thread only receives
``finished(result)``, ``failed(message)``, ``cancelled()`` and ``progress(fraction)``
through Qt's queued connections, so the window stays responsive however long the
work takes.

Cancelling sets a ``threading.Event`` that the work polls (the scan checks it between
chunks), so a cancel takes effect at the next chunk; :meth:`JobRunner.stop` cancels
and waits, which is what closing the window does.

A :class:`JobRunner` holds at most one job per *lane* ("preview", "solve", "scan",
"report"). Submitting to a busy lane keeps only the newest request and starts it when
the running one ends, and the result of a superseded job is dropped, so pressing
Solve twice never shows the older answer last.
"""

from __future__ import annotations

import threading
import traceback
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from PySide6.QtCore import QObject, QThread, Signal, Slot

# Jobs that outlived JobRunner.stop(): referenced here so their QThread is never destroyed
# while it runs (which would abort the process).
_STILL_RUNNING: list[Any] = []

Work = Callable[[Callable[[float], None], Callable[[], bool]], Any]


class Cancelled(Exception):
    """Raised inside work to report a clean cancel (any ``*Cancelled`` is treated alike)."""


class _Worker(QObject):
    progress = Signal(float)
    finished = Signal(object)
    failed = Signal(str)
    cancelled = Signal()

    def __init__(self, work: Work, cancel_event: threading.Event) -> None:
        super().__init__()
        self._work = work
        self._cancel = cancel_event

    @Slot()
    def run(self) -> None:
        try:
            result = self._work(self.progress.emit, self._cancel.is_set)
        except Exception as exc:  # the work's own failure: report it, never crash the UI
            if type(exc).__name__.endswith("Cancelled") or self._cancel.is_set():
                self.cancelled.emit()
            else:
                self.failed.emit(_one_line(exc))
            return
        if self._cancel.is_set():
            self.cancelled.emit()
        else:
            self.finished.emit(result)


def _one_line(exc: BaseException) -> str:
    text = str(exc).strip().splitlines()
    if text:
        return text[0]
    # No message: name the exception and where, so a bug report has something to go on.
    tb = traceback.extract_tb(exc.__traceback__)
    where = f" in {tb[-1].name}" if tb else ""
    return f"{type(exc).__name__}{where}"


class _Relay(QObject):
    """Lives in the UI thread; the worker's signals reach it as queued calls.

    (Connecting a cross-thread signal to a lambda is not guaranteed to run the lambda in
    the UI thread, so the job's callbacks hang off this object's slots instead.)
    """

    def __init__(self, runner: JobRunner, lane: str, running: _Running) -> None:
        super().__init__(runner)
        self._runner = runner
        self._lane = lane
        self._running = running

    @Slot(object)
    def finished(self, result: Any) -> None:
        self._runner._deliver(self._running, self._running.request.on_done, result)

    @Slot(str)
    def failed(self, message: str) -> None:
        self._runner._deliver(self._running, self._running.request.on_error, message)

    @Slot()
    def cancelled(self) -> None:
        self._runner._deliver(self._running, self._running.request.on_cancel)

    @Slot(float)
    def progress(self, value: float) -> None:
        self._runner._on_progress(self._running, value)

    @Slot()
    def thread_finished(self) -> None:
        self._runner._on_thread_finished(self._lane, self._running)
        self.deleteLater()


@dataclass
class _Request:
    work: Work
    on_done: Callable[[Any], None] | None = None
    on_error: Callable[[str], None] | None = None
    on_cancel: Callable[[], None] | None = None
    on_progress: Callable[[float], None] | None = None


@dataclass
class _Running:
    thread: QThread
    worker: _Worker
    cancel: threading.Event
    request: _Request
    superseded: bool = False
    done: bool = False
    extra: dict = field(default_factory=dict)


class JobRunner(QObject):
    """Runs work in background threads, one job per lane at a time.

    ``busy_changed(lane, busy)`` lets the window disable and enable its actions.
    """

    busy_changed = Signal(str, bool)

    def __init__(self, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self._running: dict[str, _Running] = {}
        self._pending: dict[str, _Request] = {}
        self._closing = False

    def is_busy(self, lane: str) -> bool:
        return lane in self._running

    def submit(self, lane: str, work: Work, *, on_done: Callable[[Any], None] | None = None,
               on_error: Callable[[str], None] | None = None,
               on_cancel: Callable[[], None] | None = None,
               on_progress: Callable[[float], None] | None = None,
               supersede: bool = True) -> bool:
        """Run ``work`` in ``lane``; if the lane is busy, queue it (newest request wins).

        With ``supersede`` the running job's result is dropped when it ends (use it when
        the new request makes the old answer stale, as with a second Solve). Returns
        False when the runner is closing and nothing will run.
        """
        if self._closing:
            return False
        request = _Request(work, on_done, on_error, on_cancel, on_progress)
        running = self._running.get(lane)
        if running is not None:
            running.superseded = running.superseded or supersede
            self._pending[lane] = request
            return True
        self._start(lane, request)
        return True

    def cancel(self, lane: str) -> None:
        """Ask the lane's job to stop at its next poll, and forget any queued request."""
        self._pending.pop(lane, None)
        running = self._running.get(lane)
        if running is not None:
            running.cancel.set()

    def wait(self, lane: str, timeout_ms: int = 5000) -> bool:
        running = self._running.get(lane)
        if running is None:
            return True
        return running.thread.wait(timeout_ms)

    def stop(self, timeout_ms: int = 30_000) -> None:
        """Cancel every job and wait for its thread (closing the window calls this).

        A scan stops at its next chunk; a solve or a report cannot be interrupted and is
        waited for. A thread still running after ``timeout_ms`` is kept referenced for
        the life of the process, since destroying a running QThread aborts it.
        """
        self._closing = True
        self._pending.clear()
        for running in list(self._running.values()):
            running.cancel.set()
        for lane, running in list(self._running.items()):
            running.thread.quit()
            if not running.thread.wait(timeout_ms):
                _STILL_RUNNING.append(running)
            del self._running[lane]

    # -- internals
    def _start(self, lane: str, request: _Request) -> None:
        thread = QThread()
        thread.setObjectName(f"zerotrace-{lane}")
        cancel = threading.Event()
        worker = _Worker(request.work, cancel)
        worker.moveToThread(thread)
        running = _Running(thread, worker, cancel, request)
        self._running[lane] = running
        relay = _Relay(self, lane, running)
        running.extra["relay"] = relay
        thread.started.connect(worker.run)
        worker.finished.connect(relay.finished)
        worker.failed.connect(relay.failed)
        worker.cancelled.connect(relay.cancelled)
        worker.progress.connect(relay.progress)
        thread.finished.connect(relay.thread_finished)
        self.busy_changed.emit(lane, True)
        thread.start()

    def _on_progress(self, running: _Running, value: float) -> None:
        if not running.superseded and not running.cancel.is_set() and running.request.on_progress:
            running.request.on_progress(value)

    def _deliver(self, running: _Running, callback: Callable | None, *args: Any) -> None:
        running.done = True
        running.thread.quit()
        if callback is not None and not running.superseded and not self._closing:
            callback(*args)

    def _on_thread_finished(self, lane: str, running: _Running) -> None:
        if self._running.get(lane) is running:
            del self._running[lane]
        running.worker.deleteLater()
        running.thread.deleteLater()
        pending = self._pending.pop(lane, None)
        if pending is not None and not self._closing:
            self._start(lane, pending)
        else:
            self.busy_changed.emit(lane, False)
