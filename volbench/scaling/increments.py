"""Properties of the increments themselves: normality, independence and drift."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
import pandas as pd
from scipy import fft, special

from volbench.frames import frame, labels
from volbench.scaling.variance import nonoverlapping_returns

NORMALITY_COLUMNS = ("h", "skew", "excess_kurtosis", "jarque_bera", "jarque_bera_p")
LJUNG_BOX_LABELS = labels(("lag", "q_returns", "p_returns", "q_squared", "p_squared"))
ACF_LABELS = labels(("lag", "acf_returns", "acf_squared", "band"))


def normality_table(y: np.ndarray, horizons: Sequence[int]) -> pd.DataFrame:
    """Skewness, excess kurtosis and Jarque-Bera test of the h-bar returns at each horizon.

    Parameters
    ----------
    y
        Log prices, length n + 1.
    horizons
        Horizons in bars; each needs at least a handful of non-overlapping h-bar returns.

    Returns
    -------
    pandas.DataFrame
        Columns :data:`NORMALITY_COLUMNS`.

    Notes
    -----
    Computed on the N = ``n // h`` non-overlapping h-bar returns (blocks ending at the last bar)
    so that the Jarque-Bera p-value, which assumes independent observations, is valid; overlapping
    returns would overstate the evidence. With biased central moments m_k,
    S = m_3 / m_2^{3/2}, K = m_4 / m_2^2 - 3, JB = N/6 (S^2 + K^2/4), p-value from chi-square(2)
    (Jarque & Bera 1987, International Statistical Review 55(2)). These are the definitions of
    ``scipy.stats.skew``, ``scipy.stats.kurtosis(fisher=True)`` and ``scipy.stats.jarque_bera``;
    the moments are computed here in one pass per horizon (the scipy calls' fixed overhead
    dominated the whole check), the p-value by ``scipy.special.chdtrc``, and the tests check
    equality with scipy. Under Brownian motion
    S = K = 0 at every horizon; for i.i.d. fat-tailed returns K falls like 1/h.
    """
    hs = [int(h) for h in horizons]
    skew, kurt, jb, p = normality_arrays([nonoverlapping_returns(y, h) for h in hs])
    return pd.DataFrame({"h": hs, "skew": skew, "excess_kurtosis": kurt, "jarque_bera": jb, "jarque_bera_p": p})


def normality_arrays(blocks: Sequence[np.ndarray]) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(skew, excess kurtosis, Jarque-Bera, its p-value) of each array of returns, as in
    :func:`normality_table` (the p-value is the chi-square(2) survival function, ``scipy.special.chdtrc``)."""
    out = np.empty((len(blocks), 3))
    add = np.add.reduce
    with np.errstate(invalid="ignore", divide="ignore"):  # a constant block set gives NaN, not a warning
        for i, x in enumerate(blocks):
            m = x.shape[0]
            d = x - add(x) / m
            d2 = d * d
            m2, m3, m4 = add(d2) / m, add(d2 * d) / m, add(d2 * d2) / m  # numpy's mean, less overhead
            out[i] = (m3 / m2**1.5, m4 / (m2 * m2) - 3.0, m)
    skew, kurt, count = out.T
    jb = count / 6.0 * (skew**2 + kurt**2 / 4.0)
    return skew, kurt, jb, special.chdtrc(2, jb)


def qq_pairs(returns: np.ndarray, points: int) -> pd.DataFrame:
    """Normal QQ-plot pairs of the standardized one-bar returns, at most ``points`` of them.

    Notes
    -----
    ``scipy.stats.probplot(z, fit=False)`` gives the normal order-statistic medians (Filliben's
    plotting positions) against the sorted standardized returns z = (r - mean) / sd. Evenly spaced
    ranks are kept, always including both extremes, where departures from normality show. The
    pairs are computed here for the kept ranks only, by probplot's formulas: uniform medians
    0.5^(1/m) at the top, one minus that at the bottom, (i - 0.3175) / (m + 0.365) between
    (Filliben 1975, Technometrics 17(1)), mapped by the normal quantile ``scipy.special.ndtri``
    (what ``scipy.stats.norm.ppf`` calls); the tests check equality with probplot.
    """
    theo, samp = qq_arrays(returns, points)
    return pd.DataFrame({"theoretical": theo, "sample": samp})


def qq_arrays(returns: np.ndarray, points: int) -> tuple[np.ndarray, np.ndarray]:
    """(theoretical, sample) of :func:`qq_pairs` as arrays."""
    z = (returns - returns.mean()) / returns.std(ddof=1)
    m = z.shape[0]
    ranks = np.round(np.linspace(0, m - 1, min(points, m))).astype(int)  # nondecreasing
    keep = ranks[np.concatenate(([True], ranks[1:] != ranks[:-1]))]  # numpy.unique of a sorted array
    top = 0.5 ** (1.0 / m)
    u = np.where(keep == m - 1, top, np.where(keep == 0, 1 - top, (keep + 1 - 0.3175) / (m + 0.365)))
    return special.ndtri(u), np.partition(z, keep)[keep]  # the sorted values at the kept ranks only


def independence(
    returns: np.ndarray, lags: Sequence[int], acf_lags: int, alpha: float
) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Ljung-Box tests and autocorrelations of returns and squared returns.

    Returns
    -------
    ljung_box
        Columns lag, q_returns, p_returns, q_squared, p_squared.
    acf
        Columns lag (1 .. acf_lags), acf_returns, acf_squared, band; ``band`` is the
        z_{1-alpha/2} / sqrt(n) half-width (1.96 / sqrt(n) at alpha = 5 %) inside which
        autocorrelations of an i.i.d. series fall with probability 1 - alpha.

    Notes
    -----
    Q(L) = n (n + 2) sum_{k=1}^{L} rho_k^2 / (n - k), chi-square(L) under independence
    (Ljung & Box 1978, Biometrika 65(2)), with the autocorrelations of returns and squared
    returns from one FFT (:func:`autocorrelations`, equal to ``statsmodels.tsa.stattools.acf``):
    the formula of ``statsmodels.stats.diagnostic.acorr_ljungbox``, which recomputes the
    autocorrelations by direct O(n^2) correlation on every call; the tests check equality with
    it. p-values are chi-square survival functions (``scipy.special.chdtrc``). Squared demeaned
    returns reveal volatility clustering, which leaves returns uncorrelated but not independent
    (Engle 1982, Econometrica 50(4)).
    """
    ljung, ac = independence_arrays(returns, lags, acf_lags, alpha)
    return frame(ljung, LJUNG_BOX_LABELS), frame(ac, ACF_LABELS)


def independence_arrays(returns: np.ndarray, lags: Sequence[int], acf_lags: int, alpha: float,
                        rho: tuple[np.ndarray, np.ndarray] | None = None) -> tuple[dict, dict]:
    """The two tables of :func:`independence` as dicts of column arrays.

    ``rho``: the autocorrelations of the demeaned returns and of their squares, lags 1 .. at
    least max(acf_lags, lags), when the caller already has them (see
    :func:`independence_rows`); computed here otherwise.
    """
    n = returns.shape[0]
    lags = np.asarray([int(x) for x in lags], dtype=np.int64)
    top = max(int(acf_lags), int(lags.max()))
    if rho is None:
        rho_r, rho_s = autocorrelations(independence_rows(returns), top)
    else:
        rho_r, rho_s = rho
    q_r, q_s = ljung_box_q(rho_r[:top], n, lags), ljung_box_q(rho_s[:top], n, lags)
    ljung = {"lag": lags, "q_returns": q_r, "p_returns": special.chdtrc(lags, q_r),
             "q_squared": q_s, "p_squared": special.chdtrc(lags, q_s)}
    band = float(special.ndtri(1.0 - alpha / 2.0)) / np.sqrt(n)
    ac = {"lag": np.arange(1, acf_lags + 1), "acf_returns": rho_r[:acf_lags], "acf_squared": rho_s[:acf_lags],
          "band": np.full(acf_lags, band)}
    return ljung, ac


def independence_rows(returns: np.ndarray) -> np.ndarray:
    """The two series whose autocorrelations :func:`independence` tests: demeaned returns and
    their squares, as the rows of one array."""
    e = returns - returns.mean()
    return np.stack((e, e * e))


def lagged_products(rows: np.ndarray, max_lag: int) -> np.ndarray:
    """sum_t x_t x_{t-k} for k = 0 .. ``max_lag`` of each row of ``rows`` (2-D, one series a row).

    Notes
    -----
    One real FFT of all rows, zero-padded to at least n + max_lag points so that the circular
    correlation equals the linear one at every lag up to ``max_lag`` (Wiener-Khinchin; the way
    ``statsmodels.tsa.stattools.acovf(fft=True)`` computes it, with a shorter padding). O(n log n)
    for all lags at once, against O(n) per lag for dot products.
    """
    n = rows.shape[-1]
    size = fft.next_fast_len(n + max_lag, real=True)
    spec = fft.rfft(rows, n=size, axis=-1)
    power = spec.real * spec.real
    power += spec.imag * spec.imag
    return fft.irfft(power, n=size, axis=-1)[..., :max_lag + 1]


def autocorrelations(rows: np.ndarray, nlags: int) -> np.ndarray:
    """Autocorrelations rho_1 .. rho_nlags of each row, each row demeaned first.

    Notes
    -----
    rho_k = sum_t (x_t - xbar)(x_{t-k} - xbar) / sum_t (x_t - xbar)^2, the definition of
    ``statsmodels.tsa.stattools.acf`` (adjusted=False), from one FFT of all rows
    (:func:`lagged_products`); the tests check it against statsmodels to 1e-10.
    """
    d = rows - rows.mean(axis=-1, keepdims=True)
    acov = lagged_products(d, nlags)
    return acov[..., 1:] / acov[..., :1]


def ljung_box_q(rho: np.ndarray, n: int, lags: np.ndarray) -> np.ndarray:
    """Ljung-Box Q at each lag in ``lags`` from autocorrelations rho_1, rho_2, ... of n observations."""
    k = np.arange(1, rho.shape[0] + 1)
    return n * (n + 2) * np.cumsum(rho * rho / (n - k))[lags - 1]


def drift(returns: np.ndarray, horizons: Sequence[int], annualization: float) -> dict:
    """Mean return, its t-test, and how large the drift is against the vol at each horizon.

    Returns
    -------
    dict
        ``mean_per_bar``, ``mean_annualized`` (mean x A), ``vol_annualized`` (sd x sqrt(A)),
        ``t_stat`` = mean / (sd / sqrt(n)), ``p_value`` two-sided from Student's t with n - 1
        degrees of freedom (``scipy.special.stdtr``; what ``scipy.stats.ttest_1samp`` gives), ``n``, and
        ``by_horizon``: list of {h, drift_to_vol, vol_inflation} records.

    Notes
    -----
    Over h bars Brownian motion moves by mu h on average with standard deviation sigma sqrt(h),
    so drift_to_vol = |mu| sqrt(h) / sigma. A vol measured around a zero mean (as many desks do)
    sees a second moment sigma^2 h + mu^2 h^2, i.e. is inflated by
    vol_inflation = sqrt(1 + drift_to_vol^2) - 1. Black-Scholes prices with the risk-free rate,
    so the historical drift matters for pricing only through the vol estimate.
    """
    n = returns.shape[0]
    mu = float(returns.mean())
    sd = float(returns.std(ddof=1))
    with np.errstate(divide="ignore", invalid="ignore"):  # constant returns: t is NaN, as scipy says
        t_stat = float(np.divide(mu, sd / np.sqrt(n)))
    p_value = float(2.0 * special.stdtr(n - 1, -abs(t_stat)))
    by_h = []
    for h in horizons:
        ratio = abs(mu) * np.sqrt(h) / sd
        by_h.append({"h": int(h), "drift_to_vol": float(ratio),
                     "vol_inflation": float(np.sqrt(1.0 + ratio * ratio) - 1.0)})
    return {
        "mean_per_bar": mu,
        "mean_annualized": mu * annualization,
        "vol_annualized": sd * float(np.sqrt(annualization)),
        "t_stat": t_stat,
        "p_value": p_value,
        "n": int(n),
        "by_horizon": by_h,
    }
