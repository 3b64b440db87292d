"""Benchmark: all six rolling estimators on 500 series x 5,040 daily bars (20 years), window 20.

Run: .venv/bin/pytest -q -s tests/benchmarks/bench_estimators.py -o addopts="--import-mode=importlib"

Prints a table; asserts only that the numbers agree with the baselines (never a timing). Baselines,
measured in the same run:

(f) the numpy floor: the work any implementation must do, the logs of the four price arrays and
    one cumulative sum per estimator (six), per series. Target: all six rolling series, from one
    ``rolling_all`` call per series, <= 3x the floor and <= 0.4 s. Each timed run starts from new
    history objects (the logs are cached per history, so a warm history would hide their cost);
    floor and volbench alternate run by run so that both see the same machine load;
(a) a naive ``pandas.Series.rolling(20).apply(python function, raw=True)`` of each estimator (the
    function computes the estimator from the raw prices of each window), timed on a subset of
    series and scaled per series to 500 (target: volbench at least 50x faster). EWMA is a
    recursion over all bars rather than a window statistic, so its naive form is a python loop;
(b) ``pandas.Series.rolling(20).std()`` for close-to-close over the same 500 series, both from
    closes (log, diff, rolling std, annualize) and on precomputed returns (rolling std alone)
    (target: volbench no slower than 1.5x);
(c) point estimates cost O(window): ``point_estimate`` with a 20-bar window on 1,000,000 bars
    against the same on 5,040 bars (target: about 1x); EWMA, a recursion over the whole history,
    is O(history) by nature and shown for comparison.

Series are consistent random OHLC bars (an open gap, then high/low around open and close), which
is all the timing needs; generation is excluded from every timing.
"""

from __future__ import annotations

import dataclasses
import math
import statistics
import time

import numpy as np
import pandas as pd

from volbench.data.history import PriceHistory
from volbench.estimators import ESTIMATOR_KEYS, point_estimate, rolling_all, rolling_vol
from volbench.estimators.range_based import yang_zhang_k

SERIES = 500
BARS = 5040
WINDOW = 20
NAIVE_SERIES = 5
A = 252.0
LN2 = math.log(2.0)
FLOOR_TARGET = 3.0
ALL_SIX_TARGET_S = 0.4


def _histories(n_series: int = SERIES, bars: int = BARS, seed: int = 2024, freq: str = "B") -> list[PriceHistory]:
    rng = np.random.default_rng(seed)
    sd = 0.25 / math.sqrt(A)
    gap = rng.standard_normal((n_series, bars)) * sd * 0.3
    day = rng.standard_normal((n_series, bars)) * sd * 0.95
    log_open = np.log(50.0) + np.cumsum(gap + np.concatenate((np.zeros((n_series, 1)), day[:, :-1]), axis=1),
                                        axis=1)
    log_close = log_open + day
    spread = np.abs(rng.standard_normal((2, n_series, bars))) * sd * 0.5
    log_high = np.maximum(log_open, log_close) + spread[0]
    log_low = np.minimum(log_open, log_close) - spread[1]
    dates = pd.date_range("2004-01-05", periods=bars, freq=freq).to_numpy()
    return [PriceHistory(name=f"FICT-{i:03d}", source=None, dates=dates, close=np.exp(log_close[i]),
                         open=np.exp(log_open[i]), high=np.exp(log_high[i]), low=np.exp(log_low[i]))
            for i in range(n_series)]


# --------------------------------------------------------------------------- naive baseline (a)
def _naive_window_fns(h: PriceHistory):
    """Per-window python functions of bar positions (the usual way to feed several columns to
    rolling.apply), each computing the estimator directly from the window's prices."""
    o, hi, lo, c = h.open, h.high, h.low, h.close

    def c2c(idx):  # returns r_t for t in the window (closes t-1, t)
        i = idx.astype(int)
        r = np.log(c[i] / c[i - 1])
        return math.sqrt(np.var(r, ddof=1) * A)

    def parkinson(idx):
        i = idx.astype(int)
        return math.sqrt(np.mean(np.log(hi[i] / lo[i]) ** 2) / (4 * LN2) * A)

    def garman_klass(idx):
        i = idx.astype(int)
        v = np.mean(0.5 * np.log(hi[i] / lo[i]) ** 2 - (2 * LN2 - 1) * np.log(c[i] / o[i]) ** 2)
        return math.sqrt(v * A)

    def rogers_satchell(idx):
        i = idx.astype(int)
        v = np.mean(np.log(hi[i] / c[i]) * np.log(hi[i] / o[i]) + np.log(lo[i] / c[i]) * np.log(lo[i] / o[i]))
        return math.sqrt(v * A)

    k = yang_zhang_k(WINDOW)

    def yang_zhang(idx):
        i = idx.astype(int)
        v_o = np.var(np.log(o[i] / c[i - 1]), ddof=1)
        v_c = np.var(np.log(c[i] / o[i]), ddof=1)
        v_rs = np.mean(np.log(hi[i] / c[i]) * np.log(hi[i] / o[i]) + np.log(lo[i] / c[i]) * np.log(lo[i] / o[i]))
        return math.sqrt((v_o + k * v_c + (1 - k) * v_rs) * A)

    return {"close_to_close": c2c, "parkinson": parkinson, "garman_klass": garman_klass,
            "rogers_satchell": rogers_satchell, "yang_zhang": yang_zhang}


def _naive(h: PriceHistory, key: str) -> pd.Series:
    pos = pd.Series(np.arange(h.n, dtype=float), index=h.index)
    if key == "ewma":  # RiskMetrics recursion as a python loop, seeded with the first window's variance
        r = np.diff(np.log(h.close))
        out = np.full(h.n, np.nan)
        v = float(np.var(r[:WINDOW], ddof=1))
        out[WINDOW] = v
        for t in range(WINDOW + 1, h.n):
            v = 0.94 * v + 0.06 * r[t - 1] ** 2
            out[t] = v
        return pd.Series(np.sqrt(out * A), index=h.index).dropna()
    fn = _naive_window_fns(h)[key]
    if key in ("close_to_close", "yang_zhang"):
        pos = pos.iloc[1:]  # these need the previous close
    return pos.rolling(WINDOW).apply(fn, raw=True).dropna()


# --------------------------------------------------------------------------------- helpers
def _best_of(fn, repeats: int) -> tuple[float, float]:
    """(median, fastest) wall time in seconds; the fastest shows the cost without interference from
    other processes on a shared machine."""
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times), min(times)


def _fresh(hs: list[PriceHistory]) -> list[PriceHistory]:
    """New history objects on the same (read-only) arrays: nothing cached yet."""
    return [dataclasses.replace(h) for h in hs]


def _floor(hs: list[PriceHistory]) -> None:
    """Logs of the four price arrays and one cumulative sum per estimator (six), per series."""
    for h in hs:
        np.log(h.open)
        np.log(h.high)
        np.log(h.low)
        c = np.log(h.close)
        for _ in range(6):
            np.cumsum(c)


def _timed_cold(fn, hs: list[PriceHistory]) -> float:
    fresh = _fresh(hs)
    t0 = time.perf_counter()
    fn(fresh)
    return time.perf_counter() - t0


def _timed_cold_both(fn, hs: list[PriceHistory]) -> tuple[float, float]:
    """Wall and CPU seconds of ``fn`` on new history objects."""
    fresh = _fresh(hs)
    c, t0 = time.process_time(), time.perf_counter()
    fn(fresh)
    return time.perf_counter() - t0, time.process_time() - c


def test_bench_rolling_estimators():
    hs = _histories()
    closes = [pd.Series(h.close, index=h.index) for h in hs]
    returns = [np.log(s).diff() for s in closes]
    sqrt_a = math.sqrt(A)

    # correctness first (not timed): volbench equals both baselines, and rolling_all each rolling_vol
    for key in ESTIMATOR_KEYS:
        ours = rolling_vol(hs[0], key, WINDOW).values
        naive = _naive(hs[0], key)
        pd.testing.assert_series_equal(ours, naive, check_names=False, rtol=1e-9)
        pd.testing.assert_series_equal(rolling_all(hs[1], WINDOW).series[key].values,
                                       rolling_vol(hs[1], key, WINDOW).values, rtol=0, atol=0)
    pandas_c2c = (returns[0].rolling(WINDOW).std() * sqrt_a).dropna()
    pd.testing.assert_series_equal(rolling_vol(hs[0], "close_to_close", WINDOW).values, pandas_c2c,
                                   check_names=False, rtol=1e-9)

    # warm-up
    _floor(hs[:20])
    [rolling_all(h, WINDOW) for h in _fresh(hs[:20])]

    # all six against the floor, alternating run by run, every run on new history objects
    runs_all, runs_floor, cpu_all, cpu_floor = [], [], [], []
    for _ in range(7):
        wall, cpu = _timed_cold_both(_floor, hs)
        runs_floor.append(wall)
        cpu_floor.append(cpu)
        wall, cpu = _timed_cold_both(lambda fresh: [rolling_all(fresh_h, WINDOW) for fresh_h in fresh], hs)
        runs_all.append(wall)
        cpu_all.append(cpu)
    all_six = (statistics.median(runs_all), min(runs_all))
    floor = (statistics.median(runs_floor), min(runs_floor))
    ratio_floor = statistics.median(o / f for o, f in zip(runs_all, runs_floor))

    ours: dict[str, tuple[float, float]] = {}
    for key in ESTIMATOR_KEYS:
        times = [_timed_cold(lambda fresh, key=key: [rolling_vol(h, key, WINDOW) for h in fresh], hs)
                 for _ in range(5)]
        ours[key] = (statistics.median(times), min(times))
    six_calls = [_timed_cold(lambda fresh: [rolling_vol(h, k, WINDOW) for h in fresh for k in ESTIMATOR_KEYS], hs)
                 for _ in range(3)]

    # close-to-close against pandas, interleaved run by run so that both see the same machine load
    runs = {"ours": [], "from_close": [], "std_only": []}
    for _ in range(7):
        runs["ours"].append(_timed_cold(lambda fresh: [rolling_vol(h, "close_to_close", WINDOW) for h in fresh], hs))
        runs["from_close"].append(
            _best_of(lambda: [np.log(s).diff().rolling(WINDOW).std() * sqrt_a for s in closes], 1)[0])
        runs["std_only"].append(_best_of(lambda: [r.rolling(WINDOW).std() for r in returns], 1)[0])
    ratio_close = statistics.median(o / p for o, p in zip(runs["ours"], runs["from_close"]))
    ratio_std = statistics.median(o / p for o, p in zip(runs["ours"], runs["std_only"]))

    naive: dict[str, float] = {}
    subset = hs[:NAIVE_SERIES]
    for key in ESTIMATOR_KEYS:
        t0 = time.perf_counter()
        for h in subset:
            _naive(h, key)
        naive[key] = (time.perf_counter() - t0) * SERIES / NAIVE_SERIES  # scaled to 500 series

    print()
    print(f"Rolling estimators, {SERIES} series x {BARS} daily bars, window {WINDOW} "
          f"(median / fastest of repeated runs, seconds; every run on new history objects)")
    print(f"{'estimator':<16} {'volbench':>16} {'naive apply (a)':>16} {'(a)/volbench':>13}")
    for key in ESTIMATOR_KEYS:
        med, best = ours[key]
        print(f"{key:<16} {med:>7.3f} / {best:<7.3f} {naive[key]:>16.1f} {naive[key] / med:>12.0f}x")
    naive_total = sum(naive.values())
    print(f"{'all six':<16} {all_six[0]:>7.3f} / {all_six[1]:<7.3f} {naive_total:>16.1f} "
          f"{naive_total / all_six[0]:>12.0f}x   (one rolling_all call per series)")
    print(f"{'six calls':<16} {statistics.median(six_calls):>7.3f} / {min(six_calls):<7.3f}"
          "                                 (rolling_vol once per estimator and series)")
    print(f"(a) naive timed on {NAIVE_SERIES} series, scaled x{SERIES // NAIVE_SERIES}; EWMA is a recursion, not a "
          "window statistic, so its naive baseline is a plain python loop over bars")
    print("(f) all six vs the numpy floor (4 logs + 6 cumulative sums per series), 7 alternating runs:")
    print(f"  floor {floor[0]:.3f} / {floor[1]:.3f} s; all six {all_six[0]:.3f} / {all_six[1]:.3f} s; "
          f"ratio (median of per-run ratios) {ratio_floor:.2f}x (target <= {FLOOR_TARGET:g}x: "
          f"{'met' if ratio_floor <= FLOOR_TARGET else 'NOT met'}); all six <= {ALL_SIX_TARGET_S:g} s: "
          f"{'met' if all_six[0] <= ALL_SIX_TARGET_S else 'NOT met'}")
    print(f"  CPU time (less sensitive to other load): floor {statistics.median(cpu_floor):.3f} s, all six "
          f"{statistics.median(cpu_all):.3f} s, ratio {statistics.median(a / f for a, f in zip(cpu_all, cpu_floor)):.2f}x")
    med = {k: statistics.median(v) for k, v in runs.items()}
    print(f"close-to-close vs pandas (b), {SERIES} series, 7 interleaved runs (median s; median of per-run ratios):")
    print(f"  volbench rolling_vol:                          {med['ours']:.3f} s")
    print(f"  pandas log/diff/rolling(20).std()/annualize:   {med['from_close']:.3f} s  -> volbench/pandas = "
          f"{ratio_close:.2f}")
    print(f"  pandas rolling(20).std() on precomputed returns: {med['std_only']:.3f} s  -> volbench/pandas = "
          f"{ratio_std:.2f}")
    print("targets: (a)/volbench >= 50x for every estimator; volbench/pandas <= 1.5 for close-to-close")


def test_bench_point_estimate_is_o_window():
    long_h = _histories(1, 1_000_000, seed=7, freq="min")[0]
    short_h = _histories(1, BARS, seed=8)[0]
    rows = []
    for key in ("close_to_close", "yang_zhang", "ewma"):
        times = {}
        for name, h in (("short", short_h), ("long", long_h)):
            reps = 200 if (name == "short" or key != "ewma") else 5
            point_estimate(dataclasses.replace(h), key, WINDOW)  # warm-up
            fresh = [dataclasses.replace(h) for _ in range(reps)]  # nothing cached: logs cost included
            t0 = time.perf_counter()
            for f in fresh:
                point_estimate(f, key, WINDOW)
            times[name] = (time.perf_counter() - t0) / reps
        rows.append((key, times["short"], times["long"]))
    print(f"\n(c) point_estimate, window {WINDOW}, new history objects (mean of repeats, ms):")
    for key, short, long_ in rows:
        print(f"  {key:<16} {BARS:,} bars {1000 * short:7.3f} ms; 1,000,000 bars {1000 * long_:7.3f} ms; "
              f"ratio {long_ / short:6.2f}x" + ("  (EWMA: a recursion over the whole history, O(n) by nature)"
                                                if key == "ewma" else "  (target about 1x: O(window))"))
