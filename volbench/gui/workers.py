"""Run long core calls off the GUI thread and send the results back by queued signal.

:class:`Dispatcher` numbers every request per *kind* ("garch", "scaling", "export", ...). A newer
request of the same kind supersedes the older one: the older job is asked to cancel and its result,
if it still arrives, is dropped. Jobs are plain callables ``fn(progress, cancel)``: ``progress(done,
total, text)`` may be called from the worker thread, ``cancel()`` returns True once the user (or a
newer request) asked to stop. With ``synchronous=True`` (tests, benchmarks) jobs run at once in the
calling thread and the signals fire before :meth:`Dispatcher.submit` returns.
"""

from __future__ import annotations

import threading
from collections.abc import Callable

from PySide6.QtCore import QObject, QRunnable, Qt, QThreadPool, Signal, Slot

from volbench.errors import Cancelled

Job = Callable[[Callable[[int, int, str], None], Callable[[], bool]], object]

__all__ = ["Cancelled", "Dispatcher", "Job"]


class _Relay(QObject):
    """Lives in the GUI thread; worker threads emit on it, Qt queues the call to the GUI thread."""

    finished = Signal(str, int, object, object)   # kind, request id, result, error
    progressed = Signal(str, int, int, int, str)  # kind, request id, done, total, text


class _Runnable(QRunnable):
    def __init__(self, kind: str, rid: int, fn: Job, relay: _Relay, flag: threading.Event) -> None:
        super().__init__()
        self.kind, self.rid, self.fn, self.relay, self.flag = kind, rid, fn, relay, flag
        self.setAutoDelete(True)

    def run(self) -> None:  # worker thread
        def progress(done: int, total: int, text: str = "") -> None:
            self.relay.progressed.emit(self.kind, self.rid, int(done), int(total), str(text))

        try:
            result = self.fn(progress, self.flag.is_set)
        except BaseException as exc:  # noqa: BLE001 - every failure goes back to the GUI thread
            self.relay.finished.emit(self.kind, self.rid, None, exc)
        else:
            self.relay.finished.emit(self.kind, self.rid, result, None)


class Dispatcher(QObject):
    """Submit jobs by kind; newest wins; results and errors arrive as signals in the GUI thread.

    Signals
    -------
    result(kind, value)
        The latest request of ``kind`` finished.
    error(kind, exception)
        The latest request of ``kind`` raised (``Cancelled`` is not reported).
    progress(kind, done, total, text)
        Progress of the latest request of ``kind``.
    busy(bool)
        True while any current request is running.
    """

    result = Signal(str, object)
    error = Signal(str, object)
    progress = Signal(str, int, int, str)
    busy = Signal(bool)

    def __init__(self, *, synchronous: bool = False, pool: QThreadPool | None = None,
                 parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.synchronous = synchronous
        self._pool = pool or QThreadPool(self)
        if pool is None:
            self._pool.setMaxThreadCount(2)
        self._relay = _Relay(self)
        self._relay.finished.connect(self._on_finished, Qt.ConnectionType.QueuedConnection)
        self._relay.progressed.connect(self._on_progress, Qt.ConnectionType.QueuedConnection)
        self._latest: dict[str, int] = {}
        self._flags: dict[str, threading.Event] = {}
        self._running: set[str] = set()
        self._next_id = 0

    # ------------------------------------------------------------------ public
    def submit(self, kind: str, fn: Job) -> int:
        """Run ``fn`` for ``kind``; any earlier request of that kind is cancelled and ignored."""
        self._next_id += 1
        rid = self._next_id
        old = self._flags.get(kind)
        if old is not None:
            old.set()
        flag = threading.Event()
        self._latest[kind] = rid
        self._flags[kind] = flag
        was_busy = bool(self._running)
        self._running.add(kind)
        if not was_busy:
            self.busy.emit(True)
        if self.synchronous:
            try:
                value = fn(lambda d, t, s="": self._on_progress(kind, rid, d, t, s), flag.is_set)
            except BaseException as exc:  # noqa: BLE001
                self._on_finished(kind, rid, None, exc)
            else:
                self._on_finished(kind, rid, value, None)
        else:
            self._pool.start(_Runnable(kind, rid, fn, self._relay, flag))
        return rid

    def cancel(self, kind: str | None = None) -> None:
        """Ask the running request of ``kind`` (default: all) to stop and forget its result."""
        kinds = [kind] if kind else list(self._running)
        for k in kinds:
            flag = self._flags.get(k)
            if flag is not None:
                flag.set()
            self._latest[k] = -1
            self._done(k)

    def discard(self, kind: str) -> None:
        """Forget any pending result of ``kind`` without reporting (inputs changed)."""
        self.cancel(kind)

    def is_running(self, kind: str | None = None) -> bool:
        return bool(self._running) if kind is None else kind in self._running

    def wait(self, msecs: int = 30000) -> bool:
        """Block until the pool is idle (tests); queued results arrive on the next event loop turn."""
        return self._pool.waitForDone(msecs)

    # ------------------------------------------------------------------ internals
    @Slot(str, int, object, object)
    def _on_finished(self, kind: str, rid: int, value, exc) -> None:
        if self._latest.get(kind) != rid:
            return  # superseded or cancelled
        self._done(kind)
        if exc is None:
            self.result.emit(kind, value)
        elif not isinstance(exc, Cancelled):
            self.error.emit(kind, exc)

    @Slot(str, int, int, int, str)
    def _on_progress(self, kind: str, rid: int, done: int, total: int, text: str) -> None:
        if self._latest.get(kind) == rid:
            self.progress.emit(kind, done, total, text)

    def _done(self, kind: str) -> None:
        if kind in self._running:
            self._running.discard(kind)
            if not self._running:
                self.busy.emit(False)
