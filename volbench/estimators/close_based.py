"""Close-only estimators: close-to-close and EWMA."""

from __future__ import annotations

import numpy as np
from scipy.signal import lfilter

from volbench import validate
from volbench.data.history import PriceHistory
from volbench.estimators import intervals
from volbench.estimators.base import (
    EstimatorSpec,
    rolling_mean,
    sample_variance,
)
from volbench.estimators.sums import SumForm, Terms, centred, form_variance
from volbench.types import EWMA_LAMBDA


def _close_to_close_rows(t: Terms, window: int):
    y, mean = centred(t.returns)
    y *= y
    return (y,), mean


def _close_to_close_finish(t: Terms, window: int, sums, mean: float, out: np.ndarray) -> None:
    # rolling_var with the window sums of r telescoped: sum of r_{t-n+1..t} = ln C_t - ln C_{t-n}
    w = window
    lc = t.logs.close
    s1 = lc[w:] - lc[:-w]
    s1 -= w * mean
    s1 *= s1
    s1 /= w
    np.subtract(sums[0], s1, out=out)
    out /= (w - 1)
    np.maximum(out, 0.0, out=out)


CLOSE_TO_CLOSE_FORM = SumForm(_close_to_close_rows, _close_to_close_finish, offset=1)
"""The sample-variance form (divisor n - 1); the zero-mean option is evaluated on its own."""


def close_to_close_variance(h: PriceHistory, window: int, *, zero_mean: bool = False) -> np.ndarray:
    """Per-bar variance of close-to-close log returns over trailing windows of ``window`` returns.

    Notes
    -----
    r_t = ln(C_t / C_{t-1}); variance = sum (r - rbar)^2 / (n - 1), or with ``zero_mean``
    sum r^2 / n (common practice; e.g. Hull, *Options, Futures and Other Derivatives*).
    The value at bar t uses returns r_{t-n+1} .. r_t, i.e. closes t-n .. t. O(n): the window
    sums of r are differences of log closes, those of the centred squares one cumulative sum
    (:func:`volbench.estimators.base.rolling_var`).
    """
    if zero_mean:
        r = h.logs.returns
        return rolling_mean(r * r, window, pad=1)
    return form_variance(h, window, CLOSE_TO_CLOSE_FORM)


def ewma_variance(h: PriceHistory, window: int, *, lam: float = EWMA_LAMBDA) -> np.ndarray:
    """Exponentially weighted per-bar variance, seeded with the sample variance of the first window.

    Notes
    -----
    RiskMetrics (1996): s2_t = lambda s2_{t-1} + (1 - lambda) r_{t-1}^2. The value reported at bar t
    is the variance forecast made at the close of bar t, so it includes r_t:
    v_t = lambda v_{t-1} + (1 - lambda) r_t^2, with v at the end of the first ``window`` returns
    equal to their sample variance (divisor n - 1). The window only sets the seed; every later
    return is used. Computed as a first-order linear filter (O(n)).

    The recursion needs the whole history: the value at the last bar depends on the seed (the
    first ``window`` returns) and on every return after it, so even a point estimate costs
    O(history), unlike the window estimators (one ``lfilter`` pass over the squared returns).
    """
    lam = validate.lam(lam)
    r = h.logs.returns
    out = np.full(h.n, np.nan)
    if len(r) < window:
        return out
    seed = sample_variance(r[:window])
    sq = r[window:] * r[window:]
    tail = lfilter([1.0 - lam], [1.0, -lam], sq, zi=[lam * seed])[0]
    out[window] = seed
    out[window + 1:] = tail
    return out


def ewma_effective_n(lam: float = EWMA_LAMBDA) -> float:
    """Effective sample size (1 + lambda) / (1 - lambda) of an EWMA variance (common practice, no source)."""
    return (1.0 + lam) / (1.0 - lam)


def ewma_half_life(lam: float = EWMA_LAMBDA) -> float:
    """Bars after which a return's weight in the EWMA has halved: ln 0.5 / ln lambda (common practice)."""
    return float(np.log(0.5) / np.log(validate.lam(lam)))


def ewma_note(options: dict) -> str:
    """The comparison note of the EWMA vol: every past return counts, with this lambda's half-life."""
    return f"all past returns, half-life {ewma_half_life(options.get('lam') or EWMA_LAMBDA):.1f} bars"


def _ewma_interval_text(dof: float, n: int) -> str:
    return f"approximate: chi-square with effective n {dof:.1f}"


CLOSE_TO_CLOSE = EstimatorSpec(
    key="close_to_close",
    label="Close-to-close",
    short="C2C",
    needs=frozenset({"close"}),
    extra_bars=1,
    variance=close_to_close_variance,
    efficiency=1.0,
    ci_exact=True,
    dof=intervals.close_to_close_dof,
    options=frozenset({"zero_mean"}),
    source="Common practice; e.g. Hull, Options, Futures and Other Derivatives",
    assumes="i.i.d. normal log returns; uses closes only, so intraday range information is ignored.",
)

EWMA = EstimatorSpec(
    key="ewma",
    label="EWMA (lambda 0.94)",
    short="EWMA",
    needs=frozenset({"close"}),
    extra_bars=1,
    variance=ewma_variance,
    efficiency=1.0,
    whole_sample_window=20,
    options=frozenset({"lam"}),
    memory="all",
    dof=intervals.ewma_interval_dof,
    interval_text=_ewma_interval_text,
    candidate_note=ewma_note,
    source="J.P. Morgan/Reuters RiskMetrics Technical Document (1996)",
    assumes=("Zero-mean returns whose variance drifts; recent returns weigh most (half-life about "
             f"{ewma_half_life():.0f} bars)."),
)
