"""Range-based estimators using open, high, low and close."""

from __future__ import annotations

from functools import partial

import numpy as np

from volbench.data.history import PriceHistory
from volbench.estimators import intervals
from volbench.estimators.base import EstimatorSpec, ohlc_logs, rolling_mean, rolling_var

LN2 = np.log(2.0)


def parkinson_variance(h: PriceHistory, window: int) -> np.ndarray:
    """Parkinson (1980), J. of Business 53(1): (1 / (4 ln 2)) * mean((ln(H/L))^2) over the window."""
    hl = np.log(h.high) - np.log(h.low)
    return rolling_mean(hl * hl, window) / (4.0 * LN2)


def garman_klass_variance(h: PriceHistory, window: int) -> np.ndarray:
    """Garman & Klass (1980), J. of Business 53(1): mean(0.5 (u - d)^2 - (2 ln 2 - 1) c^2)."""
    u, d, c = ohlc_logs(h)
    return rolling_mean(0.5 * (u - d) ** 2 - (2.0 * LN2 - 1.0) * c * c, window)


def _rs_terms(h: PriceHistory) -> np.ndarray:
    u, d, c = ohlc_logs(h)
    return u * (u - c) + d * (d - c)


def rogers_satchell_variance(h: PriceHistory, window: int) -> np.ndarray:
    """Rogers & Satchell (1991), Annals of Applied Probability 1(4): mean(u (u - c) + d (d - c))."""
    return rolling_mean(_rs_terms(h), window)


def yang_zhang_k(window: int) -> float:
    """Yang & Zhang (2000) weight k = 0.34 / (1.34 + (n + 1) / (n - 1))."""
    return 0.34 / (1.34 + (window + 1) / (window - 1))


def yang_zhang_parts(h: PriceHistory, window: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """V_o, V_c and V_rs of the Yang-Zhang estimator at every bar (NaN where the window does not fit)."""
    nan = np.full(h.n, np.nan)
    if h.n < window + 1:
        return nan, nan.copy(), nan.copy()
    o = np.log(h.open[1:]) - np.log(h.close[:-1])
    c = np.log(h.close[1:]) - np.log(h.open[1:])
    parts = (rolling_var(o, window), rolling_var(c, window), rolling_mean(_rs_terms(h)[1:], window))
    return tuple(np.concatenate(([np.nan], p)) for p in parts)


def yang_zhang_variance(h: PriceHistory, window: int) -> np.ndarray:
    """Yang & Zhang (2000), J. of Business 73(3): V_o + k V_c + (1 - k) V_rs.

    V_o and V_c are sample variances (divisor n - 1) of the overnight return o_t = ln(O_t / C_{t-1})
    and the open-to-close return c_t = ln(C_t / O_t) over the window; V_rs is the Rogers-Satchell
    mean over the same n bars. The first bar has no previous close, so a window of n needs n + 1 rows.
    """
    v_o, v_c, v_rs = yang_zhang_parts(h, window)
    k = yang_zhang_k(window)
    return v_o + k * v_c + (1.0 - k) * v_rs


def yang_zhang_interval_dof(h: PriceHistory, window: int, variance: np.ndarray, options) -> np.ndarray:
    """Degrees of freedom at every bar, the overnight share read from each window (V_o / V_YZ)."""
    v_o = yang_zhang_parts(h, window)[0]
    with np.errstate(invalid="ignore", divide="ignore"):
        share = np.where(variance > 0, v_o / variance, 0.0)
    return intervals.yang_zhang_dof(window, np.nan_to_num(share))


def _yang_zhang_text(dof: float, n: int) -> str:
    return (f"approximate: chi-square with effective n {dof:.0f} for {n} bars (depends on the window "
            "and the overnight share)")


_OHLC = frozenset({"open", "high", "low", "close"})

PARKINSON = EstimatorSpec(
    key="parkinson", label="Parkinson", short="PK", needs=frozenset({"high", "low"}), extra_bars=0,
    variance=parkinson_variance, efficiency=4.91, min_window=1,
    dof=partial(intervals.efficiency_dof, key="parkinson"),
    source="Parkinson (1980), Journal of Business 53(1)",
    assumes="Brownian motion with no drift, continuous trading, no overnight gaps; "
            "understates vol when opens gap.",
)
GARMAN_KLASS = EstimatorSpec(
    key="garman_klass", label="Garman-Klass", short="GK", needs=_OHLC, extra_bars=0,
    variance=garman_klass_variance, efficiency=7.45, min_window=1,
    dof=partial(intervals.efficiency_dof, key="garman_klass"),
    source="Garman & Klass (1980), Journal of Business 53(1)",
    assumes="Brownian motion with no drift and no overnight gaps; understates vol when opens gap.",
)
ROGERS_SATCHELL = EstimatorSpec(
    key="rogers_satchell", label="Rogers-Satchell", short="RS", needs=_OHLC, extra_bars=0,
    variance=rogers_satchell_variance, efficiency=6.04, min_window=1,
    dof=partial(intervals.efficiency_dof, key="rogers_satchell"),
    source="Rogers & Satchell (1991), Annals of Applied Probability 1(4)",
    assumes="Brownian motion with any drift; ignores overnight gaps.",
)
YANG_ZHANG = EstimatorSpec(
    key="yang_zhang", label="Yang-Zhang", short="YZ", needs=_OHLC, extra_bars=1,
    variance=yang_zhang_variance, efficiency=7.0, min_window=2,
    dof=yang_zhang_interval_dof, interval_text=_yang_zhang_text,
    source="Yang & Zhang (2000), Journal of Business 73(3)",
    assumes="Brownian motion with any drift, plus overnight jumps between close and open.",
)
