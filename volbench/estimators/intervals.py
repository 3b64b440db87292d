"""Confidence intervals of the estimators: effective degrees of freedom and the chi-square interval.

Every estimator's per-bar variance estimate V is treated as sigma^2 chi-square(nu) / nu with the
degrees of freedom nu chosen so that the variance matches, nu = 2 sigma^4 / Var(V) (Satterthwaite
1946, Biometrics Bulletin 2(6)). For close-to-close this is exact under i.i.d. normal returns
(nu = n - 1); for the others it is an approximation whose coverage is measured by simulation
(docs/METHODS.md, "Confidence intervals and their coverage"; ``python -m volbench.estimators.calibrate``).
"""

from __future__ import annotations

import math

import numpy as np
from scipy import special
from scipy.special import zeta

from volbench.estimators import calibration as cal
from volbench.types import EWMA_LAMBDA

PARKINSON_BAR_VARIANCE = 9.0 * float(zeta(3.0)) / (16.0 * math.log(2.0) ** 2) - 1.0
"""Var((ln H/L)^2 / (4 ln 2)) / sigma^4 for one bar of Brownian motion, from E[(ln H/L)^2] =
4 ln 2 sigma^2 and E[(ln H/L)^4] = 9 zeta(3) sigma^4 (Parkinson 1980, J. of Business 53(1))."""

BAR_EFFICIENCY = {
    "close_to_close": 1.0,
    "parkinson": 2.0 / PARKINSON_BAR_VARIANCE,
    "garman_klass": 2.0 / cal.GARMAN_KLASS_BAR_VARIANCE,
    "rogers_satchell": 2.0 / cal.ROGERS_SATCHELL_BAR_VARIANCE,
}
"""Per-bar efficiency against the zero-mean squared return (variance 2 sigma^4): Parkinson 4.91 exact;
Garman-Klass and Rogers-Satchell from the calibrated per-bar variances (about 7.4 and 6.0)."""


def yang_zhang_k(n: int) -> float:
    """Yang & Zhang (2000) weight k = 0.34 / (1.34 + (n + 1) / (n - 1))."""
    return 0.34 / (1.34 + (n + 1) / (n - 1))


def yang_zhang_dof(n: int, overnight_share=0.0):
    """Effective degrees of freedom of the Yang-Zhang variance over ``n`` bars.

    Notes
    -----
    Under driftless Brownian motion with per-bar variance s2, a share f of it overnight:
    V_o and V_c are sample variances (divisor n - 1) of independent normals, Var = 2 (f s2)^2 / (n - 1)
    and 2 ((1 - f) s2)^2 / (n - 1); V_rs is a mean of n i.i.d. Rogers-Satchell terms with
    Var(rs) = a (1 - f)^2 s2^2; the overnight terms are independent of the session, and
    Cov(V_c, V_rs) = b (1 - f)^2 s2^2 / n with b = Cov(c^2, rs) / s_day^4 (cross terms c_i c_j, i != j,
    have zero covariance with rs by the path's reflection symmetry). Hence

        Var(V_YZ) / s2^2 = 2 f^2 / (n - 1) + (1 - f)^2 [2 k^2 / (n - 1) + (1 - k)^2 a / n + 2 k (1 - k) b / n]

    and nu = 2 / that (our derivation; a and b measured by the seeded simulation in
    :mod:`volbench.estimators.calibrate`). The efficiency nu / n is therefore not a constant: with
    f = 0 it is about 6.5 at n = 2 and 7 from n = 10 on, and it falls as the overnight share grows.
    The caller estimates f from the window itself (V_o / V_YZ).
    """
    f = np.clip(np.asarray(overnight_share, dtype=float), 0.0, 1.0)
    k = yang_zhang_k(n)
    a, b = cal.ROGERS_SATCHELL_BAR_VARIANCE, cal.SESSION_SQUARE_RS_COVARIANCE
    var = 2 * f**2 / (n - 1) + (1 - f) ** 2 * (2 * k**2 / (n - 1) + (1 - k) ** 2 * a / n + 2 * k * (1 - k) * b / n)
    out = 2.0 / var
    return float(out) if out.ndim == 0 else out


def ewma_dof(lam: float) -> float:
    """(1 + lambda) / (1 - lambda): 2 sigma^4 / Var of an EWMA of squared i.i.d. normal returns,
    whose weights (1 - lambda) lambda^j have sum of squares (1 - lambda) / (1 + lambda) (common practice)."""
    return (1.0 + lam) / (1.0 - lam)


def close_to_close_dof(history, window: int, variance, options) -> float:
    """n - 1 returns (n about zero with ``zero_mean``): exact under i.i.d. normal returns."""
    return float(window if options.get("zero_mean") else window - 1)


def ewma_interval_dof(history, window: int, variance, options) -> float:
    """(1 + lambda) / (1 - lambda) for the EWMA's lambda, whatever the seed window."""
    return ewma_dof(options.get("lam") or EWMA_LAMBDA)


def efficiency_dof(history, window: int, variance, options, key: str) -> float:
    """window x the estimator's per-bar efficiency (:data:`BAR_EFFICIENCY`)."""
    return window * BAR_EFFICIENCY[key]


def efficiency_text(dof: float, n: int) -> str:
    return f"approximate: chi-square with effective n {dof:.0f} = {n} bars x {dof / n:.3g}"


EXACT_TEXT = "chi-square (exact under i.i.d. normal returns)"


def chi2_quantile(p, dof):
    """Chi-square(dof) quantile at probability p: 2 x the inverse regularized lower incomplete gamma
    function at dof / 2 (``scipy.special.gammaincinv``; what ``scipy.stats.chi2.ppf`` computes, without
    its argument handling, for 0 < p < 1 and dof > 0)."""
    return 2.0 * special.gammaincinv(np.asarray(dof, dtype=float) / 2.0, p)


def chi2_interval(vol, dof, confidence: float = 0.95):
    """[vol sqrt(nu / q_hi), vol sqrt(nu / q_lo)] with q the chi-square(nu) quantiles (vectorised)."""
    alpha = 1.0 - confidence
    q_lo = chi2_quantile(alpha / 2, dof)
    q_hi = chi2_quantile(1 - alpha / 2, dof)
    vol = np.asarray(vol, dtype=float)
    lo, hi = vol * np.sqrt(dof / q_hi), vol * np.sqrt(dof / q_lo)
    if np.ndim(lo) == 0:
        return float(lo), float(hi)
    return lo, hi


def discretisation_note(key: str) -> str:
    """What discrete trading does to a range estimator (empty for close-based estimators).

    Notes
    -----
    A bar's recorded high and low are the extremes of its trades, not of the continuous path, so
    the range reads low. For a random walk of M steps the expected maximum falls short of the
    continuous one by about 0.5826 sigma sqrt(1/M) (Broadie, Glasserman & Kou 1997, Mathematical
    Finance 7(4); from memory); the relative vol bias of each estimator, about -c / sqrt(M), is
    measured by :mod:`volbench.estimators.calibrate` (constants in ``calibration.DISCRETE_BIAS``).
    """
    c = cal.DISCRETE_BIAS.get(key)
    if c is None:
        return ""
    at500 = c / math.sqrt(500)
    return (f"reads low on discretely traded prices: about -{c:.2g}/sqrt(M) in vol with M trades a bar "
            f"(-{at500:.1%} at 500 trades), not included in the interval")
