"""One registry of estimators, and the functions every front end calls.

The GUI, CLI and exports list estimators, labels and requirements from :data:`REGISTRY`, and
compute through :func:`rolling_vol`, :func:`point_estimate` and :func:`estimate_all`, so that every
surface shows the same number for the same settings.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from volbench import validate
from volbench.candidates import Candidate, CandidateSet
from volbench.data.history import PriceHistory, _iso
from volbench.errors import EstimatorUnavailable, VolbenchError
from volbench.estimators import intervals
from volbench.estimators.base import Estimate, EstimatorSpec, RollingVol
from volbench.estimators.close_based import (
    CLOSE_TO_CLOSE,
    CLOSE_TO_CLOSE_FORM,
    EWMA,
    close_to_close_variance,
)
from volbench.estimators.range_based import (
    GARMAN_KLASS,
    GARMAN_KLASS_FORM,
    PARKINSON,
    PARKINSON_FORM,
    ROGERS_SATCHELL,
    ROGERS_SATCHELL_FORM,
    YANG_ZHANG,
    YANG_ZHANG_FORM,
    garman_klass_variance,
    parkinson_variance,
    rogers_satchell_variance,
    yang_zhang_variance,
)
from volbench.estimators.realized import BIPOWER, REALIZED
from volbench.estimators.sums import SumForm, evaluate
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization, check_window

REGISTRY: dict[str, EstimatorSpec] = {
    s.key: s for s in (CLOSE_TO_CLOSE, PARKINSON, GARMAN_KLASS, ROGERS_SATCHELL, YANG_ZHANG, EWMA, REALIZED, BIPOWER)
}
ESTIMATOR_KEYS: tuple[str, ...] = tuple(REGISTRY)
DAILY_KEYS: tuple[str, ...] = tuple(k for k, s in REGISTRY.items() if s.requires is None)
"""Estimators computed from the bars of any file; the others (``realized``, ``bipower``) need the
intraday bars behind a history analysed by day."""


def get_spec(key: str) -> EstimatorSpec:
    """The spec for ``key``; a clear error listing the choices otherwise (volbench.validate.estimator)."""
    return REGISTRY[validate.estimator(key)]


NO_RANGE = ("no range on any bar of the window (high = low on every bar, as when close-only prices are "
            "padded to OHLC): a range estimator has no information here")
NO_MOVES = "the closes do not change over the window: there is no volatility to measure; check the price column"


def _rolling_count(flags: np.ndarray, w: int) -> np.ndarray:
    """Exact count of true flags in each trailing window of ``w`` (NaN for the first ``w - 1``)."""
    c = np.concatenate(([0], np.cumsum(flags.astype(np.int64))))
    out = np.full(len(flags), np.nan)
    if len(flags) >= w:
        out[w - 1:] = c[w:] - c[:-w]
    return out


def _uninformative(spec: EstimatorSpec, history: PriceHistory, window: int) -> np.ndarray:
    """True at bars whose window carries no information for ``spec`` (zero range, or no price moves)."""
    empty = _empty_windows(spec, history, window)
    return np.zeros(history.n, dtype=bool) if empty is None else empty


def _empty_windows(spec: EstimatorSpec, history: PriceHistory, window: int) -> np.ndarray | None:
    """:func:`_uninformative`, or ``None`` when no bar is (the usual case, found without a rolling
    count: every bar has a range, or every close moved)."""
    logs = history.logs
    if "high" in spec.needs:
        if not logs.any_flat_range:
            return None
        moved = logs.high - logs.low > 0
        return ~(_rolling_count(moved, window) > 0)
    if not logs.any_flat_return:
        return None
    r = logs.returns
    if spec.memory == "all":
        seen = np.concatenate(([0], np.cumsum(r != 0)))
        return seen == 0
    return ~(np.concatenate(([np.nan], _rolling_count(r != 0, window))) > 0)


def _why_uninformative(spec: EstimatorSpec) -> str:
    return NO_RANGE if "high" in spec.needs else NO_MOVES


def dof_series(spec: EstimatorSpec, history: PriceHistory, window: int, variance: np.ndarray,
               options: dict) -> np.ndarray | float:
    """Degrees of freedom of each bar's interval, by the spec's ``dof`` (an array for Yang-Zhang,
    whose overnight share is read from each window, else a number); see
    :mod:`volbench.estimators.intervals`."""
    if spec.dof is None:
        return window * intervals.BAR_EFFICIENCY[spec.key]
    return spec.dof(history, window, variance, options)


def availability(history: PriceHistory, key: str, window: int | None) -> str | None:
    """Why ``key`` cannot be computed on ``history`` with ``window`` (``None`` when it can)."""
    return _why_not(get_spec(key), history, window)


def _why_not(spec: EstimatorSpec, history: PriceHistory, window: int | None) -> str | None:
    """:func:`availability` for a spec already looked up."""
    missing = sorted(c for c in spec.needs if getattr(history, c) is None)
    reason = None if missing or spec.requires is None else spec.requires(history)
    if reason:
        return reason
    if missing:
        return f"needs {'/'.join(missing)} column{'s' if len(missing) > 1 else ''}"
    minimum = max(spec.min_window, 2 if spec.ci_exact or spec.extra_bars else 1)
    if window is not None and window < minimum:
        return f"window {window} is too small; needs a window of at least {minimum} bars"
    w = _resolve_window(spec, history, window)
    if w < minimum:
        need = spec.bars_needed(minimum)
        return f"needs at least {need} row{'s' if need != 1 else ''}, history has {history.n}"
    if window is not None and history.n < spec.bars_needed(window):
        return f"window {window} needs {spec.bars_needed(window)} rows, history has {history.n}"
    return None


def _resolve_window(spec: EstimatorSpec, history: PriceHistory, window: int | None) -> int:
    if window is not None:
        return window
    if spec.whole_sample_window is not None:
        return min(spec.whole_sample_window, history.n - spec.extra_bars)
    return history.n - spec.extra_bars


def _check(history: PriceHistory, key: str, window: int | None) -> tuple[EstimatorSpec, int]:
    spec = get_spec(key)
    reason = _why_not(spec, history, window)
    if reason:
        raise EstimatorUnavailable(key, reason)
    return spec, _resolve_window(spec, history, window)


def _variance(spec: EstimatorSpec, history: PriceHistory, window: int, options: dict) -> np.ndarray:
    opts = {k: v for k, v in options.items() if v is not None and k in spec.options}
    return spec.variance(history, window, **opts)


def rolling_vol(
    history: PriceHistory,
    key: str,
    window: int,
    *,
    annualization: float = DEFAULT_ANNUALIZATION,
    **options,
) -> RollingVol:
    """Rolling annualized volatility of estimator ``key`` over trailing windows of ``window`` bars.

    Parameters
    ----------
    history
        Price history (rows already selected for the quality policy).
    key
        Estimator key from :data:`REGISTRY`.
    window
        Bars per window (returns for close-based estimators).
    annualization
        Bars per year; vol = sqrt(per-bar variance x annualization).
    **options
        ``zero_mean`` (close-to-close) and ``lam`` (EWMA).

    Raises
    ------
    EstimatorUnavailable
        Missing columns, too few rows for the window, or no window carrying information (zero
        range on every bar, closes that never move). Single windows without information, like
        windows with inconsistent OHLC bars, are left out and listed in ``invalid_dates``.

    Notes
    -----
    The logs of the prices are taken once per history (:attr:`PriceHistory.logs`) and shared by
    every estimator; :func:`rolling_all` returns every estimator's series in one call.
    """
    a, w = _rolling_settings(annualization, window)
    spec = get_spec(key)
    result = _rolling_many(history, [(spec, w)], a, options)[0]
    if isinstance(result, str):
        raise EstimatorUnavailable(spec.key, result)
    return result


def _rolling_settings(annualization: float, window: int) -> tuple[float, int]:
    a = check_annualization(annualization)
    w = check_window(window, minimum=1)
    if w is None:
        raise VolbenchError("a rolling series needs a window in bars, not 'all'")
    return a, w


FORMS: dict = {
    close_to_close_variance: CLOSE_TO_CLOSE_FORM,
    parkinson_variance: PARKINSON_FORM,
    garman_klass_variance: GARMAN_KLASS_FORM,
    rogers_satchell_variance: ROGERS_SATCHELL_FORM,
    yang_zhang_variance: YANG_ZHANG_FORM,
}
"""Variance function -> its window-sum form (:mod:`volbench.estimators.sums`): estimators whose
spec uses one of these functions are computed together, on shared terms, by :func:`rolling_all`."""


def _form(spec: EstimatorSpec, options: dict) -> SumForm | None:
    """The spec's window-sum form, when its options ask for the form's (default) variant."""
    form = FORMS.get(spec.variance)
    if form is None or any(v for k, v in options.items() if v is not None and k in spec.options):
        return None  # e.g. zero-mean close-to-close: computed by its own variance function
    return form


Job = tuple[EstimatorSpec, int]


def _frozen(a: np.ndarray) -> np.ndarray:
    """A read-only view of ``a`` (results are never mutated by their readers)."""
    v = a.view()
    v.flags.writeable = False
    return v


def _rolling_many(history: PriceHistory, jobs: list[Job], a: float, options: dict) -> list[RollingVol | str]:
    """Rolling vol of each (spec, window) job (settings validated), or why it is unavailable.

    The variances go into one (jobs, n) array: window-sum forms evaluated together on shared
    terms (:func:`volbench.estimators.sums.evaluate`), others by their own function; then, in the
    usual case (no inconsistent bar, no window without information), one multiplication and one
    square root for all of them.
    """
    out: list[RollingVol | str | None] = [_why_not(spec, history, w) for spec, w in jobs]
    ready = [i for i, reason in enumerate(out) if reason is None]
    if not ready:
        return out
    block = np.empty((len(ready), history.n))
    form_jobs, form_rows = [], []
    for row, i in zip(block, ready):
        spec, w = jobs[i]
        form = _form(spec, options)
        if form is None:
            row[:] = _variance(spec, history, w, options)
        else:
            form_jobs.append((form, w))
            form_rows.append(row)
    if form_jobs:
        evaluate(history, form_jobs, form_rows)
    fast = []
    for r, i in enumerate(ready):
        spec, w = jobs[i]
        first = spec.bars_needed(w) - 1
        seg = block[r, first:]
        empty = _empty_windows(spec, history, w)
        if empty is not None:
            empty = empty[first:]
            if empty.all():
                out[i] = _why_uninformative(spec)
                continue
        if empty is None and seg.min() >= 0.0:  # the usual case (the minimum is NaN if any value is)
            fast.append((r, i, first))
            continue
        bad = seg >= 0.0
        np.logical_not(bad, out=bad)  # negative or NaN
        if empty is not None:
            bad |= empty
        dates = history.dates[first:]
        if not bad.any():
            out[i] = RollingVol(spec.key, spec.label, w, a, _frozen(np.sqrt(seg * a)), dates, ())
            continue
        good = ~bad
        invalid = tuple(_iso(d) for d in dates[bad])
        out[i] = RollingVol(spec.key, spec.label, w, a, _frozen(np.sqrt(seg[good] * a)), dates[good], invalid)
    if len(fast) == len(ready):
        np.multiply(block, a, out=block)
        np.sqrt(block, out=block)
    else:
        for r, _, _ in fast:
            np.multiply(block[r], a, out=block[r])
            np.sqrt(block[r], out=block[r])
    for r, i, first in fast:
        spec, w = jobs[i]
        out[i] = RollingVol(spec.key, spec.label, w, a, _frozen(block[r, first:]), history.dates[first:], ())
    return out


def rolling_windows(history: PriceHistory, key: str, windows, *, annualization: float = DEFAULT_ANNUALIZATION,
                    **options) -> tuple[dict[int, RollingVol], dict[int, str]]:
    """:func:`rolling_vol` of one estimator for several windows in one call (a volatility cone).

    Returns the series by window and, for windows that cannot be computed, the reason. The
    estimator's per-bar terms and, when they do not depend on the window, their cumulative sums
    are computed once for all windows; each series equals :func:`rolling_vol`'s.
    """
    a = check_annualization(annualization)
    spec = get_spec(key)
    ws = []
    for window in windows:
        w = check_window(window, minimum=1)
        if w is None:
            raise VolbenchError("a rolling series needs a window in bars, not 'all'")
        ws.append(w)
    results = _rolling_many(history, [(spec, w) for w in ws], a, options)
    return ({w: v for w, v in zip(ws, results) if not isinstance(v, str)},
            {w: v for w, v in zip(ws, results) if isinstance(v, str)})


@dataclass(frozen=True)
class RollingReport:
    """Rolling vols of several estimators for one history and window (:func:`rolling_all`).

    ``series`` maps each available estimator key to its :class:`RollingVol`; ``unavailable``
    maps the others to the reason.
    """

    window: int
    annualization: float
    series: dict[str, RollingVol]
    unavailable: dict[str, str] = field(default_factory=dict)


def rolling_all(
    history: PriceHistory,
    window: int,
    *,
    keys: tuple[str, ...] | None = None,
    annualization: float = DEFAULT_ANNUALIZATION,
    **options,
) -> RollingReport:
    """Every (or the chosen) estimator's rolling vol over ``window`` bars, in one call.

    Each series equals :func:`rolling_vol` for that key; an estimator that cannot be computed is
    listed in ``unavailable`` with its reason instead of raising.

    Notes
    -----
    Settings are validated once. The logs of the four price arrays and the returns are computed
    once per history and kept on it (:class:`volbench.data.logs.LogPrices`); the window
    estimators, each written as trailing sums of per-bar terms (:mod:`volbench.estimators.sums`),
    share the terms (u, d, c, the Rogers-Satchell term) and take all their trailing sums from one
    cumulative sum over a stacked array; EWMA runs its recursion. The numbers are those of each
    estimator's own ``variance`` function, to the last bit.
    """
    a, w = _rolling_settings(annualization, window)
    specs = [get_spec(k) for k in (tuple(keys) if keys else ESTIMATOR_KEYS)]
    results = _rolling_many(history, [(spec, w) for spec in specs], a, options)
    return RollingReport(w, a, {s.key: v for s, v in zip(specs, results) if not isinstance(v, str)},
                         {s.key: v for s, v in zip(specs, results) if isinstance(v, str)})


def point_estimate(
    history: PriceHistory,
    key: str,
    window: int | str | None = None,
    *,
    as_of=None,
    annualization: float = DEFAULT_ANNUALIZATION,
    confidence: float = 0.95,
    **options,
) -> Estimate:
    """Annualized volatility of ``key`` over ``window`` bars ending at ``as_of`` (inclusive).

    ``window`` ``None``/``"all"`` uses every row up to ``as_of`` (an ISO date inside the history, or
    ``None``/``"last"``). The confidence interval is the chi-square interval for close-to-close (exact
    under i.i.d. normal returns) and, for the others, a chi-square approximation with effective
    degrees of freedom (:mod:`volbench.estimators.intervals`; labelled approximate; coverage in
    docs/METHODS.md, "Confidence intervals and their coverage").

    Raises
    ------
    EstimatorUnavailable
        Missing columns, too few rows, a negative variance from inconsistent OHLC rows, or a window
        that carries no information (zero range on every bar; closes that never move).
    VolbenchError
        Bad window, annualization, confidence, or an as-of date that is not YYYY-MM-DD or lies
        outside the history.
    """
    a = check_annualization(annualization)
    w = check_window(window, minimum=1)
    confidence = validate.level(confidence)
    end = history.end_index(validate.as_of_for(history, as_of))
    h = _estimation_rows(history, get_spec(key), w, end)
    spec, w_eff = _check(h, key, w)
    all_var = _variance(spec, h, w_eff, options)
    var = float(all_var[-1])
    if not var >= 0:
        raise EstimatorUnavailable(key, "negative variance in this window: some bars have high below low "
                                        "or prices outside their range; exclude flagged rows")
    if bool(_uninformative(spec, h, w_eff)[-1]):
        raise EstimatorUnavailable(key, _why_uninformative(spec))
    s = np.sqrt(var)
    dof = dof_series(spec, h, w_eff, all_var, options)
    dof = float(dof[-1]) if np.ndim(dof) else float(dof)
    n = h.n - 1 if spec.memory == "all" else w_eff
    if spec.ci_exact:
        method = intervals.EXACT_TEXT
    else:
        method = (spec.interval_text or intervals.efficiency_text)(dof, n)
    ann = np.sqrt(a)
    lo, hi = intervals.chi2_interval(s * ann, dof, confidence)
    return Estimate(
        key=spec.key, label=spec.label, vol=float(s * ann), ci_low=lo, ci_high=hi,
        n=int(n), window=w, as_of=h.last_date, annualization=a, confidence=confidence, ci_method=method,
        dof=dof, note=intervals.discretisation_note(spec.key),
    )




def _estimation_rows(history: PriceHistory, spec: EstimatorSpec, window: int | None, end: int) -> PriceHistory:
    """The rows a point estimate of ``spec`` ending at row ``end`` (exclusive) depends on.

    A window estimator needs only its last ``window + extra_bars`` rows, so the estimate costs
    O(window) however long the history (its rolling value there agrees with the full rolling
    series to rounding: the cumulative sums start at a different row). The whole sample
    (``window`` None) and EWMA need every row up to ``end``. A history too short for the window
    is returned whole, so that availability reports its true length.
    """
    if window is None or spec.memory == "all":
        start = 0
    else:
        start = max(0, end - spec.bars_needed(window))
    if start == 0 and end == history.n:
        return history
    return history.take(slice(start, end))


@dataclass(frozen=True)
class EstimateReport:
    """Every requested estimator for one history: estimates and, for the rest, why not.

    ``options`` are the estimator options used (``zero_mean``, ``lam``). :meth:`candidates` offers
    the estimates to a comparison (:class:`volbench.candidates.CandidateSource`).
    """

    history: PriceHistory
    window: int | None
    as_of: str
    annualization: float
    estimates: dict[str, Estimate]
    unavailable: dict[str, str] = field(default_factory=dict)
    options: dict = field(default_factory=dict)

    def candidates(self, days: int) -> CandidateSet:
        """Each estimate as a candidate vol (with its interval), in registry order."""
        items = []
        for key, spec in REGISTRY.items():
            e = self.estimates.get(key)
            if e is None:
                continue
            note = spec.candidate_note(self.options) if spec.candidate_note is not None else ""
            items.append(Candidate("estimator", key, spec.label, e.vol, window=e.window, ci_low=e.ci_low,
                                   ci_high=e.ci_high, note=note))
        # an estimator that cannot apply to this kind of file (realized measures on daily bars) is not
        # offered rather than listed as missing: a daily comparison reads as it always did
        missing = {k: r for k, r in self.unavailable.items()
                   if REGISTRY[k].requires is None or REGISTRY[k].requires(self.history) is None}
        return CandidateSet("estimator", tuple(items), missing, title="estimator", what="vol")

    def as_dict(self) -> dict:
        h = self.history
        return {
            "name": h.name,
            "source": str(h.source) if h.source else None,
            "rows": h.n,
            "first_date": h.first_date,
            "last_date": h.last_date,
            "as_of": self.as_of,
            "window": "all" if self.window is None else self.window,
            "annualization": self.annualization,
            "flagged_rows": "excluded" if h.exclude_flagged else "kept",
            "estimates": {k: e.as_dict() for k, e in self.estimates.items()},
            "unavailable": dict(self.unavailable),
        }


def estimate_all(
    history: PriceHistory,
    window: int | str | None = None,
    *,
    keys: tuple[str, ...] | None = None,
    as_of=None,
    annualization: float = DEFAULT_ANNUALIZATION,
    confidence: float = 0.95,
    **options,
) -> EstimateReport:
    """Point estimates of every (or the chosen) estimator; unavailable ones carry their reason."""
    w = check_window(window, minimum=1)
    a = check_annualization(annualization)
    keys = tuple(keys) if keys else ESTIMATOR_KEYS
    for k in keys:
        get_spec(k)
    h = history.up_to(validate.as_of_for(history, as_of))
    est: dict[str, Estimate] = {}
    unavailable: dict[str, str] = {}
    for k in keys:
        try:
            est[k] = point_estimate(h, k, w, annualization=a, confidence=confidence, **options)
        except EstimatorUnavailable as exc:
            unavailable[k] = exc.reason
    return EstimateReport(h, w, h.last_date, a, est, unavailable, dict(options))
