"""Range-based estimators using open, high, low and close."""

from __future__ import annotations

from functools import partial

import numpy as np

from volbench.data.history import PriceHistory
from volbench.estimators import intervals
from volbench.estimators.base import EstimatorSpec, rolling_mean, rolling_var
from volbench.estimators.sums import SumForm, Terms, centred, finish_mean, form_variance

LN2 = np.log(2.0)


# Each estimator is a SumForm (volbench.estimators.sums): the per-bar terms whose trailing-window
# sums it needs, and how they combine. ``*_variance`` evaluates the form alone; the registry
# evaluates several forms together on shared terms, with the same numbers.
def _parkinson_rows(t: Terms, window: int):
    hl = t.range
    x, centre = centred(hl * hl)
    return (x,), centre


def _parkinson_finish(t: Terms, window: int, sums, centre: float, out: np.ndarray) -> None:
    finish_mean(window, sums[0], centre, out)
    out /= 4.0 * LN2


PARKINSON_FORM = SumForm(_parkinson_rows, _parkinson_finish)


def parkinson_variance(h: PriceHistory, window: int) -> np.ndarray:
    """Parkinson (1980), J. of Business 53(1): (1 / (4 ln 2)) * mean((ln(H/L))^2) over the window."""
    return form_variance(h, window, PARKINSON_FORM)


def _garman_klass_rows(t: Terms, window: int):
    u, d, c = t.session
    term = u - d
    term *= term
    term *= 0.5
    cc = c * (2.0 * LN2 - 1.0)
    cc *= c
    term -= cc
    x, centre = centred(term)
    return (x,), centre


def _mean_finish(t: Terms, window: int, sums, centre: float, out: np.ndarray) -> None:
    finish_mean(window, sums[0], centre, out)


GARMAN_KLASS_FORM = SumForm(_garman_klass_rows, _mean_finish)


def garman_klass_variance(h: PriceHistory, window: int) -> np.ndarray:
    """Garman & Klass (1980), J. of Business 53(1): mean(0.5 (u - d)^2 - (2 ln 2 - 1) c^2)."""
    return form_variance(h, window, GARMAN_KLASS_FORM)


def _rs_terms(h: PriceHistory) -> np.ndarray:
    """u (u - c) + d (d - c) per bar."""
    return Terms(h.logs).rogers_satchell


def _rogers_satchell_rows(t: Terms, window: int):
    x, centre = centred(t.rogers_satchell)
    return (x,), centre


ROGERS_SATCHELL_FORM = SumForm(_rogers_satchell_rows, _mean_finish)


def rogers_satchell_variance(h: PriceHistory, window: int) -> np.ndarray:
    """Rogers & Satchell (1991), Annals of Applied Probability 1(4): mean(u (u - c) + d (d - c))."""
    return form_variance(h, window, ROGERS_SATCHELL_FORM)


def yang_zhang_k(window: int) -> float:
    """Yang & Zhang (2000) weight k = 0.34 / (1.34 + (n + 1) / (n - 1))."""
    return 0.34 / (1.34 + (window + 1) / (window - 1))


def yang_zhang_parts(h: PriceHistory, window: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """V_o, V_c and V_rs of the Yang-Zhang estimator at every bar (NaN where the window does not fit)."""
    nan = np.full(h.n, np.nan)
    if h.n < window + 1:
        return nan, nan.copy(), nan.copy()
    t = Terms(h.logs)
    return (rolling_var(t.overnight, window, pad=1), rolling_var(t.session[2][1:], window, pad=1),
            rolling_mean(t.rogers_satchell[1:], window, pad=1))


def _yang_zhang_rows(t: Terms, window: int):
    # V_o + k V_c + (1 - k) V_rs in two trailing sums: with centred y_o = o - mean(o), y_c = c - mean(c),
    #   V_o + k V_c = [S(y_o^2) + k S(y_c^2) - (S(y_o)^2 + k S(y_c)^2) / n] / (n - 1),
    # so one sum of the combined squares (the centred Rogers-Satchell term folded in) and one of
    # y_c; S(y_o) telescopes, since o_t + c_t = r_t: S(o) = ln C_t - ln C_{t-n} - S(c).
    w = window
    k = yang_zhang_k(w)
    o, c, rs = t.overnight, t.session[2][1:], t.rogers_satchell[1:]
    y_o, m_o = centred(o)
    y_c, m_c = centred(c)
    y_rs, m_rs = centred(rs)
    g = y_o
    g *= y_o
    sq = y_c * y_c
    sq *= k
    g += sq
    g /= (w - 1)
    y_rs *= (1.0 - k) / w
    g += y_rs
    return (g, y_c), (k, m_o, m_c, m_rs)


def _yang_zhang_finish(t: Terms, window: int, sums, state, out: np.ndarray) -> None:
    w = window
    k, m_o, m_c, m_rs = state
    s_g, s_c = sums
    lc = t.logs.close
    s_o = lc[w:] - lc[:-w]
    s_o -= s_c
    s_o -= w * (m_o + m_c)
    s_o *= s_o
    s_c *= s_c
    s_c *= k
    s_o += s_c
    s_o /= w * (w - 1)
    np.subtract(s_g, s_o, out=out)
    out += (1.0 - k) * m_rs


YANG_ZHANG_FORM = SumForm(_yang_zhang_rows, _yang_zhang_finish, offset=1, window_free=False)


def yang_zhang_variance(h: PriceHistory, window: int) -> np.ndarray:
    """Yang & Zhang (2000), J. of Business 73(3): V_o + k V_c + (1 - k) V_rs.

    V_o and V_c are sample variances (divisor n - 1) of the overnight return o_t = ln(O_t / C_{t-1})
    and the open-to-close return c_t = ln(C_t / O_t) over the window; V_rs is the Rogers-Satchell
    mean over the same n bars. The first bar has no previous close, so a window of n needs n + 1 rows.
    """
    return form_variance(h, window, YANG_ZHANG_FORM)


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
