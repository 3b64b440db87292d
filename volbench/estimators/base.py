"""Contract shared by every estimator, the result types, and O(n) rolling helpers.

An estimator is an :class:`EstimatorSpec`: a key, a label, the columns it needs, how many bars a
window of n consumes, and a function returning the **per-bar variance** at every bar for a given
window (NaN only where the window does not fit yet). Annualizing, as-of selection, confidence
intervals and "unavailable" reasons are handled once, in :mod:`volbench.estimators.registry`.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from functools import cached_property
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

    requires: Callable[[PriceHistory], str | None] | None = None
    """``requires(history)``: why the history cannot feed this estimator beyond its columns (e.g.
    the realized measures on a file of daily bars), ``None`` when it can; ``None``: no condition."""

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


@dataclass(frozen=True, eq=False)
class RollingVol:
    """Rolling annualized volatility of one estimator over windows of ``window`` bars.

    ``vols`` (read-only) holds the vol at each of ``dates``, which start at the first date where
    the window fits; any later date where the variance is undefined (inconsistent OHLC kept in the
    data) is listed in ``invalid_dates`` and left out. ``values`` is the same as a date-indexed
    pandas Series, built on first use: a caller that reads the arrays (a survey, a cone) never pays
    for the Series.
    """

    key: str
    label: str
    window: int
    annualization: float
    vols: np.ndarray
    dates: np.ndarray
    invalid_dates: tuple[str, ...] = field(default=())

    @classmethod
    def from_series(cls, key: str, label: str, window: int, annualization: float, values: pd.Series,
                    invalid_dates: tuple[str, ...] = ()) -> RollingVol:
        """From a date-indexed Series of vols (kept as the :attr:`values`)."""
        out = cls(key, label, window, annualization, values.to_numpy(), values.index.to_numpy(), invalid_dates)
        out.__dict__["values"] = values
        return out

    @cached_property
    def values(self) -> pd.Series:
        """The vols as a Series indexed by ``date``, named after the estimator."""
        return pd.Series(self.vols, index=pd.DatetimeIndex(self.dates, name="date"), name=self.key, copy=False)


# ---------------------------------------------------------------------- O(n) rolling helpers
def mean_of(x: np.ndarray) -> float:
    """``numpy.mean`` of a 1-D float array (the same pairwise sum and division, less call overhead)."""
    return float(np.add.reduce(x) / x.shape[0])


def sample_variance(x: np.ndarray) -> float:
    """``numpy.var(x, ddof=1)`` of a 1-D float array: the same two passes, less call overhead."""
    n = x.shape[0]
    d = x - np.add.reduce(x) / n
    return float(np.add.reduce(d * d) / (n - 1))


def _nan_led(m: int, w: int, pad: int) -> np.ndarray:
    """An output of ``pad + m`` values whose first ``pad + w - 1`` are NaN (all NaN when m < w)."""
    out = np.empty(pad + m)
    out[:pad + min(w - 1, m)] = np.nan
    return out


def trailing_sums(x: np.ndarray, w: int) -> np.ndarray:
    """Sums of each trailing window of ``w`` values (length ``len(x) - w + 1``), from one cumulative sum.

    Callers centre ``x`` first when its mean is large against its spread (see :func:`rolling_mean`).
    """
    c = np.empty(x.shape[0] + 1)
    c[0] = 0.0
    np.cumsum(x, out=c[1:])
    return np.subtract(c[w:], c[:-w])


def rolling_mean(x: np.ndarray, w: int, *, pad: int = 0) -> np.ndarray:
    """Mean of each trailing window of ``w`` values; NaN for the first ``w - 1`` positions.

    Cumulative sums of the values centred on their overall mean, so that differences of large
    partial sums do not cancel catastrophically on long series. O(n): one cumulative sum.
    ``pad`` NaNs are put in front (aligning returns, n - 1 of them, with n bars).
    """
    x = np.asarray(x, dtype=float)
    m = x.shape[0]
    out = _nan_led(m, w, pad)
    if m < w:
        return out
    centre = mean_of(x)
    v = out[pad + w - 1:]
    c = np.empty(m + 1)
    c[0] = 0.0
    np.cumsum(x - centre, out=c[1:])
    np.subtract(c[w:], c[:-w], out=v)
    v /= w
    v += centre
    return out


def rolling_var(x: np.ndarray, w: int, ddof: int = 1, *, window_sums: np.ndarray | None = None,
                pad: int = 0) -> np.ndarray:
    """Sample variance (divisor ``w - ddof``) of each trailing window; NaN for the first ``w - 1``.

    Computed from cumulative sums of ``x - mean(x)`` and its square (O(n)); tiny negative values
    from rounding are set to zero. ``window_sums``, the plain sums of ``x`` over each trailing
    window (length ``len(x) - w + 1``), saves one cumulative sum when the caller has them for free:
    the window sums of log returns are differences of log prices (``ln C_t - ln C_{t-w}``).
    ``pad`` NaNs are put in front, as in :func:`rolling_mean`.
    """
    x = np.asarray(x, dtype=float)
    m = x.shape[0]
    out = _nan_led(m, w, pad)
    if m < w:
        return out
    mean = mean_of(x)
    y = x - mean
    if window_sums is None:
        c = np.empty((2, m + 1))
        c[:, 0] = 0.0
        c[0, 1:] = y
        np.multiply(y, y, out=c[1, 1:])
        np.cumsum(c[:, 1:], axis=1, out=c[:, 1:])
        s = c[:, w:] - c[:, :-w]
        s1, s2 = s[0], s[1]
    else:
        np.multiply(y, y, out=y)
        s2 = trailing_sums(y, w)
        s1 = np.subtract(window_sums, w * mean)
    v = out[pad + w - 1:]
    np.multiply(s1, s1, out=s1)
    s1 /= w
    np.subtract(s2, s1, out=v)
    v /= (w - ddof)
    np.maximum(v, 0.0, out=v)
    return out


def pad_front(x: np.ndarray, k: int) -> np.ndarray:
    """Prepend ``k`` NaNs (aligns return-based arrays, length n - 1, with bars, length n)."""
    return np.concatenate((np.full(k, np.nan), x))


def ohlc_logs(h: PriceHistory) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """u = ln(H/O), d = ln(L/O), c = ln(C/O) per bar (docs/METHODS.md, Notation and conventions).

    New arrays, from the logs kept on the history (:attr:`PriceHistory.logs`).
    """
    lo = h.logs.open
    return h.logs.high - lo, h.logs.low - lo, h.logs.close - lo
