"""Long work off the UI thread: plain Python threads, results delivered as queued Qt events.

A job wraps a plain function ``work(progress, cancel)`` from solvers/ (a scan, a solve,
a report, the live analysis of the equation). Each lane of a runner has one long-lived
daemon ``threading.Thread`` that runs its jobs one after another; the UI thread only
receives what the work reports (done, failed, cancelled, progress) through one queued
signal, so the window stays responsive however long the work takes.

Why Python threads and not one QThread per job: a QThread is a Qt object whose
destructor waits for its thread, and the thread's own clean-up (deleting the worker
object that lived in it) needs the interpreter lock. Destroying a finishing QThread from
the UI thread, which holds that lock, deadlocked the window for good after some
thousand actions. Here no Qt object is ever created or destroyed in a worker thread and
none is destroyed while another thread waits on it: the worker thread only posts events
to :data:`_BRIDGE`, one QObject that lives in the UI thread for the life of the process.
Waiting on a Python event releases the interpreter lock, so :meth:`JobRunner.stop`
cannot deadlock either, and a daemon thread never holds the process open at exit.

Why long-lived threads and not a thread per job: matplotlib keeps its font objects per
thread (its font cache is keyed by thread id), and the C allocator keeps memory per
thread arena, so a fresh thread for every settled edit made the process grow by several
MiB per hundred actions. A lane's thread lives as long as its runner.

Cancelling sets a ``threading.Event`` that the work polls (the scan checks it between
chunks), so a cancel takes effect at the next chunk. :meth:`JobRunner.stop` (closing the
window) cancels everything and waits a bounded time: a job that does not stop in time is
abandoned (its thread is a daemon; whatever it reports later is dropped), so closing
never waits on a runaway job.

A :class:`JobRunner` holds at most one job per *lane* ("preview", "solve", "scan",
"report"). Submitting to a busy lane keeps only the newest request and starts it when
the running one ends, and the result of a superseded job is dropped, so pressing
Solve twice never shows the older answer last.
"""

from __future__ import annotations

import queue
import sys
import threading
import time
import traceback
import weakref
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from PySide6.QtCore import QObject, Qt, Signal, Slot

Work = Callable[[Callable[[float], None], Callable[[], bool]], Any]

# Seconds closing waits for a lane's job before abandoning it. A scan stops at its next
# chunk and the preview is budgeted, so they end well inside this; a report is the user's
# document, so it gets longer before it is given up.
STOP_WAIT_S = {"report": 20.0}
STOP_WAIT_DEFAULT_S = 3.0


class Cancelled(Exception):
    """Raised inside work to report a clean cancel (any ``*Cancelled`` is treated alike)."""


def _one_line(exc: BaseException) -> str:
    text = str(exc).strip().splitlines()
    if text:
        return text[0]
    # No message: name the exception and where, so a bug report has something to go on.
    tb = traceback.extract_tb(exc.__traceback__)
    where = f" in {tb[-1].name}" if tb else ""
    return f"{type(exc).__name__}{where}"


class _Bridge(QObject):
    """The one QObject worker threads talk to; it lives in the UI thread and is never deleted.

    A worker thread emits ``posted``; the explicit queued connection turns the emit into
    an event in the UI thread's queue, and :meth:`_deliver` runs there.
    """

    posted = Signal(object)

    def __init__(self) -> None:
        super().__init__()
        self.posted.connect(self._deliver, Qt.ConnectionType.QueuedConnection)

    @Slot(object)
    def _deliver(self, event: tuple[Any, ...]) -> None:
        runner_ref, running, kind, value = event
        runner = runner_ref()
        if runner is not None:
            runner._on_event(running, kind, value)


_BRIDGE: _Bridge | None = None


def _bridge() -> _Bridge:
    global _BRIDGE
    if _BRIDGE is None:  # made on first use, in the UI thread (JobRunner is made there)
        _BRIDGE = _Bridge()
    return _BRIDGE


@dataclass
class _Request:
    work: Work
    on_done: Callable[[Any], None] | None = None
    on_error: Callable[[str], None] | None = None
    on_cancel: Callable[[], None] | None = None
    on_progress: Callable[[float], None] | None = None


@dataclass(eq=False)
class _Running:
    lane: str
    request: _Request
    cancel: threading.Event = field(default_factory=threading.Event)
    ended: threading.Event = field(default_factory=threading.Event)  # set by the worker
    superseded: bool = False
    done: bool = False


PROGRESS_STEP = 0.001  # the smallest change of progress sent to the UI (bars of 1000 steps)

# What a job can report, and which callback of its request takes it (None: progress).
_FINAL = {"done": "on_done", "failed": "on_error", "cancelled": "on_cancel"}


def _run(runner_ref: weakref.ReferenceType, running: _Running, bridge: _Bridge) -> None:
    """The body of a worker thread: run the work, post exactly one final event."""

    def post(kind: str, value: Any = None) -> None:
        try:
            bridge.posted.emit((runner_ref, running, kind, value))
        except RuntimeError:  # the application is shutting down: nobody to tell
            pass

    # A job may report after every row of a table (10^5 calls): each report is an event
    # the UI thread must take in turn, and a queue that never empties starves its timers
    # and input. Only a change the progress bar can show is sent (a thousandth), and the
    # end of the work.
    shown = [-1.0]

    def progress(fraction: float) -> None:
        if running.cancel.is_set():
            return
        if fraction >= 1.0 or fraction - shown[0] >= PROGRESS_STEP or fraction < shown[0]:
            shown[0] = fraction
            post("progress", fraction)

    try:
        result = running.request.work(progress, running.cancel.is_set)
    except Exception as exc:  # the work's own failure: report it, never crash the UI
        if type(exc).__name__.endswith("Cancelled") or running.cancel.is_set():
            post("cancelled")
        else:
            post("failed", _one_line(exc))
        return
    if running.cancel.is_set():
        post("cancelled")
    else:
        post("done", result)


def _lane_loop(jobs: queue.SimpleQueue) -> None:
    """A lane's worker thread: run each job handed to it, until told to stop (None)."""
    while True:
        item = jobs.get()
        if item is None:
            return
        runner_ref, running, bridge = item
        try:
            _run(runner_ref, running, bridge)
        finally:
            running.ended.set()
            del item, runner_ref, running  # keep no result alive while idle


def _stop_lanes(queues: dict[str, queue.SimpleQueue]) -> None:
    for jobs in queues.values():
        jobs.put(None)


WINDOW_SWITCH_INTERVAL = 0.001
"""Seconds a thread may run Python before another waiting for the interpreter gets it, in a
process with a window (sys.setswitchinterval)."""


class JobRunner(QObject):
    """Runs work in background threads, one job per lane at a time.

    ``busy_changed(lane, busy)`` lets the window disable and enable its actions.
    """

    busy_changed = Signal(str, bool)

    def __init__(self, parent: QObject | None = None) -> None:
        super().__init__(parent)
        # The window's thread must get the interpreter back within milliseconds while a
        # worker computes in Python and numpy. With CPython's default switch interval
        # (5 ms) it waited 120-180 ms at a stretch during a heavy scan (a thread waking
        # every 10 ms, benchmarks/bench_gui.py); at 1 ms the longest wait is a few ms,
        # for a percent or so of the worker's speed. The interval is the process's.
        if sys.getswitchinterval() > WINDOW_SWITCH_INTERVAL:
            sys.setswitchinterval(WINDOW_SWITCH_INTERVAL)
        self._bridge = _bridge()
        self._running: dict[str, _Running] = {}
        self._pending: dict[str, _Request] = {}
        self._closing = False
        # One worker thread per lane, started on first use; told to end when the runner
        # stops or is collected.
        self._queues: dict[str, queue.SimpleQueue] = {}
        self._threads: dict[str, threading.Thread] = {}
        self._finalizer = weakref.finalize(self, _stop_lanes, self._queues)

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
        """Wait for the lane's job to end (its result is delivered by the event loop)."""
        running = self._running.get(lane)
        return running is None or running.ended.wait(timeout_ms / 1000)

    def stop(self, timeout_ms: int | None = None) -> list[str]:
        """Cancel every job and wait a bounded time for each (closing the window calls this).

        A scan stops at its next chunk; a solve or a report cannot be interrupted and is
        waited for up to ``timeout_ms`` (default: :data:`STOP_WAIT_S` per lane), then
        abandoned: its daemon thread ends on its own and whatever it reports is dropped.
        The lanes' threads are then told to end. Returns the lanes abandoned.
        """
        self._closing = True
        self._pending.clear()
        for running in self._running.values():
            running.cancel.set()
        abandoned = []
        start = time.monotonic()  # the lanes wait side by side: one bound, not their sum
        for lane, running in list(self._running.items()):
            wait = (timeout_ms / 1000 if timeout_ms is not None
                    else STOP_WAIT_S.get(lane, STOP_WAIT_DEFAULT_S))
            if not running.ended.wait(max(0.0, start + wait - time.monotonic())):
                abandoned.append(lane)
        self._running.clear()
        self._finalizer()  # every lane thread ends after its current job
        return abandoned

    # -- internals
    def _start(self, lane: str, request: _Request) -> None:
        running = _Running(lane, request)
        jobs = self._queues.get(lane)
        if jobs is None:
            jobs = self._queues[lane] = queue.SimpleQueue()
            self._threads[lane] = threading.Thread(target=_lane_loop, args=(jobs,),
                                                   name=f"zerotrace-{lane}", daemon=True)
            self._threads[lane].start()
        self._running[lane] = running
        self.busy_changed.emit(lane, True)
        jobs.put((weakref.ref(self), running, self._bridge))

    def _on_event(self, running: _Running, kind: str, value: Any) -> None:
        if running.done or self._running.get(running.lane) is not running:
            return  # abandoned at close, or a stray report after the end
        request = running.request
        if kind == "progress":
            if not running.superseded and not running.cancel.is_set() and request.on_progress:
                request.on_progress(value)
            return
        running.done = True
        del self._running[running.lane]
        callback = getattr(request, _FINAL[kind])
        try:
            if callback is not None and not running.superseded and not self._closing:
                callback(*(() if kind == "cancelled" else (value,)))
        finally:
            pending = self._pending.pop(running.lane, None)
            if running.lane in self._running:
                pass  # the callback itself started the next job of this lane
            elif pending is not None and not self._closing:
                self._start(running.lane, pending)
            else:
                self.busy_changed.emit(running.lane, False)
