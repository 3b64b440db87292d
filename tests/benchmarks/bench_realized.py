"""Benchmark: realized measures for a year of 1-minute bars (256 sessions x 390 = 99,840 bars).

Run: make bench (or .venv/bin/pytest -q -s tests/benchmarks/bench_realized.py -o addopts="--import-mode=importlib")

Reports the median time of :func:`volbench.intraday.realized_measures` (session layout from the
timestamps, RV, BV, tri-power quarticity, the Parzen realized kernel with its per-day bandwidth and
the overnight returns) and its ratio to a bare numpy RV + BV measured in the same run: log prices,
returns, a same-day mask from the dates and two bincounts, nothing else (target: at most 3x).
"""

from __future__ import annotations

import math
import statistics
import time

import numpy as np
import pandas as pd

from volbench.data.history import PriceHistory
from volbench.intraday import realized_measures

DAYS, BARS = 256, 390
REPEATS = 60
TARGET_RATIO = 3.0


def _history(with_open: bool) -> PriceHistory:
    rng = np.random.default_rng(12)
    r = rng.standard_normal((DAYS, BARS + 1)) * 0.2 / math.sqrt(252 * BARS)
    path = np.log(40.0) + np.cumsum(r.ravel()).reshape(DAYS, BARS + 1)
    dates = pd.bdate_range("2024-01-02", periods=DAYS).to_numpy()
    stamps = (dates[:, None] + np.timedelta64(34200, "s") + np.arange(BARS)[None, :] * np.timedelta64(60, "s")).ravel()
    close = np.exp(path[:, 1:]).ravel()
    if not with_open:
        return PriceHistory(name="BENCH-FICT", source=None, dates=stamps, close=close)
    o = np.exp(path[:, :-1]).ravel()
    return PriceHistory(name="BENCH-FICT", source=None, dates=stamps, close=close, open=o,
                        high=np.maximum(o, close), low=np.minimum(o, close))


def bare_rv_bv(h: PriceHistory) -> tuple[np.ndarray, np.ndarray]:
    """Per-day RV and BV from closes with plain numpy (the baseline)."""
    day = h.dates.astype("datetime64[D]").astype(np.int64)
    r = np.diff(np.log(h.close))
    same = day[1:] == day[:-1]
    r = np.where(same, r, 0.0)  # a return across the night counts nowhere
    idx = np.concatenate(([0], np.cumsum(~same)))[1:]
    a = np.abs(r)
    rv = np.bincount(idx, r * r)
    bv = np.bincount(idx[1:], a[1:] * a[:-1]) * (math.pi / 2)
    return rv, bv


def _interleaved_ms(fns: dict, repeats: int = REPEATS) -> dict[str, tuple[float, float]]:
    """(median, fastest) wall time in ms of each function, calls interleaved so that load from other
    processes on the shared machine falls on all of them alike."""
    for fn in fns.values():  # warm up
        fn()
    times: dict[str, list[float]] = {k: [] for k in fns}
    for _ in range(repeats):
        for k, fn in fns.items():
            t0 = time.perf_counter()
            fn()
            times[k].append(time.perf_counter() - t0)
    return {k: (1000 * statistics.median(v), 1000 * min(v)) for k, v in times.items()}


def test_bench_realized():
    closes, ohlc = _history(False), _history(True)
    m = realized_measures(closes)
    rv, bv = bare_rv_bv(closes)
    # same numbers as the baseline (sanity, not timing); BV without the M/(M-1) factor there
    np.testing.assert_allclose(m.daily["rv"].to_numpy(), rv, rtol=1e-10)
    mm = m.daily["n_returns"].to_numpy()
    np.testing.assert_allclose(m.daily["bv"].to_numpy(), bv * mm / (mm - 1), rtol=1e-10)
    t = _interleaved_ms({"closes": lambda: realized_measures(closes), "ohlc": lambda: realized_measures(ohlc),
                         "base": lambda: bare_rv_bv(closes)})
    ratio = t["closes"][0] / t["base"][0]
    print(f"\nrealized measures, {DAYS} sessions x {BARS} one-minute bars = {closes.n:,} bars, {REPEATS} interleaved "
          "repeats (median / fastest):")
    print(f"  realized_measures, closes       {t['closes'][0]:7.2f} / {t['closes'][1]:6.2f} ms")
    print(f"  realized_measures, OHLC bars    {t['ohlc'][0]:7.2f} / {t['ohlc'][1]:6.2f} ms")
    print(f"  bare numpy RV + BV (baseline)   {t['base'][0]:7.2f} / {t['base'][1]:6.2f} ms")
    print(f"  ratio closes / baseline         {ratio:7.2f} / {t['closes'][1] / t['base'][1]:6.2f}  (target <= "
          f"{TARGET_RATIO:g}: {'met' if ratio <= TARGET_RATIO else 'NOT met'})")
