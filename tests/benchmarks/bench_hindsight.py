"""Benchmark: hindsight on one series of 5,040 daily bars, N = 21, six estimators x three windows, step 1.

Run: .venv/bin/pytest -q -s tests/benchmarks/bench_hindsight.py -o addopts="--import-mode=importlib"

Reports the median time of :func:`volbench.hindsight.hindsight` (target <= 0.5 s) and its ratio to a
bare numpy reference of the same computation measured in the same run (target <= 5x): the same 16
forecast series (five windowed estimators at 20, 60 and 250 bars, and EWMA, which uses every past
return whatever the window) from cumulative sums and a linear filter, the zero-mean realized vol of
the next 21 bars, bias, RMSE, QLIKE, interval coverage, the at-the-money price error and the
Diebold-Mariano statistics. The reference skips validation, availability reasons, labels and
pandas. The losses-only part of the reference (forecasts given) is printed too. With GARCH
(refitted every 63 bars, parameters reused in between) the time is reported, not targeted.
Asserts only that both computations give the same numbers, never a timing.
"""

from __future__ import annotations

import math
import statistics
import time

import numpy as np
import pandas as pd
from scipy import stats
from scipy.fft import dct
from scipy.signal import lfilter
from scipy.special import ndtr

from volbench.data.history import PriceHistory
from volbench.estimators.intervals import BAR_EFFICIENCY, yang_zhang_dof
from volbench.hindsight import hindsight

BARS = 5040
DAYS = 21
WINDOWS = (20, 60, 250)
A = 252.0
REPEATS = 15
TARGET_S = 0.5
TARGET_RATIO = 5.0
LN2 = math.log(2.0)
EFF = BAR_EFFICIENCY
"""Per-bar efficiencies of the estimators' own intervals (Parkinson 4.91 exact; Garman-Klass and
Rogers-Satchell calibrated), which hindsight's prediction intervals use too."""


def _history() -> PriceHistory:
    rng = np.random.default_rng(14)
    sd = 0.25 / math.sqrt(A)
    gap = rng.standard_normal(BARS) * sd * 0.3
    day = rng.standard_normal(BARS) * sd * 0.95
    log_open = np.log(50.0) + np.cumsum(gap + np.concatenate(([0.0], day[:-1])))
    log_close = log_open + day
    spread = np.abs(rng.standard_normal((2, BARS))) * sd * 0.5
    return PriceHistory("BENCH-FICT", None, pd.bdate_range("2004-01-05", periods=BARS).to_numpy(),
                        np.exp(log_close), open=np.exp(log_open),
                        high=np.exp(np.maximum(log_open, log_close) + spread[0]),
                        low=np.exp(np.minimum(log_open, log_close) - spread[1]))


# ------------------------------------------------------------------------------ bare reference
def _rmean(x, w):
    c = np.concatenate(([0.0], np.cumsum(x - x.mean())))
    out = np.full(x.size, np.nan)
    out[w - 1:] = (c[w:] - c[:-w]) / w + x.mean()
    return out


def _rvar(x, w):
    y = x - x.mean()
    c1, c2 = np.concatenate(([0.0], np.cumsum(y))), np.concatenate(([0.0], np.cumsum(y * y)))
    out = np.full(x.size, np.nan)
    s1 = c1[w:] - c1[:-w]
    out[w - 1:] = np.maximum((c2[w:] - c2[:-w] - s1 * s1 / w) / (w - 1), 0.0)
    return out


def _forecasts(o, h, lo, c):
    """(n, 16) per-bar variance forecasts and their effective observations, columns as volbench orders them."""
    n = c.size
    r = np.diff(np.log(c))
    u, d, cc = np.log(h / o), np.log(lo / o), np.log(c / o)
    rs = u * (u - cc) + d * (d - cc)
    on = np.log(o[1:] / c[:-1])
    cols, dof = [], []
    pad = np.concatenate
    for w in WINDOWS:
        cols.append(pad(([np.nan], _rvar(r, w))))
        dof.append(w - 1.0)
    for w in WINDOWS:
        cols.append(_rmean(np.log(h / lo) ** 2, w) / (4 * LN2))
        dof.append(w * EFF["parkinson"])
    for w in WINDOWS:
        cols.append(_rmean(0.5 * (u - d) ** 2 - (2 * LN2 - 1) * cc * cc, w))
        dof.append(w * EFF["garman_klass"])
    for w in WINDOWS:
        cols.append(_rmean(rs, w))
        dof.append(w * EFF["rogers_satchell"])
    for w in WINDOWS:
        k = 0.34 / (1.34 + (w + 1) / (w - 1))
        v_o = _rvar(on, w)
        yz = v_o + k * _rvar(cc[1:], w) + (1 - k) * _rmean(rs[1:], w)
        cols.append(pad(([np.nan], yz)))
        # the estimator's own interval dof (its spec): 2 / Var of the window's estimate with the
        # overnight share read from each window, the median over the bars (docs/METHODS.md, Hindsight)
        share = np.where(yz > 0, v_o / np.where(yz > 0, yz, 1.0), 0.0)
        per_bar = yang_zhang_dof(w, share)
        dof.append(float(np.median(per_bar[np.isfinite(yz)])))
    ew = np.full(n, np.nan)
    seed = np.var(r[:20], ddof=1)
    ew[20] = seed
    ew[21:] = lfilter([0.06], [1.0, -0.94], r[20:] ** 2, zi=[0.94 * seed])[0]
    cols.append(ew)
    dof.append(1.94 / 0.06)
    return np.column_stack(cols), np.array(dof)


def _losses(var_fc, dof, c):
    """Scores of (n, k) per-bar variance forecasts against the next DAYS bars."""
    n = c.size
    r2 = np.concatenate(([0.0], np.diff(np.log(c)) ** 2))
    cum = np.cumsum(r2)
    first = int(np.argmax(np.isfinite(var_fc).all(axis=1)))
    t = np.arange(first, n - DAYS)
    real_var = (cum[t + DAYS] - cum[t]) / DAYS
    fv = var_fc[t]
    f, real = np.sqrt(fv * A), np.sqrt(real_var * A)
    x = real_var[:, None] / fv
    loss = x - np.log(x) - 1
    err = f - real[:, None]
    lo = np.sqrt(stats.f.ppf(0.025, DAYS, dof))
    hi = np.sqrt(stats.f.ppf(0.975, DAYS, dof))
    cover = ((real[:, None] >= f * lo) & (real[:, None] <= f * hi)).mean(0)
    tau = math.sqrt(DAYS / A)
    s = c[t]
    p_real = s * (2 * ndtr(0.5 * real * tau) - 1)  # at-the-money call, no rate: S (2 N(s sqrt(T) / 2) - 1)
    p_fc = s[:, None] * (2 * ndtr(0.5 * f * tau) - 1)
    pe = np.abs(p_fc - p_real[:, None])
    q = loss.mean(0)
    best = int(np.argmin(q))
    dd = loss - loss[:, [best]]
    nu = max(2, min(int(0.4 * t.size ** (2 / 3)), t.size // math.ceil(max(WINDOWS) + DAYS)))
    y = dct(dd - dd.mean(0), type=2, axis=0)[1:nu + 1]
    omega = (y * y).mean(0) / (2 * t.size)
    with np.errstate(invalid="ignore", divide="ignore"):
        dm = dd.mean(0) / np.sqrt(omega / t.size)
    p = 2 * stats.t.sf(np.abs(dm), nu)
    return {"bias": 100 * err.mean(0), "rmse": 100 * np.sqrt((err * err).mean(0)), "qlike": q, "coverage": cover,
            "price_error": pe.mean(0), "price_error_share": (pe / p_real[:, None]).mean(0), "dm_p_value": p,
            "periods": t.size}


def _reference(h):
    var_fc, dof = _forecasts(h.open, h.high, h.low, h.close)
    return _losses(var_fc, dof, h.close)


# ------------------------------------------------------------------------------ timing
def _times(fn, repeats=REPEATS):
    fn()
    out = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t0)
    return statistics.median(out), min(out)


def test_bench_hindsight():
    h = _history()
    res = hindsight(h, DAYS, windows=WINDOWS, step=1)
    ref = _reference(h)
    keys = [f"{k}:{w}" for k in ("close_to_close", "parkinson", "garman_klass", "rogers_satchell", "yang_zhang")
            for w in WINDOWS] + ["ewma"]
    s = res.scores.set_index("key").loc[keys]
    assert res.periods == ref["periods"] and len(keys) == 16
    for col in ("bias", "rmse", "qlike", "coverage", "price_error", "price_error_share"):
        np.testing.assert_allclose(s[col].to_numpy(float), ref[col], rtol=1e-8, err_msg=col)
    np.testing.assert_allclose(np.nan_to_num(s["dm_p_value"].to_numpy(float), nan=1.0),
                               np.nan_to_num(ref["dm_p_value"], nan=1.0), rtol=1e-6, atol=1e-12)

    t_vb = _times(lambda: hindsight(h, DAYS, windows=WINDOWS, step=1))
    t_ref = _times(lambda: _reference(h))
    var_fc, dof = _forecasts(h.open, h.high, h.low, h.close)
    t_loss = _times(lambda: _losses(var_fc, dof, h.close))
    t0 = time.perf_counter()
    g = hindsight(h, DAYS, windows=WINDOWS, step=1, with_garch=True)
    t_garch = time.perf_counter() - t0
    print(f"\nhindsight, {BARS} bars, N = {DAYS}, windows {WINDOWS}, step 1: {res.periods} periods, "
          f"{len(keys)} candidates ({REPEATS} repeats, median / fastest)")
    print(f"  volbench hindsight            {1000 * t_vb[0]:8.1f} / {1000 * t_vb[1]:7.1f} ms  "
          f"(target <= {1000 * TARGET_S:.0f} ms: {'met' if t_vb[0] <= TARGET_S else 'NOT met'})")
    print(f"  bare numpy reference          {1000 * t_ref[0]:8.1f} / {1000 * t_ref[1]:7.1f} ms")
    print(f"  of which losses only          {1000 * t_loss[0]:8.1f} / {1000 * t_loss[1]:7.1f} ms")
    ratio = t_vb[0] / t_ref[0]
    print(f"  ratio volbench / reference    {ratio:8.2f} / {t_vb[1] / t_ref[1]:7.2f}  "
          f"(target <= {TARGET_RATIO:g}x: {'met' if ratio <= TARGET_RATIO else 'NOT met'})")
    refits = next(n for n in g.notes if "refitted" in n)
    print(f"  with GARCH (one run)          {t_garch:8.2f} s  ({refits})")
