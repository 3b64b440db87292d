"""Variance of h-bar log returns and the log-log fit of variance on horizon.

All functions take the log-price level series ``y`` (length n + 1 for n returns) and work on
whole arrays; the only Python loops are over horizons or lags, never over bars.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy import special


def overlapping_variance(y: np.ndarray, h: int) -> float:
    """Unbiased variance of overlapping h-bar log returns (Lo-MacKinlay correction).

    Parameters
    ----------
    y
        Log prices, length n + 1 (n one-bar returns).
    h
        Horizon in bars, 1 <= h <= n - 1.

    Returns
    -------
    float
        Estimate of Var(y_{t+h} - y_t), i.e. of ``h`` times the per-bar variance under Brownian motion.

    Notes
    -----
    With mu = (y_n - y_0) / n the mean one-bar return,

        Var_h = sum_{t=h}^{n} (y_t - y_{t-h} - h mu)^2 / m_h,   m_h = (n - h + 1)(1 - h / n),

    which is h times the debiased per-bar variance sigma_c^2(q) of Lo & MacKinlay (1988), Review of
    Financial Studies 1(1), eq. (12) -- the same definition as ``arch.unitroot.VarianceRatio``
    with ``debiased=True``. For h = 1 it is the ordinary sample variance (divisor n - 1).
    """
    n = y.shape[0] - 1
    mu = (y[-1] - y[0]) / n
    d = y[h:] - y[:-h] - h * mu
    m = (n - h + 1) * (1.0 - h / n)
    return float(np.sum(d * d) / m)


def nonoverlapping_returns(y: np.ndarray, h: int) -> np.ndarray:
    """Non-overlapping h-bar log returns, blocks anchored at the last bar (most recent first kept).

    Returns ``n // h`` values in chronological order; the first ``n % h`` returns are not used.
    """
    idx = np.arange(y.shape[0] - 1, -1, -h)[::-1]
    return np.diff(y[idx])


def nonoverlapping_variance(y: np.ndarray, h: int) -> tuple[float, int]:
    """Sample variance (divisor count - 1) of the non-overlapping h-bar returns, and their count."""
    x = nonoverlapping_returns(y, h)
    return float(np.var(x, ddof=1)), int(x.shape[0])


@dataclass(frozen=True)
class LogLogFit:
    """Weighted fit of ln Var_h = a + b ln h.

    Attributes
    ----------
    slope, intercept
        b and a; b = 1 under Brownian motion.
    se
        Standard error of b allowing for the overlap between horizons (see :func:`loglog_fit`).
    ci
        Two-sided confidence interval for b at ``level``.
    level
        Confidence level of ``ci``.
    """

    slope: float
    intercept: float
    se: float
    ci: tuple[float, float]
    level: float

    @property
    def hurst(self) -> float:
        """Hurst exponent H = b / 2 (0.5 under Brownian motion)."""
        return self.slope / 2.0


def loglog_fit(
    horizons: Sequence[int],
    variances: Sequence[float],
    n: int,
    deltas: np.ndarray,
    level: float = 0.95,
) -> LogLogFit:
    """Weighted least-squares fit of log variance on log horizon, with an overlap-aware interval.

    Parameters
    ----------
    horizons, variances
        Horizons h_i (bars, including 1) and their overlapping h-bar variances.
    n
        Number of one-bar returns.
    deltas
        Heteroskedasticity-robust variances delta_k of sqrt(n) times the lag-k autocorrelation,
        k = 1 .. max(h) - 1 (:func:`volbench.scaling.ratio.robust_deltas`).
    level
        Confidence level of the interval.

    Returns
    -------
    LogLogFit

    Notes
    -----
    Weights w_i = n / h_i, the number of independent h-bar periods behind each point. The fitted
    points share the same data, so the ordinary WLS standard error would be wrong. Instead the
    interval uses the asymptotic expansion of Lo & MacKinlay (1988):

        ln Var_h ~= ln h + ln s_1^2 + 2 sum_{k=1}^{h-1} (1 - k/h) rho_k,

    with sqrt(n) rho_k asymptotically independent N(0, delta_k). The common term ln s_1^2 moves
    only the intercept, so with c_i = w_i (x_i - xbar_w) / sum_j w_j (x_j - xbar_w)^2 (x = ln h)

        Var(b) = c' K c,   K_ij = (4/n) sum_{k < min(h_i, h_j)} (1 - k/h_i)(1 - k/h_j) delta_k.

    The diagonal of K is the robust variance of VR(h) - 1 in Lo & MacKinlay's z*; the interval is
    normal, b +/- z_{(1+level)/2} sqrt(Var(b)) (z from ``scipy.special.ndtri``).
    """
    h = np.asarray(horizons, dtype=float)
    x = np.log(h)
    yv = np.log(np.asarray(variances, dtype=float))
    w = n / h
    xbar = np.sum(w * x) / np.sum(w)
    sxx = np.sum(w * (x - xbar) ** 2)
    c = w * (x - xbar) / sxx
    slope = float(np.sum(c * yv))
    intercept = float(np.sum(w * yv) / np.sum(w) - slope * xbar)
    kmax = int(h.max()) - 1
    k = np.arange(1, kmax + 1, dtype=float)
    a = np.clip(1.0 - k[None, :] / h[:, None], 0.0, None)  # (1 - k/h_i) for k < h_i, else 0
    cov = (4.0 / n) * (a * np.asarray(deltas[:kmax], dtype=float)[None, :]) @ a.T
    se = float(np.sqrt(max(c @ cov @ c, 0.0)))
    zq = float(special.ndtri(0.5 + level / 2.0))
    return LogLogFit(slope, intercept, se, (slope - zq * se, slope + zq * se), level)
