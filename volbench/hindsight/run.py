"""Hindsight: how each candidate vol would have forecast the vol that followed, over a history.

The as-of date rolls through the history every K bars. At each one, every candidate quotes a vol
for the next N bars, which is set against the close-to-close vol those N bars then realized.
Per candidate: bias and RMSE in vol points, QLIKE loss, coverage of its 95 % interval, the
at-the-money option price error, and a Diebold-Mariano test against the best candidate.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np
import pandas as pd

from volbench import validate
from volbench.data.history import PriceHistory, _iso
from volbench.errors import VolbenchError
from volbench.estimators import ESTIMATOR_KEYS, get_spec
from volbench.events.calendar import EventCalendar
from volbench.events.mapping import map_events
from volbench.hindsight.forecasts import (
    Cancel,
    Progress,
    estimator_forecasts,
    event_aware_forecasts,
    ewma_forecast,
    garch_forecast,
)
from volbench.hindsight.scoring import (
    diebold_mariano,
    dm_degrees_of_freedom,
    prediction_factors,
    qlike,
)
from volbench.pricing.bsm import bsm_price
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization, check_window

DEFAULT_WINDOWS: tuple[int, ...] = (20, 60, 250)
"""A month, a quarter and a year of daily bars."""
DEFAULT_REFIT_EVERY = 63
"""GARCH refits at most every this many bars (a quarter of daily bars); parameters move slowly."""
EWMA_REACH = 2 * 33
"""Bars an EWMA (lambda 0.94) or GARCH forecast leans on, for the test's dependence: twice the
effective sample size (1 + lambda) / (1 - lambda) of about 32 bars (common practice, no source)."""
MIN_PERIODS = 10
"""Fewest evaluation periods a ranking is given for."""
MAX_DAYS = 2520
SCORE_COLUMNS = ("rank", "key", "label", "window", "source", "bias", "rmse", "qlike", "coverage",
                 "price_error", "price_error_share", "dm_stat", "dm_p_value")


def _whole(value, what: str, minimum: int, maximum: int | None = None) -> int:
    if isinstance(value, bool):
        raise VolbenchError(f"{what} must be a whole number, got {value!r}")
    try:
        v = int(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"{what} must be a whole number, got {value!r}") from None
    if v != value and not (isinstance(value, str) and value.strip() == str(v)):
        raise VolbenchError(f"{what} must be a whole number, got {value!r}")
    if v < minimum or (maximum is not None and v > maximum):
        upper = f" and at most {maximum}" if maximum is not None else ""
        raise VolbenchError(f"{what} must be at least {minimum}{upper}, got {v}")
    return v


def check_windows(windows: Iterable[int]) -> tuple[int, ...]:
    """Windows in bars, each >= 2, sorted and distinct."""
    try:
        raw = list(windows)
    except TypeError:
        raise VolbenchError(f"windows must be a list of whole numbers of bars, got {windows!r}") from None
    if not raw:
        raise VolbenchError("windows must list at least one window in bars, e.g. 20,60,250")
    return tuple(sorted({check_window(w, minimum=2) for w in raw}))


@dataclass(frozen=True, eq=False)
class Hindsight:
    """Forecast-versus-realized evidence for one series.

    Attributes
    ----------
    name, days, step, windows, annualization, confidence
        Series; period length N in bars; bars between as-of dates K; estimator windows; bars a
        year; interval level.
    dates
        The as-of dates evaluated (each followed by N bars).
    realized
        Close-to-close vol realized over the N bars after each as-of date, annualized, zero mean:
        sqrt(A / N sum r^2).
    keys
        Candidate keys in the column order of ``vols``.
    vols, interval
        (periods x candidates) annualized vol forecasts, and the multipliers (lower, upper) per
        candidate giving their ``confidence`` intervals for the realized vol. The frames
        :attr:`forecasts`, :attr:`lower` and :attr:`upper` are built from them on first use.
    scores
        One row per candidate, best QLIKE first, columns :data:`SCORE_COLUMNS`: bias and rmse in
        vol points (100 x decimal), mean QLIKE, coverage (share of periods inside the interval),
        price_error (mean absolute difference of an at-the-money call priced at the forecast and
        at the realized vol, in the series' price units) and price_error_share (the same as a
        share of the call's price at the realized vol), the Diebold-Mariano statistic and p-value
        against the best (NaN for the best itself).
    best
        Key of the candidate with the lowest mean QLIKE.
    unavailable
        Candidate key -> why it is missing.
    notes
        Conventions and caveats of this run (GARCH refits, dropped periods, events).
    dm_dof
        Degrees of freedom of the Diebold-Mariano t-distribution.
    """

    name: str
    days: int
    step: int
    windows: tuple[int, ...]
    annualization: float
    confidence: float
    dates: pd.DatetimeIndex
    realized: np.ndarray
    keys: tuple[str, ...]
    vols: np.ndarray
    interval: tuple[np.ndarray, np.ndarray]
    scores: pd.DataFrame
    best: str
    dm_dof: int
    unavailable: dict[str, str] = field(default_factory=dict)
    notes: tuple[str, ...] = ()

    @property
    def periods(self) -> int:
        return len(self.dates)

    @cached_property
    def forecasts(self) -> pd.DataFrame:
        """(as-of date x candidate key) annualized vol forecasts."""
        return pd.DataFrame(self.vols, index=self.dates, columns=list(self.keys))

    @cached_property
    def lower(self) -> pd.DataFrame:
        """Lower ends of the candidates' intervals for the realized vol."""
        return pd.DataFrame(self.vols * self.interval[0], index=self.dates, columns=list(self.keys))

    @cached_property
    def upper(self) -> pd.DataFrame:
        """Upper ends of the candidates' intervals for the realized vol."""
        return pd.DataFrame(self.vols * self.interval[1], index=self.dates, columns=list(self.keys))

    def as_dict(self) -> dict:
        """The JSON shape of one series (NaN -> None)."""
        def num(x):
            return None if x is None or (isinstance(x, float) and not math.isfinite(x)) else x

        cands = []
        for rec in self.scores.to_dict(orient="records"):
            cands.append({k: (None if k == "window" and pd.isna(rec[k]) else
                              int(rec[k]) if k in ("window", "rank") else num(rec[k]))
                          for k in SCORE_COLUMNS})
        return {
            "name": self.name, "days": self.days, "periods": self.periods, "step": self.step,
            "windows": list(self.windows), "first_as_of": _iso(self.dates[0].to_datetime64()),
            "last_as_of": _iso(self.dates[-1].to_datetime64()), "annualization": self.annualization,
            "candidates": cands, "best": self.best, "unavailable": dict(self.unavailable),
            "notes": list(self.notes),
            "conventions": {
                "realized": "close-to-close vol over the next N bars, zero mean, annualized",
                "bias": "mean of forecast - realized vol, vol points", "rmse": "vol points",
                "qlike": "mean of s2_real/s2_fcst - ln(s2_real/s2_fcst) - 1 (Patton 2011)",
                "coverage": f"share of periods with realized vol inside the {self.confidence:.0%} interval",
                "price_error": "mean |call(forecast) - call(realized)|, at the money, rate 0, life N bars",
                "price_error_share": "the same, as a share of call(realized)",
                "dm_p_value": f"Diebold-Mariano against the best, two-sided, Student-t({self.dm_dof})",
            },
        }


def hindsight(
    history: PriceHistory,
    days: int,
    *,
    windows: Sequence[int] = DEFAULT_WINDOWS,
    step: int = 1,
    keys: Sequence[str] | None = None,
    with_garch: bool = False,
    events: EventCalendar | None = None,
    annualization: float = DEFAULT_ANNUALIZATION,
    confidence: float = 0.95,
    refit_every: int = DEFAULT_REFIT_EVERY,
    garch_dist: str = "normal",
    progress: Progress | None = None,
    cancel: Cancel | None = None,
) -> Hindsight:
    """Roll the as-of date through ``history`` and score each candidate's forecast of the next N bars.

    Parameters
    ----------
    history
        Price history (rows already selected for the quality policy).
    days
        N, bars in each forecast period (the option's life).
    windows
        Estimator windows in bars; every estimator in ``keys`` is a candidate at each.
    step
        K, bars between as-of dates (1: every bar; periods then overlap).
    keys
        Estimators (default: all in the registry); EWMA is one candidate whatever the windows.
    with_garch
        Add the GARCH(1,1) forward vol, refitted every ``refit_every`` bars (at least every
        ``step``), parameters kept between refits.
    events
        The instrument's event calendar; adds an event-aware candidate at each window.
    annualization, confidence
        Bars a year; level of the intervals.
    refit_every
        Bars between GARCH refits (rounded up to a multiple of ``step``).
    garch_dist
        GARCH innovation distribution (``"normal"`` or ``"t"``).
    progress, cancel
        Called between GARCH refits: ``progress(done, total, message)``; ``cancel()`` True stops
        with :class:`~volbench.hindsight.forecasts.HindsightCancelled`.

    Returns
    -------
    Hindsight

    Raises
    ------
    VolbenchError
        Bad settings, or a history too short for the windows and period (the message says how
        many rows are needed).

    Notes
    -----
    Every candidate's forecast series is computed once over the whole history and indexed at the
    as-of dates; only the dates where every candidate is defined are scored, so all candidates
    face the same periods. Losses: QLIKE (Patton 2011, J. of Econometrics 160) ranks; the
    Diebold-Mariano test (Diebold & Mariano 1995) of each candidate against the best uses an
    equal-weighted cosine long-run variance (docs/METHODS.md, "Events and hindsight"). The
    interval is the prediction interval of :func:`~volbench.hindsight.scoring.prediction_factors`.
    The best candidate is chosen on the same periods it is tested on, which favours rejection:
    read the p-values as a guide.
    """
    a = check_annualization(annualization)
    n_days = validate.days(days)  # the one rule every command and the window apply to days
    if n_days > MAX_DAYS:
        raise VolbenchError(f"days must be at most {MAX_DAYS} bars for a hindsight run, got {n_days}")
    wins = check_windows(windows)
    k_step = _whole(step, "step", 1)
    refit = _whole(refit_every, "refit_every", 1)
    if not 0 < confidence < 1:
        raise VolbenchError(f"confidence must be between 0 and 1, got {confidence}")
    keys = tuple(keys) if keys else ESTIMATOR_KEYS
    for k in keys:
        get_spec(k)

    cands, unavailable = estimator_forecasts(history, keys, wins, a)
    notes: list[str] = []
    if "ewma" in keys:
        ew, why = ewma_forecast(history, a)
        if ew is None:
            unavailable["ewma"] = why
        else:
            cands.append(ew)
    if events is not None:
        emap = map_events(history, events)
        if emap.count == 0:
            unavailable["event_aware"] = "no event of the calendar falls inside the history"
        else:
            ev, miss = event_aware_forecasts(history, emap, wins, n_days, a)
            cands += ev
            unavailable.update(miss)
            notes.append(f"{emap.count} event bars; realized vol includes them, event-aware candidates "
                         "price the events due in each period")
    if not cands:
        reasons = "; ".join(f"{k}: {v}" for k, v in unavailable.items())
        raise VolbenchError(f"{history.name}: no candidate can be computed ({reasons})")

    n = history.n
    last = n - 1 - n_days  # last as-of bar with N bars after it
    vols = np.column_stack([c.vol for c in cands])
    defined = np.isfinite(vols).all(axis=1)
    first = int(np.argmax(defined)) if defined.any() else n
    if with_garch:
        from volbench.models import MIN_RETURNS

        first = max(first, MIN_RETURNS)
    if first > last:
        need = first + n_days + 1
        raise VolbenchError(f"{history.name}: hindsight with windows {','.join(map(str, wins))} and {n_days}-bar "
                            f"periods needs at least {need} rows, history has {n}; use smaller windows or "
                            "a shorter period (--days)")
    grid = np.arange(first, last + 1, k_step)
    if with_garch:
        every = max(1, math.ceil(refit / k_step))
        fallback = next((c.vol for c in cands if c.key == "ewma"), None)
        if fallback is None:
            fallback = ewma_forecast(history, a)[0].vol
        g, g_notes = garch_forecast(history, n_days, grid[::every], a, fallback, dist=garch_dist,
                                    progress=progress, cancel=cancel)
        cands.append(g)
        notes += g_notes
    else:
        unavailable["garch"] = "not requested"

    r2 = np.concatenate(([0.0], np.diff(np.log(history.close)) ** 2))
    cum = np.cumsum(r2)
    real_var = (cum[grid + n_days] - cum[grid]) / n_days  # per-bar, zero mean, bars t+1 .. t+N
    f = np.column_stack([c.vol[grid] for c in cands])
    ok = np.isfinite(f).all(axis=1) & (real_var > 0)
    dropped = int((~ok).sum())
    if dropped:
        notes.append(f"{dropped} of {grid.size} as-of dates left out: a candidate was undefined there "
                     "(inconsistent OHLC bars) or the price did not move over the period")
    grid, f, real_var = grid[ok], f[ok], real_var[ok]
    if grid.size < MIN_PERIODS:
        raise VolbenchError(f"{history.name}: only {grid.size} periods to score (at least {MIN_PERIODS} needed); "
                            "use a smaller --step, smaller windows or a shorter period")
    realized = np.sqrt(real_var * a)
    fvar = f * f / a
    loss = qlike(real_var[:, None], fvar)
    err = f - realized[:, None]
    lo_k, hi_k = prediction_factors(n_days, np.array([c.dof for c in cands]), confidence)
    lower, upper = f * lo_k, f * hi_k
    inside = (realized[:, None] >= lower) & (realized[:, None] <= upper)
    # at the money with no rate or yield the price is proportional to spot: price per unit of spot
    spot = history.close[grid]
    unit = bsm_price(1.0, 1.0, n_days / a, 0.0, np.column_stack([f, realized]))
    p_real = spot * unit[:, -1]
    perr = spot[:, None] * np.abs(unit[:, :-1] - unit[:, -1:])
    mean_loss = loss.mean(axis=0)
    best = int(np.argmin(mean_loss))
    reach = max([c.window or 0 for c in cands] + [EWMA_REACH]) + n_days  # bars a loss difference depends on
    nu = dm_degrees_of_freedom(grid.size, math.ceil(reach / k_step))
    dm_stat, dm_p = diebold_mariano(loss, loss[:, best], nu)
    dm_stat[best], dm_p[best] = np.nan, np.nan

    scores = pd.DataFrame({
        "key": [c.key for c in cands], "label": [c.label for c in cands],
        "window": pd.array([c.window for c in cands], dtype="Int64"), "source": [c.source for c in cands],
        "bias": 100.0 * err.mean(axis=0), "rmse": 100.0 * np.sqrt((err * err).mean(axis=0)),
        "qlike": mean_loss, "coverage": inside.mean(axis=0), "price_error": perr.mean(axis=0),
        "price_error_share": (perr / p_real[:, None]).mean(axis=0), "dm_stat": dm_stat, "dm_p_value": dm_p,
    })
    scores = scores.sort_values("qlike", kind="stable").reset_index(drop=True)
    scores.insert(0, "rank", np.arange(1, len(scores) + 1))
    dates = history.index[grid]
    if k_step < n_days:
        notes.append(f"periods overlap ({n_days}-bar periods every {k_step} bar{'s' if k_step != 1 else ''}); "
                     "the Diebold-Mariano variance allows for it")
    return Hindsight(
        name=history.name, days=n_days, step=k_step, windows=wins, annualization=a, confidence=confidence,
        dates=dates, realized=realized, keys=tuple(c.key for c in cands), vols=f, interval=(lo_k, hi_k),
        scores=scores[list(SCORE_COLUMNS)], best=cands[best].key, dm_dof=nu, unavailable=unavailable,
        notes=tuple(notes),
    )
