"""Plain, obviously-correct reference calculations of every estimator (loops over bars, ``math`` only).

They follow the formulas in docs/METHODS.md, "Estimators" and the papers named there, written the long way so that the
vectorised O(n) implementations in :mod:`volbench.estimators` can be checked against them.
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import pytest

LN2 = math.log(2.0)


def _r(c, i):
    """Close-to-close log return of bar i."""
    return math.log(c[i] / c[i - 1])


def plain_close_to_close(h, end, n, zero_mean=False):
    """Per-bar variance from the n returns ending at bar ``end`` (closes end-n .. end).

    Source: common practice (sample variance, divisor n - 1; zero-mean: mean of r^2), e.g. Hull.
    """
    c = h.close
    rets = [_r(c, i) for i in range(end - n + 1, end + 1)]
    if zero_mean:
        return sum(x * x for x in rets) / n
    m = sum(rets) / n
    return sum((x - m) ** 2 for x in rets) / (n - 1)


def plain_parkinson(h, end, n):
    """Parkinson (1980): sum ln(H/L)^2 / (4 n ln 2)."""
    total = 0.0
    for i in range(end - n + 1, end + 1):
        total += math.log(h.high[i] / h.low[i]) ** 2
    return total / (4.0 * n * LN2)


def plain_garman_klass(h, end, n):
    """Garman & Klass (1980): mean of 0.5 ln(H/L)^2 - (2 ln 2 - 1) ln(C/O)^2."""
    total = 0.0
    for i in range(end - n + 1, end + 1):
        total += 0.5 * math.log(h.high[i] / h.low[i]) ** 2
        total -= (2.0 * LN2 - 1.0) * math.log(h.close[i] / h.open[i]) ** 2
    return total / n


def plain_rogers_satchell(h, end, n):
    """Rogers & Satchell (1991), in their published form: mean of ln(H/C) ln(H/O) + ln(L/C) ln(L/O)."""
    total = 0.0
    for i in range(end - n + 1, end + 1):
        o, hi, lo, c = h.open[i], h.high[i], h.low[i], h.close[i]
        total += math.log(hi / c) * math.log(hi / o) + math.log(lo / c) * math.log(lo / o)
    return total / n


def plain_yang_zhang(h, end, n):
    """Yang & Zhang (2000): V_o + k V_c + (1 - k) V_rs, k = 0.34 / (1.34 + (n + 1) / (n - 1))."""
    idx = range(end - n + 1, end + 1)
    over = [math.log(h.open[i] / h.close[i - 1]) for i in idx]
    oc = [math.log(h.close[i] / h.open[i]) for i in idx]
    mo, mc = sum(over) / n, sum(oc) / n
    v_o = sum((x - mo) ** 2 for x in over) / (n - 1)
    v_c = sum((x - mc) ** 2 for x in oc) / (n - 1)
    v_rs = plain_rogers_satchell(h, end, n)
    k = 0.34 / (1.34 + (n + 1) / (n - 1))
    return v_o + k * v_c + (1.0 - k) * v_rs


def plain_ewma(h, end, n, lam=0.94):
    """RiskMetrics (1996) recursion, seeded with the sample variance of the first n returns.

    The value at bar t includes r_t: v_t = lam v_{t-1} + (1 - lam) r_t^2 (docs/METHODS.md, "Estimators").
    """
    c = h.close
    seed = [_r(c, i) for i in range(1, n + 1)]
    m = sum(seed) / n
    v = sum((x - m) ** 2 for x in seed) / (n - 1)
    for t in range(n + 1, end + 1):
        v = lam * v + (1.0 - lam) * _r(c, t) ** 2
    return v


PLAIN = {
    "close_to_close": plain_close_to_close,
    "parkinson": plain_parkinson,
    "garman_klass": plain_garman_klass,
    "rogers_satchell": plain_rogers_satchell,
    "yang_zhang": plain_yang_zhang,
    "ewma": plain_ewma,
}


@pytest.fixture
def plain():
    """Namespace of the reference functions: plain.var[key](history, end_index, n)."""
    return SimpleNamespace(var=dict(PLAIN), **PLAIN)


@pytest.fixture
def tiny_ohlc(make_history):
    """Six hand-written consistent OHLC bars (low <= open, close <= high)."""

    def _make():
        o = [100.0, 101.5, 99.8, 102.3, 103.0, 101.1]
        hi = [102.0, 103.2, 102.9, 104.0, 104.4, 102.5]
        lo = [99.0, 100.7, 98.9, 101.6, 100.8, 99.7]
        c = [101.0, 100.9, 102.5, 103.1, 101.4, 100.2]
        return make_history(c, o, hi, lo, name="tiny")

    return _make
