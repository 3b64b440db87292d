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
RISE_T = 2.33
"""One-sided 1 % normal quantile: a paired t above this is a rise, not chance."""
RISE_SHARE = 0.02
"""...and the rise must exceed 2 % of variance (about 1 % of vol) to matter for pricing."""
MIN_INTERVALS = 4
"""Fewer intraday intervals than this up to an hour and no rise can be judged."""

SIGNATURE_COLUMNS = ("interval_seconds", "sampling_bars", "returns_per_day", "annualized_vol", "excess",
                     "t_excess", "kind")


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
        (interval one day). ``excess`` is the mean whole-day RV at that interval relative to the
        plateau (the average over the longer half of the intervals) minus 1; ``t_excess`` its
        paired t over days. Both are NaN on the close-to-close row.
    suggested_interval_seconds, suggested_sampling_bars
        Shortest interval from which every longer interval up to the plateau is free of a material,
        significant rise (rule in :func:`signature_plot`).
    reason
        One sentence on what the plot shows.
    days, annualization
        Days averaged and trading days a year.
    """

    name: str
    table: pd.DataFrame
    suggested_interval_seconds: float
    suggested_sampling_bars: int
    reason: str
    days: int
    annualization: float

    def as_dict(self) -> dict:
        return {
            "points": [{"interval_seconds": float(t.interval_seconds), "annualized_vol": float(t.annualized_vol),
                        "kind": t.kind} for t in self.table.itertuples(index=False)],
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
    expectation to every intraday point without noise. Plateau p_t = mean of v_t(k) over the
    longer half of the intervals; at each shorter k the paired difference d_t = v_t(k) - p_t gives
    excess = mean(d) / mean(p) and t = mean(d) / (sd(d) / sqrt(N)). A rise is t > 2.33 and
    excess > 2 %; the suggested interval is one step longer than the longest interval that rises
    (the bar interval when none does). A rule of thumb of our own, no source.
    """
    a = check_annualization(annualization)
    lay = layout if layout is not None else infer_layout(history.dates, session_break)
    if not lay.intraday:
        raise VolbenchError(f"{history.name}: the signature plot needs intraday bars; the file has one bar a session")
    bar = lay.bar_interval_seconds
    top = max(1, int(np.floor(max_interval_seconds / bar + 1e-9)))
    p, sess = session_prices(history, lay)
    rows, per_day = [], []
    for k in range(1, top + 1):
        sr = returns_on_grid(p, sess, lay.n_sessions, k, bar)
        rv = np.einsum("ij,ij->i", sr.returns, sr.returns)
        per_day.append((rv + sr.overnight**2)[1:])
        rows.append((k * bar, k, float(sr.counts.mean())))
    v = np.vstack(per_day)
    n_days = v.shape[1]
    if n_days < 2:
        raise VolbenchError(f"{history.name}: the signature plot needs at least 3 sessions, has {lay.n_sessions}")
    closes = np.log(history.close[lay.ends])
    cc = np.diff(closes) ** 2
    excess = np.full(top, np.nan)
    t = np.full(top, np.nan)
    half = max(2, int(np.ceil(top / 2)))
    if top >= MIN_INTERVALS:
        ref = v[half - 1:].mean(axis=0)
        d = v - ref
        sd = d.std(axis=1, ddof=1)
        excess = d.mean(axis=1) / ref.mean()
        with np.errstate(divide="ignore", invalid="ignore"):
            t = np.where(sd > 0, d.mean(axis=1) / (sd / np.sqrt(n_days)), 0.0)
    vols = np.sqrt(a * v.mean(axis=1))
    table = pd.DataFrame({
        "interval_seconds": [r[0] for r in rows] + [DAY_SECONDS],
        "sampling_bars": [r[1] for r in rows] + [0],
        "returns_per_day": [r[2] for r in rows] + [1.0],
        "annualized_vol": np.concatenate((vols, [np.sqrt(a * cc.mean())])),
        "excess": np.concatenate((excess, [np.nan])),
        "t_excess": np.concatenate((t, [np.nan])),
        "kind": ["intraday"] * top + ["close_to_close"],
    })
    k_sug, reason = _suggest(top, half, excess, t, bar)
    return SignaturePlot(history.name, table, k_sug * bar, k_sug, reason, n_days, a)


def _suggest(top: int, half: int, excess: np.ndarray, t: np.ndarray, bar: float) -> tuple[int, str]:
    if top < MIN_INTERVALS:
        return 1, (f"only {top} sampling interval(s) of {format_interval(bar)} bars fit in an hour: too few to "
                   "judge a rise, so the bar interval is used")
    rising = (t[: half - 1] > RISE_T) & (excess[: half - 1] > RISE_SHARE)
    plateau = f"{format_interval(half * bar)} to {format_interval(top * bar)}"
    if not rising.any():
        return 1, (f"flat: realized vol at the {format_interval(bar)} bar interval is within sampling noise of "
                   f"its level at {plateau} sampling ({excess[0]:+.1%} in variance), so noise does not "
                   "noticeably inflate it; the bar interval is used")
    k = int(np.flatnonzero(rising)[-1]) + 2
    return k, (f"rises toward short intervals: at {format_interval(bar)} sampling realized variance is "
               f"{excess[0]:+.0%} above its level at {plateau} (t = {t[0]:.1f}), the mark of microstructure "
               f"noise; from {format_interval(k * bar)} on the rise is gone or too small to matter")
