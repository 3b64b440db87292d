"""Building blocks of the price promise a vol makes: bands, counts of h-bar moves, intervals, scores.

Under Black-Scholes a vol sigma is a probability statement: the log move over h bars is normal
with standard deviation s = sigma sqrt(h / A). These pure functions turn an edge in log-move space
into the share of moves the normal law promises beyond it and the share the history's own h-bar
moves actually went beyond it, with an exact binomial interval, for any array of edges at once (a
sorted array of moves and ``numpy.searchsorted``; no loop over windows or candidates).
:func:`volbench.pricing.promise.promise_check` assembles them per candidate vol.

Conventions (docs/METHODS.md, Probability bands and breakevens):

* **Zero drift in the log price.** Bands are spot x exp(+-k s), symmetric in log around spot, so
  the median price at expiry is spot. Rates and dividends enter the option premiums only. The
  risk-neutral drift (r - q - sigma^2/2) is a pricing device, not a forecast of where the price
  goes, and the historical drift is estimated too poorly to help; over an option's life either
  shifts the centre by a small fraction of s (at 25 % vol and 30 bars, sigma^2 T / 2 is 4 % of s).
  A shift d moves two-sided shares (bands, straddle) only to second order, one-sided ones (a call
  or put breakeven) to first order.
* **Non-overlapping windows for the counts**, anchored at the last close (the newest window ends
  on the as-of date; the oldest returns that do not fill a window are left out). Their moves are
  independent under Brownian motion, so a count is binomial and gets an exact Clopper-Pearson
  interval. Overlapping windows (every bar starts one) give a smoother point estimate, labelled
  as such and without an interval (neighbouring windows share h - 1 bars).
* **Scoring rule for the verdict:** the bands of one candidate cut the line of log moves into
  2k + 1 zones; G = 2 sum O ln(O / E) over those zones (observed counts O against the counts E the
  normal promises) measures how far history departs from the promise; the smallest G wins.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy.special import ndtr, xlogy
from scipy.stats import beta, norm

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.pricing.bsm import check_pricing_vol
from volbench.pricing.cone import _check_days
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization, check_positive

DEFAULT_SIGMAS = (1.0, 2.0, 3.0)
"""Band half-widths in standard deviations of the h-bar log move (common practice, no source)."""


# ---------------------------------------------------------------------------- building blocks
def normal_promise(sigmas) -> np.ndarray:
    """Share of normal outcomes farther than ``sigmas`` standard deviations from the centre.

    Notes
    -----
    P(|Z| > k) = 2 N(-k) for a standard normal Z: 31.73 %, 4.55 %, 0.27 % at k = 1, 2, 3 (the
    normal law; ``scipy.special.ndtr`` evaluates N).
    """
    return 2.0 * ndtr(-np.asarray(sigmas, dtype=float))


def binomial_ci(count, n, level: float = 0.95) -> tuple[np.ndarray, np.ndarray]:
    """Clopper-Pearson interval for a binomial share ``count / n`` (vectorised).

    Parameters
    ----------
    count, n
        Whole numbers, 0 <= count <= n, n >= 1; arrays broadcast together.
    level
        Two-sided confidence level in (0, 1).

    Returns
    -------
    (low, high)
        Arrays of the broadcast shape (floats when both inputs are scalars).

    Raises
    ------
    VolbenchError
        Counts outside 0..n, n < 1, or a level outside (0, 1).

    Notes
    -----
    low = Beta^{-1}(a/2; k, n-k+1) (0 when k = 0), high = Beta^{-1}(1-a/2; k+1, n-k) (1 when
    k = n), a = 1 - level (Clopper & Pearson 1934, Biometrika 26). The interval inverts the exact
    binomial test, so its coverage is at least ``level`` for every true share: conservative where
    Wilson's interval can dip below it for shares near 0, which is where the +-3 sigma band lives.
    Equal to ``scipy.stats.binomtest(k, n).proportion_ci(method="exact")`` (checked in the tests).
    """
    level = check_level(level)
    k, m = np.broadcast_arrays(np.asarray(count, dtype=float), np.asarray(n, dtype=float))
    if np.any(m < 1) or np.any(k < 0) or np.any(k > m) or np.any(k != np.round(k)):
        raise VolbenchError("binomial counts must be whole numbers between 0 and the number of windows (>= 1)")
    a = (1.0 - float(level)) / 2.0
    low = np.where(k > 0, beta.ppf(a, np.maximum(k, 1.0), m - k + 1.0), 0.0)
    high = np.where(k < m, beta.isf(a, k + 1.0, np.maximum(m - k, 1.0)), 1.0)
    if k.ndim == 0:
        return float(low), float(high)
    return low, high


def h_bar_moves(history: PriceHistory, days: int) -> tuple[pd.Series, pd.Series]:
    """Log price moves over ``days`` bars: non-overlapping (anchored at the last close) and overlapping.

    Returns
    -------
    (non_overlapping, overlapping)
        Series of ln(C_end / C_start) indexed by the window's end date, oldest first.

    Raises
    ------
    VolbenchError
        Fewer than ``days + 1`` closes (no complete window).
    """
    d = _check_days(days)
    n = history.n
    if n < d + 1:
        raise VolbenchError(f"{history.name}: {n} closes hold no complete {d}-bar move; "
                            f"need at least {d + 1} closes, or a shorter option life")
    logc = np.log(history.close)
    dates = pd.DatetimeIndex(history.dates, name="date")
    ends = np.arange(n - 1, d - 1, -d)[::-1]
    non = pd.Series(logc[ends] - logc[ends - d], index=dates[ends], name=f"move_{d}")
    over = pd.Series(logc[d:] - logc[:-d], index=dates[d:], name=f"move_{d}")
    return non, over


def count_outside(sorted_non: np.ndarray, sorted_over: np.ndarray, lo, hi, s,
                  level: float = 0.95) -> dict[str, np.ndarray]:
    """Promised and observed shares of log moves below ``lo`` and above ``hi`` (any equal shapes).

    ``s`` is the standard deviation of the h-bar log move for each entry; moves equal to an edge
    count as inside. Counting is two binary searches per edge on the sorted moves.
    """
    m, mo = len(sorted_non), len(sorted_over)
    below = np.searchsorted(sorted_non, lo, side="left")
    above = m - np.searchsorted(sorted_non, hi, side="right")
    out = below + above
    p_below, p_above = ndtr(lo / s), ndtr(-hi / s)
    ci = binomial_ci(out, m, level)
    ci_b = binomial_ci(below, m, level)
    ci_a = binomial_ci(above, m, level)
    over_out = (np.searchsorted(sorted_over, lo, side="left")
                + mo - np.searchsorted(sorted_over, hi, side="right"))
    promised = p_below + p_above
    return {"below": below, "above": above, "promised": promised, "promised_below": p_below,
            "promised_above": p_above, "observed": out / m, "ci_low": ci[0], "ci_high": ci[1],
            "observed_below": below / m, "below_ci_low": ci_b[0], "below_ci_high": ci_b[1],
            "observed_above": above / m, "above_ci_low": ci_a[0], "above_ci_high": ci_a[1],
            "promise_in_ci": (ci[0] <= promised) & (promised <= ci[1]), "overlapping": over_out / mo}


def band_scores(below: np.ndarray, above: np.ndarray, windows: int, sigmas) -> np.ndarray:
    """G statistic of each candidate's band counts against the normal promise (smaller = kept better).

    Parameters
    ----------
    below, above
        Counts of non-overlapping moves below the lower and above the upper edge, shape
        (candidates, bands), bands in ascending ``sigmas``.
    windows
        Number of non-overlapping windows.
    sigmas
        Ascending band half-widths in standard deviations.

    Notes
    -----
    The bands cut the line into 2k + 1 zones (below -k_max sigma, ..., inside +-k_min sigma, ...,
    above +k_max sigma). With O the observed and E = windows x P(zone) the normal-promised counts,
    G = 2 sum O ln(O / E), the log-likelihood-ratio (G) statistic of a multinomial goodness of fit
    (Wilks 1938; equals ``scipy.stats.power_divergence(..., lambda_="log-likelihood")``); G / (2 n)
    is the Kullback-Leibler divergence of the observed zone shares from the promised ones. It
    weighs a tail excess by its surprise, not by its size in percentage points. Expected counts in
    the outer zones are far below 5 for short histories, so G is used to rank candidates on the
    same windows, not as a test with a chi-square p-value.
    """
    k = np.asarray(sigmas, dtype=float)
    b, a = np.atleast_2d(below).astype(float), np.atleast_2d(above).astype(float)
    zeros = np.zeros((b.shape[0], 1))
    # counts beyond each edge, outermost last, closed with 0 beyond infinity
    cum_b, cum_a = np.hstack([b, zeros]), np.hstack([a, zeros])
    obs = np.hstack([(cum_b[:, :-1] - cum_b[:, 1:])[:, ::-1],
                     (windows - b[:, :1] - a[:, :1]),
                     cum_a[:, :-1] - cum_a[:, 1:]])
    tail = np.append(ndtr(-k), 0.0)
    side = tail[:-1] - tail[1:]
    prob = np.concatenate([side[::-1], [1.0 - 2.0 * tail[0]], side])
    return 2.0 * np.sum(xlogy(obs, obs / (windows * prob)), axis=1)


def band_fan(spot: float, vol: float, days: int, annualization: float = DEFAULT_ANNUALIZATION,
             sigmas: Sequence[float] = DEFAULT_SIGMAS) -> pd.DataFrame:
    """Band prices at every bar from today (bar 0) to expiry (bar ``days``): the fan over a price chart.

    Returns
    -------
    DataFrame
        Index ``bar`` 0..days; columns ``low_<k>`` and ``high_<k>`` for each k in ``sigmas``
        (e.g. ``low_1``, ``high_1``), spot x exp(-+k vol sqrt(bar / annualization)).
    """
    s0 = check_positive(spot, "spot must be a positive price")
    v = check_pricing_vol(vol, "vol")
    d = _check_days(days)
    a = check_annualization(annualization)
    k = check_sigmas(sigmas)
    width = v * np.sqrt(np.arange(d + 1) / a)[:, None] * np.asarray(k)[None, :]
    cols = {}
    for j, kk in enumerate(k):
        cols[f"low_{kk:g}"] = s0 * np.exp(-width[:, j])
        cols[f"high_{kk:g}"] = s0 * np.exp(width[:, j])
    return pd.DataFrame(cols, index=pd.RangeIndex(d + 1, name="bar"))


@dataclass(frozen=True)
class MoveHistogram:
    """Histogram of h-bar log moves beside the normal density a vol promises for them.

    ``edges`` (bins + 1), ``density`` (per unit of log move, integrates to 1), ``x`` and
    ``normal_density`` (a smooth curve over the same range), ``windows`` moves behind it.
    """

    edges: np.ndarray
    density: np.ndarray
    x: np.ndarray
    normal_density: np.ndarray
    vol: float
    days: int
    windows: int

    def as_dict(self) -> dict:
        return {"edges": self.edges.tolist(), "density": self.density.tolist(), "x": self.x.tolist(),
                "normal_density": self.normal_density.tolist(), "vol": self.vol, "days": self.days,
                "windows": self.windows}


def move_histogram(moves, vol: float, days: int, annualization: float = DEFAULT_ANNUALIZATION,
                   bins: int = 30) -> MoveHistogram:
    """Histogram of log moves (``numpy.histogram``, density) and the N(0, vol^2 days / A) density.

    Raises
    ------
    VolbenchError
        No moves, non-finite moves, or bins < 1.
    """
    x = np.asarray(moves, dtype=float)
    if x.ndim != 1 or not len(x) or not np.all(np.isfinite(x)):
        raise VolbenchError("moves must be a non-empty list of finite log moves")
    if isinstance(bins, bool) or not isinstance(bins, (int, np.integer)) or bins < 1:
        raise VolbenchError(f"bins must be a whole number >= 1, got {bins!r}")
    v, d = check_pricing_vol(vol, "vol"), _check_days(days)
    s = v * math.sqrt(d / check_annualization(annualization))
    reach = max(float(np.abs(x).max()), 4.0 * s)
    density, edges = np.histogram(x, bins=int(bins), range=(-reach, reach), density=True)
    grid = np.linspace(-reach, reach, 201)
    return MoveHistogram(edges=edges, density=density, x=grid, normal_density=norm.pdf(grid, scale=s),
                         vol=v, days=d, windows=len(x))


def check_sigmas(sigmas) -> tuple[float, ...]:
    """Band half-widths in standard deviations: distinct numbers in (0, 10], returned ascending."""
    try:
        k = [float(x) for x in sigmas]
    except (TypeError, ValueError):
        raise VolbenchError(f"sigmas must be a list of positive numbers such as 1,2,3; got {sigmas!r}") from None
    if not k or any(not (math.isfinite(x) and 0 < x <= 10) for x in k) or len(set(k)) != len(k):
        raise VolbenchError(f"sigmas must be distinct numbers between 0 and 10 such as 1,2,3; got {sigmas!r}")
    return tuple(sorted(k))


def check_level(level) -> float:
    """A confidence level strictly between 0 and 1, as float."""
    try:
        x = float(level)
    except (TypeError, ValueError):
        x = math.nan
    if not 0.0 < x < 1.0:
        raise VolbenchError(f"confidence level must be between 0 and 1 (e.g. 0.95), got {level!r}")
    return x
