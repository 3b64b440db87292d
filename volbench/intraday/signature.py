"""The signature plot: annualized realized vol against the sampling interval.

Under a diffusion observed without error, realized variance has the same expectation at every
sampling interval, so the plot is flat. Microstructure noise (bid-ask bounce) adds about
2 M omega^2 to a day's RV, M returns a day and omega^2 the noise variance, so RV rises toward the
shortest intervals. The plot suggests the shortest interval at which that rise has stopped. It is
the intraday counterpart of "variance against horizon" in the scaling check.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.intraday.grid import returns_on_grid, session_prices
from volbench.intraday.sessions import DAY_SECONDS, SessionLayout, format_interval, infer_layout
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization

MAX_INTERVAL_SECONDS = 3600.0
"""Longest intraday sampling interval on the plot (about an hour)."""
NOISE_T = 2.33
"""One-sided 1 % normal quantile: a noise slope with |t| above this is not chance."""
NOISE_SHARE = 0.02
"""Noise matters while it makes up more than 2 % of the measured variance (about 1 % of vol)."""

SIGNATURE_COLUMNS = ("interval_seconds", "sampling_bars", "returns_per_day", "annualized_vol", "noise_share",
                     "kind")


@dataclass(frozen=True, eq=False)
class SignaturePlot:
    """Annualized whole-day realized vol at each sampling interval, and the suggested interval.

    Attributes
    ----------
    name
        Series name.
    table
        Columns :data:`SIGNATURE_COLUMNS`, one row per intraday interval (every multiple of the bar
        interval up to :data:`MAX_INTERVAL_SECONDS`) and a last row ``kind == "close_to_close"``
        (interval one day, ``sampling_bars`` 0). ``noise_share`` is the estimated share of the
        measured variance at that interval that is noise (NaN on the close-to-close row).
    noise_variance, noise_t
        Estimated variance of the noise in log prices (omega^2) and the t statistic of that estimate.
    suggested_interval_seconds, suggested_sampling_bars
        Shortest interval at which noise makes up at most :data:`NOISE_SHARE` of the variance (the
        bar interval when the noise is not significant).
    reason
        One sentence on what the plot shows.
    days, annualization
        Days averaged and trading days a year.
    """

    name: str
    table: pd.DataFrame
    noise_variance: float
    noise_t: float
    suggested_interval_seconds: float
    suggested_sampling_bars: int
    reason: str
    days: int
    annualization: float

    def as_dict(self) -> dict:
        return {
            "points": [{"interval_seconds": float(t.interval_seconds), "annualized_vol": float(t.annualized_vol),
                        "kind": t.kind} for t in self.table.itertuples(index=False)],
            "noise_variance": self.noise_variance,
            "noise_t": self.noise_t,
            "suggested_interval_seconds": self.suggested_interval_seconds,
            "reason": self.reason,
            "days": self.days,
        }


def signature_plot(
    history: PriceHistory,
    layout: SessionLayout | None = None,
    *,
    session_break: str | float | None = None,
    max_interval_seconds: float = MAX_INTERVAL_SECONDS,
    annualization: float = DEFAULT_ANNUALIZATION,
) -> SignaturePlot:
    """Signature plot of an intraday history (Andersen, Bollerslev, Diebold & Labys 2000, Risk 13).

    Parameters
    ----------
    history
        Intraday price history.
    layout
        Its sessions (inferred when ``None``).
    max_interval_seconds
        Longest intraday interval; every multiple k of the bar interval up to it is a point.
    annualization
        Trading days a year.

    Returns
    -------
    SignaturePlot

    Raises
    ------
    VolbenchError
        Daily history, or fewer than 2 sessions with an overnight return.

    Notes
    -----
    At each k: whole-day variance v_t(k) = RV_t(k) + o_t^2 (every k-th grid price of the session,
    its last price always kept; o the overnight return), annualized vol sqrt(A mean_t v_t(k)). The
    last point is the close-to-close vol sqrt(A mean_t r_t^2) over the same days, equal in
    expectation to every intraday point without noise.

    Suggested interval: with i.i.d. noise of variance omega^2, E[RV_t(k)] = IV_t + 2 n_t(k) omega^2,
    n_t(k) the returns that day (Zhang, Mykland & Ait-Sahalia 2005, JASA 100; Bandi & Russell 2008,
    Review of Economic Studies 75; from memory). The slope is read where it is measured best, at the
    two shortest intervals, day by day: b_t = (v_t(1) - v_t(2)) / (n_t(1) - n_t(2)) (the overnight
    return cancels), b = mean b_t = 2 omega^2, t = b / (sd(b_t) / sqrt(N)). Noise share at k:
    b mean n(k) / mean v(k). When |t| > 2.33 the suggestion is the shortest k whose noise share is at
    most 2 %; otherwise the bar interval. A negative slope (RV falling toward short intervals) points
    to stale or smoothed prices and is treated the same way by its size.
    """
    a = check_annualization(annualization)
    lay = layout if layout is not None else infer_layout(history.dates, session_break)
    if not lay.intraday:
        raise VolbenchError(f"{history.name}: the signature plot needs intraday bars; the file has one bar a session")
    bar = lay.bar_interval_seconds
    top = max(1, int(np.floor(max_interval_seconds / bar + 1e-9)))
    p, sess = session_prices(history, lay)
    rows, per_day, counts_k = [], [], []
    for k in range(1, top + 1):  # a loop over sampling intervals, not bars
        sr = returns_on_grid(p, sess, lay.n_sessions, k, bar)
        rv = np.einsum("ij,ij->i", sr.returns, sr.returns)
        per_day.append((rv + sr.overnight**2)[1:])
        counts_k.append(sr.counts[1:].astype(float))
        rows.append((k * bar, k, float(sr.counts.mean())))
    v = np.vstack(per_day)
    n_days = v.shape[1]
    if n_days < 2:
        raise VolbenchError(f"{history.name}: the signature plot needs at least 3 sessions, has {lay.n_sessions}")
    closes = np.log(history.close[lay.ends])
    cc = np.diff(closes) ** 2
    counts = np.vstack(counts_k)
    mean_v = v.mean(axis=1)
    if not (mean_v > 0).all():
        raise VolbenchError(f"{history.name}: prices do not move at some sampling intervals (zero realized "
                            "variance), so there is no signature to plot; check the price column")
    b, t_b = _noise_slope(v, counts)
    share = b * counts.mean(axis=1) / mean_v if np.isfinite(b) else np.full(top, np.nan)
    table = pd.DataFrame({
        "interval_seconds": [r[0] for r in rows] + [DAY_SECONDS],
        "sampling_bars": [r[1] for r in rows] + [0],
        "returns_per_day": [r[2] for r in rows] + [1.0],
        "annualized_vol": np.concatenate((np.sqrt(a * mean_v), [np.sqrt(a * cc.mean())])),
        "noise_share": np.concatenate((share, [np.nan])),
        "kind": ["intraday"] * top + ["close_to_close"],
    })
    k_sug, reason = _suggest(top, share, t_b, bar)
    return SignaturePlot(history.name, table, b / 2 if np.isfinite(b) else np.nan, t_b, k_sug * bar, k_sug,
                         reason, n_days, a)


def _noise_slope(v: np.ndarray, counts: np.ndarray) -> tuple[float, float]:
    """b = mean over days of (v(1) - v(2)) / (n(1) - n(2)) and its t; NaN without two intervals."""
    if v.shape[0] < 2:
        return float("nan"), float("nan")
    dn = counts[0] - counts[1]
    ok = dn > 0
    if ok.sum() < 2:
        return float("nan"), float("nan")
    bt = (v[0] - v[1])[ok] / dn[ok]
    b = float(bt.mean())
    sd = float(bt.std(ddof=1))
    return b, (b / (sd / np.sqrt(bt.size)) if sd > 0 else 0.0)


def _suggest(top: int, share: np.ndarray, t_b: float, bar: float) -> tuple[int, str]:
    if not np.isfinite(t_b):
        return 1, (f"only one sampling interval of {format_interval(bar)} bars fits in an hour: no noise can be "
                   "judged, so the bar interval is used")
    bar_txt = format_interval(bar)
    if abs(t_b) <= NOISE_T:
        return 1, (f"flat: realized variance does not change significantly toward the {bar_txt} bar interval "
                   f"(noise estimated at {share[0]:+.1%} of the variance there, t = {t_b:.1f}), so the bar "
                   "interval is used")
    small = np.flatnonzero(np.abs(share) <= NOISE_SHARE)
    direction = ("rises toward short intervals, the mark of microstructure noise (bid-ask bounce)" if t_b > 0
                 else "falls toward short intervals, the mark of stale or smoothed prices")
    head = f"{direction}: at {bar_txt} sampling it makes up {share[0]:+.1%} of realized variance (t = {t_b:.1f})"
    if small.size == 0:
        return top, (f"{head}, and still more than {NOISE_SHARE:.0%} at {format_interval(top * bar)}; the longest "
                     "interval on the plot is suggested, and the realized kernel is the safer measure")
    k = int(small[0]) + 1
    if k == 1:
        return 1, f"{head}, at most {NOISE_SHARE:.0%}: the bar interval is used"
    return k, (f"{head}; from {format_interval(k * bar)} on it is at most {NOISE_SHARE:.0%}, so that is the "
               "suggested sampling")
