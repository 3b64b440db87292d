"""Recompute only what a change touches, through the job table, and publish the results.

The controller listens to :class:`~volbench.gui.state.WorkbenchState` and keeps a
:class:`Results` store up to date from :data:`volbench.gui.jobs.JOBS`: a change of, say, the window
recomputes the rolling vols and the estimates, not the GARCH fits. Quick jobs run at once on the
GUI thread; background jobs run in the :class:`~volbench.gui.workers.Dispatcher`, and the jobs
that depend on them run again when they arrive. On-demand jobs (reading files, an export, a batch
fit) run through :meth:`Controller.run`, and announce themselves with :attr:`Controller.finished`
or :attr:`Controller.failed`.
"""

from __future__ import annotations

from collections.abc import Mapping

from PySide6.QtCore import QObject, Signal

from volbench.errors import Cancelled, VolbenchError
from volbench.gui.dialogs import error_text
from volbench.gui.jobs import JOBS, Context, Job, automatic, jobs_for
from volbench.gui.state import WorkbenchState
from volbench.gui.workers import Dispatcher

NO_DATA = "Load a price file to begin (File > Open, or drop CSV files on the window)."
COMPUTING = "computing…"
STOPPED = "Stopped. Change a setting or press Recompute to run it again."

DEPENDS: dict[str, frozenset[str]] = {k: JOBS[k].inputs for k in automatic()}
"""Inputs of each automatic job (from the job table)."""


class Results(QObject):
    """The latest result (or the reason there is none) for each job; announces updates.

    Results are typed: :meth:`put` refuses a value that is not the job's ``returns`` type. Each
    result remembers the history it was computed on, so a background result that arrives for a
    series no longer shown is never mixed with the current one (:meth:`fresh`).

    Signals
    -------
    updated(frozenset[str])
        Kinds whose value or problem changed.
    """

    updated = Signal(object)

    def __init__(self, parent: QObject | None = None, jobs: Mapping[str, Job] = JOBS) -> None:
        super().__init__(parent)
        self.jobs = jobs
        self._values: dict[str, object] = {}
        self._problems: dict[str, str] = {}
        self._pending: set[str] = set()
        self._owners: dict[str, object] = {}

    def get(self, kind: str):
        return self._values.get(kind)

    def problem(self, kind: str) -> str | None:
        return self._problems.get(kind)

    def is_pending(self, kind: str) -> bool:
        return kind in self._pending

    def fresh(self, kind: str, view) -> object | None:
        """The result of ``kind`` if it was computed on ``view`` (this very history), else ``None``."""
        return self._values.get(kind) if self._owners.get(kind) is view else None

    def outcome(self, kind: str, view) -> object | str | None:
        """The fresh result, or why there is none (``"computing…"``, the problem), or ``None``."""
        value = self.fresh(kind, view)
        if value is not None:
            return value
        if kind in self._pending:
            return COMPUTING
        return self._problems.get(kind)

    def put(self, kind: str, value, view=None) -> None:
        job = self.jobs.get(kind)
        if job is not None and not isinstance(value, job.returns):
            raise TypeError(f"result of {kind!r} must be {job.returns}, got {type(value).__name__}")
        self._values[kind] = value
        self._owners[kind] = view
        self._problems.pop(kind, None)
        self._pending.discard(kind)

    def fail(self, kind: str, message: str) -> None:
        self._values.pop(kind, None)
        self._owners.pop(kind, None)
        self._problems[kind] = message
        self._pending.discard(kind)

    def wait_for(self, kind: str, message: str) -> None:
        self.fail(kind, message)
        self._pending.add(kind)

    def announce(self, kinds) -> None:
        if kinds:
            self.updated.emit(frozenset(kinds))


class Controller(QObject):
    """Runs the job table for the current state.

    Signals
    -------
    status(str)
        A one-line message for the status bar.
    computed(frozenset[str])
        Kinds recomputed by one state change (after :attr:`Results.updated`).
    finished(str, object)
        An on-demand job finished with its result.
    failed(str, object)
        An on-demand job failed (the exception).
    """

    status = Signal(str)
    computed = Signal(object)
    finished = Signal(str, object)
    failed = Signal(str, object)

    def __init__(self, state: WorkbenchState, results: Results, dispatcher: Dispatcher,
                 parent: QObject | None = None, jobs: Mapping[str, Job] = JOBS) -> None:
        super().__init__(parent)
        self.state, self.results, self.dispatcher, self.jobs = state, results, dispatcher, jobs
        self._view_key: tuple | None = None
        self._view = None
        self._queue: list[str] = []  # jobs still to run in the current recompute
        self._deferred: set[str] | None = None  # kinds to announce when the recompute under way ends
        state.changed.connect(self.on_state_changed)
        dispatcher.result.connect(self._on_background_result)
        dispatcher.error.connect(self._on_background_error)

    # ------------------------------------------------------------------ entry points
    def on_state_changed(self, names) -> None:
        kinds = jobs_for(frozenset(names), self.jobs)
        if kinds:
            self.recompute(kinds)

    def recompute(self, kinds=None) -> None:
        """Recompute ``kinds`` (every automatic job by default) for the current state."""
        order = automatic(self.jobs)
        kinds = [k for k in order if kinds is None or k in set(kinds)]
        try:
            view = self.current_view()
        except VolbenchError as exc:
            self._fail_all(kinds, str(exc))
            self.status.emit(str(exc))
            return
        if view is None:
            self._fail_all(kinds, NO_DATA)
            return
        self._queue = list(kinds)
        self._deferred = set()
        try:
            while self._queue:
                self._start(self._queue.pop(0), view)
        finally:
            announced, self._deferred = set(kinds) | self._deferred, None
        self.results.announce(announced)  # once: panes render each result once per change
        self.computed.emit(frozenset(kinds))

    def run(self, kind: str, request=None) -> None:
        """Run on-demand job ``kind`` for ``request``; :attr:`finished` or :attr:`failed` tells."""
        job = self.jobs[kind]
        context = Context(self._view, self.state.choices.settings(), {}, request)
        if not job.background:
            try:
                value = job.run(context, lambda *a: None, lambda: False)
            except Exception as exc:  # noqa: BLE001 - reported to the window like a background error
                self.failed.emit(kind, exc)
            else:
                self.finished.emit(kind, value)
            return
        self.dispatcher.submit(kind, lambda progress, cancel: job.run(context, progress, cancel))

    def current_view(self):
        """The selected history with the flagged-rows policy and as-of date applied (cached)."""
        c = self.state.choices
        key = (self.state.loaded(), c.exclude_flagged, c.as_of)
        if self._view_key is None or any(a is not b and a != b for a, b in zip(key, self._view_key)):
            self._view_key = None
            self._view = self.state.view()
            self._view_key = key
        return self._view

    def fresh(self, kind: str):
        """The current result of ``kind`` if it belongs to the history now selected, else ``None``."""
        return None if self._view is None else self.results.fresh(kind, self._view)

    # ------------------------------------------------------------------ running
    def _context(self, view) -> Context:
        """The context of an automatic job: the view is already cut at the as-of date, so the
        settings it runs with leave the as-of date out (a row left out by the flagged-rows policy
        may have been the as-of row)."""
        others = {k: self.results.outcome(k, view) for k in self.jobs if not self.jobs[k].on_demand}
        settings = self.state.choices.settings()
        settings = settings.with_groups(estimation=settings.estimation.with_changes(as_of=None))
        return Context(view, settings, others)

    def _start(self, kind: str, view) -> None:
        job = self.jobs[kind]
        try:
            context = self._context(view)
        except VolbenchError as exc:
            self.results.fail(kind, str(exc))
            return
        if not job.background:
            try:
                value = job.run(context, lambda *a: None, lambda: False)
            except VolbenchError as exc:
                self.results.fail(kind, str(exc))
                if str(exc) not in {str(context.results.get(i)) for i in job.inputs}:  # not an input's own problem
                    self.status.emit(f"{kind}: {exc}")
            else:
                self.results.put(kind, value, view)
            return
        self.results.wait_for(kind, job.busy.format(name=view.name) or COMPUTING)
        self.dispatcher.submit(kind, lambda progress, cancel: (view, job.run(context, progress, cancel)))

    def _fail_all(self, kinds, message: str) -> None:
        for kind in kinds:
            self.results.fail(kind, message)
            if self.jobs[kind].background:
                self.dispatcher.cancel(kind)
        self.results.announce(kinds)
        self.computed.emit(frozenset(kinds))

    def _dependents(self, kind: str) -> list[str]:
        return [k for k in jobs_for({kind}, self.jobs) if k != kind]

    def _refresh_after(self, kind: str) -> None:
        """Run again the jobs that depend on ``kind`` (its result just arrived or failed)."""
        kinds = [kind]
        try:
            view = self.current_view()
        except VolbenchError:
            view = None
        if view is not None:
            for dep in self._dependents(kind):
                if dep in self._queue:  # the recompute under way runs it next
                    continue
                self._start(dep, view)
                kinds.append(dep)
        if self._deferred is not None:  # a result that arrived during a recompute (synchronous runs)
            self._deferred.update(kinds)
        else:
            self.results.announce(kinds)

    def _on_background_result(self, kind: str, payload) -> None:
        job = self.jobs.get(kind)
        if job is None:
            return
        if job.on_demand:
            self.finished.emit(kind, payload)
            return
        view, value = payload
        if view is not self._view:  # computed for a series no longer shown
            return
        self.results.put(kind, value, view)
        self._refresh_after(kind)

    def _on_background_error(self, kind: str, exc) -> None:
        job = self.jobs.get(kind)
        if job is None:
            return
        if job.on_demand:
            self.failed.emit(kind, exc)
            return
        self.results.fail(kind, error_text(exc))
        self.status.emit(error_text(exc))
        self._refresh_after(kind)

    def cancel_background(self) -> list[str]:
        """Stop every running background job (user pressed Cancel); returns the kinds stopped."""
        stopped = [k for k, j in self.jobs.items() if j.background and self.dispatcher.is_running(k)]
        for kind in stopped:
            self.dispatcher.cancel(kind)
            if not self.jobs[kind].on_demand:
                self.results.fail(kind, STOPPED)
        automatic_stopped = [k for k in stopped if not self.jobs[k].on_demand]
        for kind in automatic_stopped:
            self._refresh_after(kind)
        self.status.emit("Stopped the background work.")
        return stopped


__all__ = ["COMPUTING", "DEPENDS", "NO_DATA", "Cancelled", "Controller", "Results", "jobs_for"]
