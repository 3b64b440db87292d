"""Contract shared by every estimator, the result types, and O(n) rolling helpers.

An estimator is an :class:`EstimatorSpec`: a key, a label, the columns it needs, how many bars a
window of n consumes, and a function returning the **per-bar variance** at every bar for a given
window (NaN only where the window does not fit yet). Annualizing, as-of selection, confidence
intervals and "unavailable" reasons are handled once, in :mod:`volbench.estimators.registry`.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np
import pandas as pd

from volbench.data.history import PriceHistory

VarianceFn = Callable[..., np.ndarray]


@dataclass(frozen=True)
class EstimatorSpec:
    """Declared contract of one estimator.

    Attributes
    ----------
    key, label
        Stable key used by the CLI, exports and settings; human label for tables and legends.
    needs
        Columns the history must have.
    extra_bars
        Bars consumed beyond the window: 1 when the estimator needs the previous close
        (close-to-close, Yang-Zhang, EWMA), 0 otherwise. A window of n needs n + extra_bars rows.
    min_window
        Smallest window the formula accepts.
    variance
        ``variance(history, window, **options) -> ndarray`` of per-bar variance, length ``history.n``,
        NaN where fewer than ``window + extra_bars`` rows are available.
    efficiency
        Per-bar efficiency relative to close-to-close under Brownian motion, rounded, for help texts;
        the intervals use ``dof`` below (n-dependent for Yang-Zhang).
    ci_exact
        True when the confidence interval is exact under i.i.d. normal returns (close-to-close).
    whole_sample_window
        Window used when the caller asks for the whole sample (``None``: all rows). EWMA uses every
        row anyway and only needs a seed window.
    source, assumes
        Published source of the formula and, in a sentence, what it assumes (shown in help).
    """

    key: str
    label: str
    needs: frozenset[str]
    extra_bars: int
    variance: VarianceFn
    efficiency: float
    source: str
    assumes: str
    min_window: int = 2
    ci_exact: bool = False
    whole_sample_window: int | None = None
    options: frozenset[str] = frozenset()
    """Keyword options ``variance`` accepts (e.g. ``lam`` for EWMA); others passed are ignored."""
    short: str = ""
    """Short legend tag."""
    memory: Literal["window", "all"] = "window"
    """``"all"``: the estimate weighs every past return (EWMA; the window only seeds it), so its
    observation count is every return and a window of flat prices does not make it uninformative."""
    dof: Callable[..., Any] | None = None
    """``dof(history, window, variance, options)``: degrees of freedom of each bar's chi-square
    interval (an array, or one number); ``None``: ``window x intervals.BAR_EFFICIENCY[key]``."""
    interval_text: Callable[[float, int], str] | None = None
    """``interval_text(dof, n)``: how an approximate interval was computed, shown beside it;
    ``None``: ``"effective n {dof} = {n} bars x {efficiency}"``."""
    candidate_note: Callable[[dict], str] | None = None
    """``candidate_note(options)``: the note beside this estimator's vol in a comparison (e.g.
    EWMA's half-life, derived from its lambda); ``None``: no note."""

    def bars_needed(self, window: int) -> int:
        return window + self.extra_bars


@dataclass(frozen=True)
class Estimate:
    """A point estimate of annualized volatility at an as-of date.

    ``vol``, ``ci_low`` and ``ci_high`` are annualized decimals; ``n`` is the number of observations
    (returns or bars) the estimate used; ``window`` is ``None`` for the whole sample.
    """

    key: str
    label: str
    vol: float
    ci_low: float
    ci_high: float
    n: int
    window: int | None
    as_of: str
    annualization: float
    confidence: float
    ci_method: str
    dof: float = float("nan")
    """Degrees of freedom of the chi-square interval (effective for the approximate ones)."""
    note: str = ""
    """Caveat on the estimate (e.g. the discretisation bias of range estimators)."""

    def as_dict(self) -> dict:
        return {"vol": self.vol, "ci_low": self.ci_low, "ci_high": self.ci_high, "n": self.n}


@dataclass(frozen=True)
class RollingVol:
    """Rolling annualized volatility of one estimator over windows of ``window`` bars.

    ``values`` is indexed by date and starts at the first date where the window fits; any later
    date where the variance is undefined (inconsistent OHLC kept in the data) is listed in
    ``invalid_dates`` and left out of ``values``.
    """

    key: str
    label: str
    window: int
    annualization: float
    values: pd.Series
    invalid_dates: tuple[str, ...] = field(default=())


# ---------------------------------------------------------------------- O(n) rolling helpers
def rolling_mean(x: np.ndarray, w: int) -> np.ndarray:
    """Mean of each trailing window of ``w`` values; NaN for the first ``w - 1`` positions.

    Cumulative sums of the values centred on their overall mean, so that differences of large
    partial sums do not cancel catastrophically on long series.
    """
    x = np.asarray(x, dtype=float)
    m = len(x)
    out = np.full(m, np.nan)
    if m < w:
        return out
    centre = float(np.mean(x))
    c = np.concatenate(([0.0], np.cumsum(x - centre)))
    out[w - 1:] = (c[w:] - c[:-w]) / w + centre
    return out


def rolling_var(x: np.ndarray, w: int, ddof: int = 1) -> np.ndarray:
    """Sample variance (divisor ``w - ddof``) of each trailing window; NaN for the first ``w - 1``.

    Computed from cumulative sums of ``x - mean(x)`` and its square (O(n)); tiny negative values
    from rounding are set to zero.
    """
    x = np.asarray(x, dtype=float)
    m = len(x)
    out = np.full(m, np.nan)
    if m < w:
        return out
    y = x - float(np.mean(x))
    c1 = np.concatenate(([0.0], np.cumsum(y)))
    c2 = np.concatenate(([0.0], np.cumsum(y * y)))
    s1 = c1[w:] - c1[:-w]
    s2 = c2[w:] - c2[:-w]
    v = (s2 - s1 * s1 / w) / (w - ddof)
    out[w - 1:] = np.maximum(v, 0.0)
    return out


def pad_front(x: np.ndarray, k: int) -> np.ndarray:
    """Prepend ``k`` NaNs (aligns return-based arrays, length n - 1, with bars, length n)."""
    return np.concatenate((np.full(k, np.nan), x))


def ohlc_logs(h: PriceHistory) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """u = ln(H/O), d = ln(L/O), c = ln(C/O) per bar (docs/METHODS.md, Notation and conventions)."""
    lo = np.log(h.open)
    return np.log(h.high) - lo, np.log(h.low) - lo, np.log(h.close) - lo
