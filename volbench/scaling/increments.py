"""Properties of the increments themselves: normality, independence and drift."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
import pandas as pd
from scipy import stats

from volbench.scaling.variance import nonoverlapping_returns

NORMALITY_COLUMNS = ("h", "skew", "excess_kurtosis", "jarque_bera", "jarque_bera_p")


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
    dominated the whole check) and the tests check equality with scipy. Under Brownian motion
    S = K = 0 at every horizon; for i.i.d. fat-tailed returns K falls like 1/h.
    """
    hs = [int(h) for h in horizons]
    out = np.empty((len(hs), 3))
    with np.errstate(invalid="ignore", divide="ignore"):  # a constant block set gives NaN, not a warning
        for i, h in enumerate(hs):
            x = nonoverlapping_returns(y, h)
            d = x - x.mean()
            d2 = d * d
            m2, m3, m4 = d2.mean(), (d2 * d).mean(), (d2 * d2).mean()
            out[i] = (m3 / m2**1.5, m4 / (m2 * m2) - 3.0, x.shape[0])
    skew, kurt, count = out.T
    jb = count / 6.0 * (skew**2 + kurt**2 / 4.0)
    return pd.DataFrame({"h": hs, "skew": skew, "excess_kurtosis": kurt, "jarque_bera": jb,
                         "jarque_bera_p": stats.chi2.sf(jb, 2)})


def qq_pairs(returns: np.ndarray, points: int) -> pd.DataFrame:
    """Normal QQ-plot pairs of the standardized one-bar returns, at most ``points`` of them.

    Notes
    -----
    ``scipy.stats.probplot(z, fit=False)`` gives the normal order-statistic medians (Filliben's
    plotting positions) against the sorted standardized returns z = (r - mean) / sd. Evenly spaced
    ranks are kept, always including both extremes, where departures from normality show.
    """
    z = (returns - returns.mean()) / returns.std(ddof=1)
    theo, samp = stats.probplot(z, dist="norm", fit=False)
    m = theo.shape[0]
    keep = np.unique(np.round(np.linspace(0, m - 1, min(points, m))).astype(int))
    return pd.DataFrame({"theoretical": theo[keep], "sample": samp[keep]})


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
    (Ljung & Box 1978, Biometrika 65(2)), from the autocorrelations of
    ``statsmodels.tsa.stattools.acf(fft=True)``: the formula of
    ``statsmodels.stats.diagnostic.acorr_ljungbox``, which recomputes the autocorrelations by
    direct O(n^2) correlation on every call; the tests check equality with it. Squared demeaned
    returns reveal volatility clustering, which leaves returns uncorrelated but not independent
    (Engle 1982, Econometrica 50(4)).
    """
    from statsmodels.tsa.stattools import acf

    e = returns - returns.mean()
    sq = e * e
    n = returns.shape[0]
    lags = np.asarray([int(x) for x in lags], dtype=np.int64)
    top = max(int(acf_lags), int(lags.max()))
    rho_r = acf(e, nlags=top, fft=True)[1:]
    rho_s = acf(sq, nlags=top, fft=True)[1:]
    q_r, q_s = ljung_box_q(rho_r, n, lags), ljung_box_q(rho_s, n, lags)
    ljung = pd.DataFrame({
        "lag": lags,
        "q_returns": q_r, "p_returns": stats.chi2.sf(q_r, lags),
        "q_squared": q_s, "p_squared": stats.chi2.sf(q_s, lags),
    })
    band = float(stats.norm.ppf(1.0 - alpha / 2.0)) / np.sqrt(n)
    ac = pd.DataFrame({
        "lag": np.arange(1, acf_lags + 1),
        "acf_returns": rho_r[:acf_lags],
        "acf_squared": rho_s[:acf_lags],
        "band": band,
    })
    return ljung, ac


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
        ``t_stat``, ``p_value`` (two-sided, ``scipy.stats.ttest_1samp``), ``n``, and
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
    tt = stats.ttest_1samp(returns, 0.0)
    by_h = []
    for h in horizons:
        ratio = abs(mu) * np.sqrt(h) / sd
        by_h.append({"h": int(h), "drift_to_vol": float(ratio),
                     "vol_inflation": float(np.sqrt(1.0 + ratio * ratio) - 1.0)})
    return {
        "mean_per_bar": mu,
        "mean_annualized": mu * annualization,
        "vol_annualized": sd * float(np.sqrt(annualization)),
        "t_stat": float(tt.statistic),
        "p_value": float(tt.pvalue),
        "n": int(n),
        "by_horizon": by_h,
    }
