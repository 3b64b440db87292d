"""The candidates' vol forecasts at every bar: computed once per series, indexed at evaluation dates.

Each candidate becomes one :class:`Forecast`: an array over the history's bars holding the
annualized vol the candidate would have quoted at that bar's close for the next N bars (NaN where
it cannot yet), and the effective number of observations behind it (for its interval).
Estimators and EWMA are flat forecasts (today's estimate for every future bar); the event-aware
candidate adds the events scheduled in the next N bars; GARCH averages its expected variances.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np
from scipy.signal import lfilter

from volbench.data.history import PriceHistory, _iso
from volbench.errors import Cancelled
from volbench.estimators import REGISTRY, availability, get_spec, rolling_vol
from volbench.estimators.close_based import EWMA_LAMBDA
from volbench.estimators.registry import dof_series
from volbench.events.mapping import EventMap, ex_event_history

Progress = Callable[[int, int, str], None]
Cancel = Callable[[], bool]


class HindsightCancelled(Cancelled):
    """Raised when the caller's ``cancel()`` returned True between two GARCH refits.

    ``done`` and ``total`` count the refits finished and planned.
    """

    def __init__(self, done: int, total: int) -> None:
        self.done, self.total = done, total
        super().__init__(f"hindsight cancelled after {done} of {total} GARCH refits")


@dataclass(frozen=True, eq=False)
class Forecast:
    """One candidate's forecasts over a history.

    Attributes
    ----------
    key, label, window, source
        Unique key (``"close_to_close:20"``, ``"ewma"``, ``"garch"``, ``"event_aware:60"``), table
        label, estimator window in bars (``None`` for EWMA and GARCH) and family.
    vol
        (n,) annualized vol forecast at each bar's close; NaN where it is not available.
    dof
        Effective observations behind a forecast (``inf``: taken as known), for its interval.
    note
        How the forecast was made, in a few words.
    """

    key: str
    label: str
    window: int | None
    source: str
    vol: np.ndarray
    dof: float
    note: str = ""


def aligned(history: PriceHistory, key: str, window: int, annualization: float) -> np.ndarray:
    """Rolling vol of ``key`` at every bar of ``history`` (NaN where undefined), one O(n) pass."""
    rv = rolling_vol(history, key, window, annualization=annualization)
    vals = rv.vols
    out = np.full(history.n, np.nan)
    if rv.invalid_dates:  # bars with inconsistent OHLC are missing from the series (dates sorted, unique)
        out[np.searchsorted(history.dates, rv.dates)] = vals
    else:  # the series runs contiguously to the last bar
        out[history.n - vals.size:] = vals
    return out


def effective_dof(history: PriceHistory, key: str, window: int, vol: np.ndarray | None = None,
                  annualization: float = 252.0) -> float:
    """Effective observations behind an estimate, as its confidence interval counts them.

    Read from the estimator's spec (``EstimatorSpec.dof`` through
    :func:`volbench.estimators.registry.dof_series`), so hindsight's prediction intervals use the
    same degrees of freedom as the estimates' own intervals: close-to-close window - 1 (mean
    removed); EWMA (1 + lambda) / (1 - lambda); the range estimators window x efficiency, and
    Yang-Zhang its per-window value from the overnight share, of which the median over the bars is
    taken (one number per candidate). docs/METHODS.md, "Confidence intervals and their coverage".
    """
    spec = get_spec(key)
    variance = np.full(history.n, np.nan) if vol is None else np.asarray(vol, dtype=float) ** 2 / annualization
    options = {"lam": EWMA_LAMBDA} if "lam" in spec.options else {}
    d = dof_series(spec, history, window, variance, options)
    arr = np.asarray(d, dtype=float)
    if arr.ndim == 0:
        return float(arr)
    finite = arr[np.isfinite(arr) & np.isfinite(variance)]
    return float(np.median(finite)) if finite.size else float(window * spec.efficiency)


def estimator_forecasts(history: PriceHistory, keys: Sequence[str], windows: Sequence[int],
                        annualization: float) -> tuple[list[Forecast], dict[str, str]]:
    """Every estimator in ``keys`` (EWMA excepted) at every window, plus why any is missing."""
    out: list[Forecast] = []
    missing: dict[str, str] = {}
    for key in keys:
        if key == "ewma":
            continue
        spec = get_spec(key)
        for w in windows:
            ck = f"{key}:{w}"
            reason = availability(history, key, w)
            if reason:
                missing[ck] = reason
                continue
            vol = aligned(history, key, w, annualization)
            out.append(Forecast(ck, f"{spec.label}, {w} bars", w, "estimator",
                                vol, effective_dof(history, key, w, vol, annualization),
                                "latest estimate over the window, flat over the period"))
    return out, missing


def ewma_forecast(history: PriceHistory, annualization: float) -> tuple[Forecast | None, str | None]:
    """EWMA (lambda 0.94), seeded as the registry seeds it; its latest value, flat over the period."""
    spec = REGISTRY["ewma"]
    seed = spec.whole_sample_window
    reason = availability(history, "ewma", seed)
    if reason:
        return None, reason
    return (Forecast("ewma", spec.label, None, "ewma", aligned(history, "ewma", seed, annualization),
                     effective_dof(history, "ewma", seed), f"all past returns, seeded with the first {seed}"), None)


def event_aware_forecasts(history: PriceHistory, emap: EventMap, windows: Sequence[int], days: int,
                          annualization: float) -> tuple[list[Forecast], dict[str, str]]:
    """Ex-event close-to-close at each window plus the events scheduled in the next ``days`` bars.

    Notes
    -----
    At bar t: sigma_ex^2 the ex-event close-to-close variance over the last W ordinary returns
    (event bars left out, :func:`volbench.events.mapping.ex_event_history`); sigma_E^2(t) =
    mean of r^2 over the event bars up to t less the variance of every ordinary return up to t,
    floored at 0 (only the past, so no look-ahead); m(t) = event bars among t+1..t+N (scheduled,
    so known at t). Forecast per-bar variance sigma_ex^2 + m sigma_E^2 / N
    (:func:`volbench.events.study.event_aware_variance`). Undefined before the first event.
    """
    n = history.n
    mask = emap.mask
    keep = ~mask
    kept = np.flatnonzero(keep)
    ex = ex_event_history(history, emap.bars)
    r = np.concatenate(([np.nan], np.diff(np.log(history.close))))
    r2 = np.where(np.isnan(r), 0.0, r * r)
    ev_n = np.cumsum(mask)
    ev_sq = np.cumsum(np.where(mask, r2, 0.0))
    ordinary = keep.copy()
    ordinary[0] = False  # the first bar has no return
    o_n = np.cumsum(ordinary)
    r0 = np.nan_to_num(r)
    centred = np.where(ordinary, r0 - r0[ordinary].mean(), 0.0)  # centred sums: no cancellation
    s1 = np.cumsum(centred)
    s2 = np.cumsum(centred * centred)
    with np.errstate(invalid="ignore", divide="ignore"):
        var_o = (s2 - s1 * s1 / o_n) / (o_n - 1)
        ev_var = np.where(ev_n >= 1, np.maximum(ev_sq / ev_n - var_o, 0.0), np.nan)
    m = np.full(n, np.nan)
    m[: n - days] = ev_n[days:] - ev_n[: n - days]
    last_kept = np.maximum.accumulate(np.where(keep, np.arange(n), 0))
    out, missing = [], {}
    for w in windows:
        ck = f"event_aware:{w}"
        reason = availability(ex, "close_to_close", w)
        if reason:
            missing[ck] = f"ex-event close-to-close: {reason}"
            continue
        ex_vol = np.full(n, np.nan)
        ex_vol[kept] = aligned(ex, "close_to_close", w, annualization)
        ex_vol = ex_vol[last_kept]  # an event bar quotes the estimate of the ordinary bar before it
        per_bar = ex_vol**2 / annualization + m * ev_var / days
        out.append(Forecast(ck, f"Ex-event close-to-close + events, {w} bars", w, "event_aware",
                            np.sqrt(per_bar * annualization), float(w - 1),
                            "ordinary-day vol plus the variance of each event due in the period"))
    return out, missing


def garch_forecast(
    history: PriceHistory,
    days: int,
    refit_bars: np.ndarray,
    annualization: float,
    fallback: np.ndarray,
    *,
    dist: str = "normal",
    progress: Progress | None = None,
    cancel: Cancel | None = None,
) -> tuple[Forecast, list[str]]:
    """GARCH(1,1) forward vol over the next ``days`` bars at every bar from the first refit on.

    Parameters
    ----------
    history
        Price history.
    days
        Period length N in bars.
    refit_bars
        Sorted bar positions at which the model is refitted on every return up to that bar.
    annualization
        Bars a year.
    fallback
        (n,) vol used for the bars of a refit whose fit cannot be trusted (the EWMA forecast).
    dist
        Innovation distribution of the fits.
    progress, cancel
        ``progress(done, total, message)`` after each refit; ``cancel()`` polled before each.

    Returns
    -------
    Forecast, notes

    Notes
    -----
    Between refits the parameters are kept and the conditional variance is updated with each new
    return: s2_{t+1} = omega + alpha (r_t - mu)^2 + beta s2_t, started from ``arch``'s backcast
    (weights 0.94^i over the first 75 squared residuals), so at a refit bar it equals the fit's
    own one-bar forecast. The forecast over N bars is sqrt(A (V_L + (s2_{t+1} - V_L)(1 - p^N) /
    ((1 - p) N))), the average of the expected variances (Bollerslev 1986; docs/METHODS.md,
    "GARCH and the vol over an option's life"). Parameters fitted at bar t_j serve bars
    t_j .. t_{j+1} - 1 only (no look-ahead).
    """
    from volbench.models import fit_garch  # arch is imported only when GARCH is asked for
    from volbench.settings import GarchSettings

    n = history.n
    r = history.log_returns()
    out = np.full(n, np.nan)
    total = int(refit_bars.size)
    fallbacks = 0
    bars = np.arange(n)
    settings = GarchSettings(models=("garch",), dist=dist, horizons=(days,))
    for j, tb in enumerate(refit_bars):
        if cancel is not None and cancel():
            raise HindsightCancelled(j, total)
        end = int(refit_bars[j + 1]) if j + 1 < total else n
        fit = fit_garch(history.take(bars <= tb), "garch", settings, annualization=annualization)
        if fit.usable:
            p = fit.params
            mu, omega, alpha, beta = p["mu"], p["omega"], p["alpha[1]"], p["beta[1]"]
            eps2 = (r[: end - 1] - mu) ** 2
            w = 0.94 ** np.arange(min(75, eps2.size))
            backcast = float(np.sum(eps2[: w.size] * w) / w.sum())
            drive = omega + alpha * np.concatenate(([backcast], eps2))
            s2 = lfilter([1.0], [1.0, -beta], drive, zi=[beta * backcast])[0]  # s2[i]: variance of r[i]
            pers = alpha + beta
            vl = omega / (1.0 - pers)
            nxt = s2[tb:end]
            avg = vl + (nxt - vl) * (1.0 - pers**days) / ((1.0 - pers) * days)
            out[tb:end] = np.sqrt(avg * annualization)
        else:
            out[tb:end] = fallback[tb:end]
            fallbacks += 1
        if progress is not None:
            progress(j + 1, total, f"GARCH refit {j + 1} of {total} (as of {_iso(history.dates[tb])})")
    step = int(np.median(np.diff(refit_bars))) if total > 1 else 0
    notes = [f"GARCH(1,1) refitted {total} time{'s' if total != 1 else ''}"
             + (f", every {step} bars" if step else "")
             + "; parameters kept between refits while the variance updates with each return"]
    if fallbacks:
        notes.append(f"{fallbacks} of {total} GARCH refits could not be trusted; their periods use the EWMA forecast")
    return Forecast("garch", "GARCH(1,1) forward vol", None, "garch", out, math.inf,
                    "expected variance averaged over the period"), notes
