"""Recompute only what a change touches, through the core, and publish the results.

The controller listens to :class:`~volbench.gui.state.WorkbenchState` and keeps a
:class:`Results` store up to date. :data:`DEPENDS` says which inputs each result depends on; a
change of, say, the window recomputes the rolling vols, the estimates and the comparison, but
not the GARCH fits or the scaling check. Quick, vectorised results are computed at once on the
GUI thread; GARCH fits and the scaling check run in the :class:`~volbench.gui.workers.Dispatcher`
and the comparison is refreshed when they arrive.
"""

from __future__ import annotations

from PySide6.QtCore import QObject, Signal

from volbench.errors import VolbenchError
from volbench.gui import compute
from volbench.gui.dialogs import error_text
from volbench.gui.state import WorkbenchState
from volbench.gui.workers import Cancelled, Dispatcher

VIEW_INPUTS = frozenset({"histories", "selected", "exclude_flagged", "as_of"})
"""Inputs that change the history every result is computed on."""

DEPENDS: dict[str, frozenset[str]] = {
    "rolling": frozenset({"view", "window", "annualization"}),
    "estimates": frozenset({"view", "window", "annualization"}),
    "cone": frozenset({"view", "annualization", "cone_estimator"}),
    "scaling": frozenset({"view", "annualization"}),
    "garch": frozenset({"view", "annualization", "garch_model", "garch_dist"}),
    "comparison": frozenset({"view", "annualization", "pricing_vol", "days", "strike", "rate",
                             "dividend_yield", "kind", "cone_estimator", "scaling", "garch"}),
}
ORDER = ("rolling", "estimates", "cone", "scaling", "garch", "comparison")
BACKGROUND = frozenset({"scaling", "garch"})
NO_DATA = "Load a price file to begin (File > Open, or drop CSV files on the window)."


def jobs_for(names: frozenset[str]) -> list[str]:
    """Results that depend on any of ``names`` (directly or through the view), in run order."""
    touched = set(names)
    if touched & VIEW_INPUTS:
        touched.add("view")
    for job in ORDER:  # ORDER lists every job after the jobs it depends on
        if DEPENDS[job] & touched:
            touched.add(job)
    return [job for job in ORDER if job in touched]


class Results(QObject):
    """The latest result (or the reason there is none) for each kind; announces updates.

    Signals
    -------
    updated(frozenset[str])
        Kinds whose value or problem changed.
    """

    updated = Signal(object)

    def __init__(self, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self._values: dict[str, object] = {}
        self._problems: dict[str, str] = {}
        self._pending: set[str] = set()

    def get(self, kind: str):
        return self._values.get(kind)

    def problem(self, kind: str) -> str | None:
        return self._problems.get(kind)

    def is_pending(self, kind: str) -> bool:
        return kind in self._pending

    def put(self, kind: str, value) -> None:
        self._values[kind] = value
        self._problems.pop(kind, None)
        self._pending.discard(kind)

    def fail(self, kind: str, message: str) -> None:
        self._values.pop(kind, None)
        self._problems[kind] = message
        self._pending.discard(kind)

    def wait_for(self, kind: str, message: str) -> None:
        self._values.pop(kind, None)
        self._problems[kind] = message
        self._pending.add(kind)

    def announce(self, kinds) -> None:
        if kinds:
            self.updated.emit(frozenset(kinds))


class Controller(QObject):
    """Runs the core for the current state; see :data:`DEPENDS`.

    Signals
    -------
    status(str)
        A one-line message for the status bar.
    computed(frozenset[str])
        Kinds recomputed by one state change (after :attr:`Results.updated`).
    """

    status = Signal(str)
    computed = Signal(object)

    def __init__(self, state: WorkbenchState, results: Results, dispatcher: Dispatcher,
                 parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.state, self.results, self.dispatcher = state, results, dispatcher
        self._scaling_for = None  # the history object the scaling result belongs to
        self._garch_for = None
        self._view_key: tuple | None = None
        self._view = None
        state.changed.connect(self.on_state_changed)
        dispatcher.result.connect(self._on_background_result)
        dispatcher.error.connect(self._on_background_error)

    # ------------------------------------------------------------------ entry points
    def on_state_changed(self, names) -> None:
        jobs = jobs_for(frozenset(names))
        if jobs:
            self.recompute(jobs)

    def recompute(self, jobs=ORDER) -> None:
        """Recompute ``jobs`` (all by default) for the current state."""
        jobs = [j for j in ORDER if j in set(jobs)]
        try:
            view = self.current_view()
        except VolbenchError as exc:
            for job in jobs:
                self.results.fail(job, str(exc))
            self._cancel_background(jobs)
            self.status.emit(str(exc))
            self.results.announce(jobs)
            self.computed.emit(frozenset(jobs))
            return
        if view is None:
            for job in jobs:
                self.results.fail(job, NO_DATA)
            self._cancel_background(jobs)
            self.results.announce(jobs)
            self.computed.emit(frozenset(jobs))
            return
        foreground = [j for j in jobs if j not in BACKGROUND]
        for job in foreground:
            if job != "comparison":
                self._run_now(job, view)
        for job in jobs:
            if job in BACKGROUND:
                self._start_background(job, view)
        if "comparison" in jobs:
            self._run_now("comparison", view)
        self.results.announce(jobs)
        self.computed.emit(frozenset(jobs))

    def current_view(self):
        """The selected history with the flagged-rows policy and as-of date applied (cached)."""
        c = self.state.choices
        key = (self.state.loaded(), c.exclude_flagged, c.as_of)
        if self._view_key is None or any(a is not b and a != b for a, b in zip(key, self._view_key)):
            self._view_key = None
            self._view = self.state.view()
            self._view_key = key
        return self._view

    # ------------------------------------------------------------------ foreground
    def _run_now(self, job: str, view) -> None:
        c = self.state.choices
        try:
            if job == "rolling":
                value = compute.rolling_all(view, c.window, c.annualization)
            elif job == "estimates":
                value = compute.estimates(view, c.window, c.annualization)
            elif job == "cone":
                value = compute.cone(view, c.cone_estimator, c.annualization)
            elif job == "comparison":
                value = compute.comparison(
                    view, c.pricing_vol, c.days, strike=c.strike, rate=c.rate,
                    dividend_yield=c.dividend_yield, kind=c.kind, annualization=c.annualization,
                    scaling_result=self._fresh("scaling", view),
                    garch_result=self._fresh("garch", view), cone_estimator=c.cone_estimator,
                    cone_result=self.results.get("cone"))
            else:  # pragma: no cover - ORDER and DEPENDS are fixed above
                raise KeyError(job)
        except compute.NotInBuild as exc:
            self.results.fail(job, f"{exc.feature} is not available in this build.")
        except VolbenchError as exc:
            self.results.fail(job, str(exc))
            self.status.emit(f"{job}: {exc}")
        else:
            self.results.put(job, value)

    def fresh(self, kind: str):
        """The current result of ``kind`` if it belongs to the history now selected, else ``None``."""
        if self._view is None:
            return None
        if kind in BACKGROUND:
            return self._fresh(kind, self._view)
        return self.results.get(kind)

    def _fresh(self, kind: str, view):
        """A background result only if it was computed on this very history."""
        owner = self._scaling_for if kind == "scaling" else self._garch_for
        return self.results.get(kind) if owner is view else None

    # ------------------------------------------------------------------ background
    def _start_background(self, job: str, view) -> None:
        c = self.state.choices
        if job == "scaling":
            def fn(progress, cancel, view=view, a=c.annualization):
                return view, compute.scaling(view, a, progress, cancel)
            message = f"Running the scaling check on {view.name}…"
        else:
            def fn(progress, cancel, view=view, m=c.garch_model, d=c.garch_dist, a=c.annualization):
                progress(0, 1, f"Fitting GARCH models to {view.name}")
                out = compute.garch(view, m, d, a, progress, cancel)
                if cancel():
                    raise Cancelled()
                return view, out
            message = f"Fitting GARCH models to {view.name}…"
        if job == "scaling":
            self._scaling_for = None
        else:
            self._garch_for = None
        self.results.wait_for(job, message)
        self.dispatcher.submit(job, fn)

    def _cancel_background(self, jobs) -> None:
        for job in jobs:
            if job in BACKGROUND:
                self.dispatcher.cancel(job)

    def _on_background_result(self, kind: str, payload) -> None:
        if kind not in BACKGROUND:
            return
        view, value = payload
        if kind == "scaling":
            self._scaling_for = view
        else:
            self._garch_for = view
        self.results.put(kind, value)
        self._refresh_comparison([kind])

    def _on_background_error(self, kind: str, exc) -> None:
        if kind not in BACKGROUND:
            return
        if isinstance(exc, compute.NotInBuild):
            self.results.fail(kind, f"{exc.feature} is not available in this build.")
        else:
            self.results.fail(kind, error_text(exc))
            self.status.emit(error_text(exc))
        self._refresh_comparison([kind])

    def _refresh_comparison(self, kinds) -> None:
        try:
            view = self.current_view()
        except VolbenchError:
            view = None
        if view is not None:
            self._run_now("comparison", view)
            kinds = [*kinds, "comparison"]
        self.results.announce(kinds)

    def cancel_background(self) -> None:
        """Stop GARCH fits and the scaling check (user pressed Cancel)."""
        for job in BACKGROUND:
            if self.dispatcher.is_running(job):
                self.dispatcher.cancel(job)
                self.results.fail(job, "Stopped. Change a setting or press Recompute to run it again.")
        self.results.announce(BACKGROUND)
        self.status.emit("Stopped the background work.")
