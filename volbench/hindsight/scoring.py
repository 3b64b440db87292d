"""How well each vol forecast matched the vol that followed: losses and the Diebold-Mariano test.

Pure array functions: forecasts are a (periods x candidates) array of annualized vols, the
realized vol a (periods,) array. Nothing loops over periods.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import stats
from scipy.fft import dct

from volbench.errors import VolbenchError


def qlike(realized_var, forecast_var) -> np.ndarray:
    """QLIKE loss of a variance forecast, element-wise (0 for a perfect forecast, >= 0 always).

    Notes
    -----
    L = s2_real / s2_fcst - ln(s2_real / s2_fcst) - 1 (Patton 2011, J. of Econometrics 160, the
    normalised member of his robust family with b = -2). Ranking forecasts by its mean is the same
    with the true variance or with any conditionally unbiased noisy proxy of it, such as a sum of
    squared returns; squared error on vol does not have this property.
    """
    x = np.asarray(realized_var, dtype=float) / np.asarray(forecast_var, dtype=float)
    return x - np.log(x) - 1.0


def ewc_degrees_of_freedom(periods: int) -> int:
    """Cosine terms of the long-run variance: floor(0.4 T^(2/3)), at least 2 and below T.

    Lazarus, Lewis, Stock & Watson (2018), J. of Business & Economic Statistics 36(4), recommend
    nu = 0.4 T^(2/3) for the equal-weighted cosine estimator with Student-t(nu) critical values.
    """
    t = int(periods)
    return max(2, min(t - 1, math.floor(0.4 * t ** (2.0 / 3.0))))


def dm_degrees_of_freedom(periods: int, dependence: int) -> int:
    """Cosine terms for the Diebold-Mariano variance when losses depend on ``dependence`` periods.

    min(:func:`ewc_degrees_of_freedom`, T / dependence), at least 2: each cosine term then spans
    at least one stretch of ``dependence`` periods, the reach of a loss difference built from
    rolling windows of W bars and realized periods of N bars (dependence = (W + N) / K). In a
    seeded simulation of equally good 60-bar forecasts over 21-bar periods every bar this kept the
    test at 4 % rejections at the 5 % level, where 0.4 T^(2/3) terms gave 7 % (tests/hindsight).
    """
    t = int(periods)
    return max(2, min(ewc_degrees_of_freedom(t), t // max(1, int(dependence))))


def ewc_long_run_variance(x: np.ndarray, nu: int | None = None) -> np.ndarray:
    """Long-run variance of each column of ``x`` by the equal-weighted cosine (EWC) estimator.

    Parameters
    ----------
    x
        (T,) or (T, k) array, one series per column.
    nu
        Number of cosine terms (degrees of freedom); :func:`ewc_degrees_of_freedom` when ``None``.

    Returns
    -------
    ndarray
        (k,) long-run variances (a float array of length 1 for a 1-D input).

    Notes
    -----
    Omega = (1/nu) sum_{j=1..nu} L_j^2, L_j = sqrt(2/T) sum_t cos(pi j (t - 1/2) / T) (x_t - xbar)
    (Mueller 2007, J. of Econometrics 141; Lazarus, Lewis, Stock & Watson 2018), computed with
    ``scipy.fft.dct`` (type II) in O(T log T) time and O(T) memory. It is a HAC
    estimator that stays consistent in ratio under any short-range serial correlation, here from
    overlapping realized periods and persistent rolling forecasts, and t-statistics built on it
    are Student-t with nu degrees of freedom (fixed-b asymptotics).
    """
    a = np.asarray(x, dtype=float)
    if a.ndim == 1:
        a = a[:, None]
    t = a.shape[0]
    if t < 3:
        raise VolbenchError(f"a long-run variance needs at least 3 periods, got {t}")
    nu = ewc_degrees_of_freedom(t) if nu is None else int(nu)
    if not 1 <= nu < t:
        raise VolbenchError(f"cosine terms must be between 1 and {t - 1}, got {nu}")
    c = a - a.mean(axis=0)
    # DCT-II: y_j = 2 sum_t x_t cos(pi j (t + 1/2) / T) for t = 0..T-1, so L_j = y_j / sqrt(2 T)
    y = dct(c, type=2, axis=0)[1:nu + 1]
    return (y * y).mean(axis=0) / (2.0 * t)


def diebold_mariano(loss_a: np.ndarray, loss_b: np.ndarray, nu: int | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Diebold-Mariano statistic and two-sided p-value for equal expected loss, column by column.

    Parameters
    ----------
    loss_a
        (T, k) or (T,) losses of the candidates.
    loss_b
        (T,) or (T, k) losses of the benchmark (broadcast against ``loss_a``).
    nu
        Cosine terms of the long-run variance (default :func:`ewc_degrees_of_freedom`).

    Returns
    -------
    stat, p_value
        (k,) arrays. A positive statistic means ``loss_a`` is larger (worse). A column whose loss
        difference is identically zero gets statistic 0 and p-value 1.

    Notes
    -----
    d_t = L_a,t - L_b,t; DM = dbar / sqrt(Omega / T), Omega the long-run variance of d
    (Diebold & Mariano 1995, J. of Business & Economic Statistics 13). Overlapping N-bar periods
    and rolling forecasts make d serially correlated well beyond N bars, so Omega is the
    equal-weighted cosine estimator (:func:`ewc_long_run_variance`, nu terms, see
    :func:`dm_degrees_of_freedom`) and the p-value is from Student-t(nu). In a seeded simulation
    of equally good forecasts this rejected 3-5 % of the time at the 5 % level, where a Newey-West
    variance with N - 1 lags and normal p-values rejected 11-14 % (tests/hindsight).
    """
    la = np.asarray(loss_a, dtype=float)
    lb = np.asarray(loss_b, dtype=float)
    d = la - (lb[:, None] if lb.ndim == 1 and la.ndim == 2 else lb)
    if d.ndim == 1:
        d = d[:, None]
    t = d.shape[0]
    nu = ewc_degrees_of_freedom(t) if nu is None else int(nu)
    omega = ewc_long_run_variance(d, nu)
    mean = d.mean(axis=0)
    zero = ~(omega > 0)
    stat = np.where(zero, 0.0, mean / np.sqrt(np.where(zero, 1.0, omega) / t))
    p = np.where(zero, 1.0, 2.0 * stats.t.sf(np.abs(stat), nu))
    return stat, p


def prediction_factors(days: int, dof, confidence: float = 0.95) -> tuple[np.ndarray, np.ndarray]:
    """Multipliers of a vol forecast giving the interval the vol realized over ``days`` bars should fall in.

    Parameters
    ----------
    days
        Bars in the realized period (N).
    dof
        Effective observations behind each forecast (array); ``inf`` for a forecast taken as known.
    confidence
        Level of the interval.

    Notes
    -----
    With constant vol and normal returns, N s2_real / s2 ~ chi-square(N) (zero-mean realized
    variance) and dof s2_fcst / s2 ~ chi-square(dof) independently, so s2_real / s2_fcst ~
    F(N, dof); the interval is s_fcst sqrt(F quantiles). With dof = inf it reduces to
    chi-square(N) / N. Common practice (a prediction interval, not a confidence interval for the
    past vol); the effective observations are those of each estimator's confidence interval.
    """
    alpha = 1.0 - confidence
    d = np.asarray(dof, dtype=float)
    finite = np.isfinite(d)
    q = np.array([alpha / 2, 1 - alpha / 2])[:, None]
    out = stats.f.ppf(q, days, np.where(finite, d, 1.0))
    if not finite.all():
        out[:, ~finite] = stats.chi2.ppf(q, days) / days
    return np.sqrt(out[0]), np.sqrt(out[1])
