"""Variance-ratio tests: Lo-MacKinlay VR(q), z and z*, and the Chow-Denning joint test.

:func:`variance_ratio_table` computes the statistics for all horizons at once from shared
pieces (one pass for the robust lag terms); :func:`variance_ratio_table_arch` computes the same
table with ``arch.unitroot.VarianceRatio`` and is the reference the fast version is tested against
to 1e-10. The fast version exists because constructing one ``arch`` test object per horizon and per
variance type dominated the run time of the whole check (see tests/benchmarks/bench_scaling.py).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
import pandas as pd
from scipy import special

from volbench.scaling.increments import lagged_products
from volbench.scaling.variance import overlapping_variance

VR_COLUMNS = ("h", "variance", "variance_ratio", "z", "z_robust", "p_value", "p_value_robust")


def robust_deltas(y: np.ndarray, max_lag: int) -> np.ndarray:
    """delta_k, k = 1 .. max_lag: heteroskedasticity-robust variance of sqrt(n) x lag-k autocorrelation.

    Notes
    -----
    With e_t = r_t - mu the demeaned one-bar returns (n of them),

        delta_k = n sum_{t>k} e_t^2 e_{t-k}^2 / (sum_t e_t^2)^2,

    Lo & MacKinlay (1988), Review of Financial Studies 1(1), eq. (19) (as in ``arch``).
    The lagged sums for every lag come from one FFT
    (:func:`volbench.scaling.increments.lagged_products`), not one dot product per lag.
    """
    r = np.diff(y)
    n = r.shape[0]
    mu = (y[-1] - y[0]) / n
    z2 = (r - mu) ** 2.0
    return deltas_from_squares(z2, max_lag)


def deltas_from_squares(z2: np.ndarray, max_lag: int, lagged: np.ndarray | None = None) -> np.ndarray:
    """:func:`robust_deltas` from the squared demeaned returns ``z2`` (and, when already computed,
    their lagged sums ``lagged[k]`` = sum_t z2_t z2_{t-k}, k = 0 .. max_lag)."""
    n = z2.shape[0]
    if max_lag < 1:
        return np.empty(0)
    if lagged is None:
        lagged = lagged_products(z2[None, :], max_lag)[0]
    scale = np.sum(z2) ** 2.0
    return n * lagged[1:max_lag + 1] / scale


def variance_ratio_table(
    y: np.ndarray, horizons: Sequence[int], deltas: np.ndarray | None = None
) -> pd.DataFrame:
    """Variance ratio, z, z* and two-sided p-values for each horizon.

    Parameters
    ----------
    y
        Log prices, length n + 1.
    horizons
        Horizons in bars (each 1 <= h <= n - 1). For h = 1 the ratio is 1 by definition and the
        test statistics are undefined (NaN).
    deltas
        :func:`robust_deltas` up to at least max(horizons) - 1 when already computed.

    Returns
    -------
    pandas.DataFrame
        Columns :data:`VR_COLUMNS`; ``variance`` is the overlapping h-bar variance.

    Notes
    -----
    VR(q) = Var_q / (q Var_1) with the debiased overlapping variances of
    :func:`volbench.scaling.variance.overlapping_variance`;

        z  = sqrt(n) (VR - 1) / sqrt(2 (2q - 1)(q - 1) / (3q)),
        z* = sqrt(n) (VR - 1) / sqrt(theta),  theta = sum_{k=1}^{q-1} 4 (1 - k/q)^2 delta_k,

    Lo & MacKinlay (1988), eqs. (14) and (20), in the form of Campbell, Lo & MacKinlay (1997),
    eqs. 2.4.39 and 2.4.43, which is what ``arch.unitroot.VarianceRatio(y, q, trend="c",
    debiased=True, robust=...)`` computes. p-values are two-sided standard normal
    (``scipy.special.ndtr``, the function behind ``scipy.stats.norm.sf``).
    """
    hs = [int(h) for h in horizons]
    if deltas is None:
        deltas = robust_deltas(y, max(hs) - 1)
    vq, vr, z, zr, p, pr = ratio_arrays(y, hs, deltas)
    return pd.DataFrame({"h": hs, "variance": vq, "variance_ratio": vr, "z": z, "z_robust": zr,
                         "p_value": p, "p_value_robust": pr})


def ratio_arrays(y: np.ndarray, hs: Sequence[int], deltas: np.ndarray) -> tuple[np.ndarray, ...]:
    """(variance, variance_ratio, z, z_robust, p_value, p_value_robust) of
    :func:`variance_ratio_table` as arrays (p-values two-sided normal, ``scipy.special.ndtr``)."""
    n = y.shape[0] - 1
    var1 = overlapping_variance(y, 1)
    q = np.asarray(hs, dtype=float)
    vq = np.array([var1 if h == 1 else overlapping_variance(y, h) for h in hs])
    vr = vq / (q * var1)
    phi = 2.0 * (2 * q - 1) * (q - 1) / (3.0 * q)
    theta = np.array([np.sum(4.0 * (1.0 - np.arange(1, h) / h) ** 2.0 * deltas[: h - 1]) for h in hs])
    with np.errstate(invalid="ignore", divide="ignore"):  # h = 1: 0/0, set to NaN below
        z = np.sqrt(n) * (vr - 1.0) / np.sqrt(phi)
        zr = np.sqrt(n) * (vr - 1.0) / np.sqrt(theta)
    one = q == 1
    vr[one] = 1.0
    z[one] = zr[one] = np.nan
    p, pr = 2.0 * special.ndtr(-np.abs(np.vstack((z, zr))))
    return vq, vr, z, zr, p, pr


def variance_ratio_table_arch(y: np.ndarray, horizons: Sequence[int]) -> pd.DataFrame:
    """The same table as :func:`variance_ratio_table`, computed with ``arch.unitroot.VarianceRatio``.

    The reference implementation (two ``arch`` test objects per horizon, homoskedastic and robust).
    """
    from arch.unitroot import VarianceRatio

    rows = []
    var1 = overlapping_variance(y, 1)
    for q in (int(h) for h in horizons):
        if q == 1:
            rows.append((1, var1, 1.0, np.nan, np.nan, np.nan, np.nan))
            continue
        plain = VarianceRatio(y, lags=q, trend="c", debiased=True, robust=False)
        robust = VarianceRatio(y, lags=q, trend="c", debiased=True, robust=True)
        rows.append((q, q * var1 * plain.vr, plain.vr, plain.stat, robust.stat, plain.pvalue, robust.pvalue))
    return pd.DataFrame(rows, columns=list(VR_COLUMNS))


def chow_denning(z: Sequence[float]) -> tuple[float, float]:
    """Chow-Denning joint variance-ratio test over several horizons.

    Parameters
    ----------
    z
        Robust statistics z*(q_i) for the m horizons tested (h >= 2).

    Returns
    -------
    (statistic, p_value)
        statistic = max_i |z*(q_i)|; p_value from the studentized maximum modulus distribution
        with infinite degrees of freedom.

    Notes
    -----
    Chow & Denning (1993), J. of Econometrics 58: reject the joint null VR(q_i) = 1 for all i
    when max |z*(q_i)| exceeds the SMM(alpha; m, inf) critical value. With infinite degrees of
    freedom the SMM distribution function is that of the largest of m independent |N(0,1)|, so

        p = 1 - (2 Phi(max|z*|) - 1)^m,

    which the z*'s correlation across horizons makes conservative (Sidak's inequality). Computed
    as -expm1(m log1p(-2 (1 - Phi))) to keep precision for small p.
    """
    zz = np.abs(np.asarray(z, dtype=float))
    if zz.size == 0:
        return float("nan"), float("nan")
    stat = float(zz.max())
    p = -np.expm1(zz.size * np.log1p(-2.0 * special.ndtr(-stat)))
    return stat, float(min(max(p, 0.0), 1.0))
