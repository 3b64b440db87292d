"""Benchmark: volatility cone on 20 years of daily bars (5,040), six windows, warm process.

Run: .venv/bin/pytest -q -s tests/benchmarks/bench_cone.py -o addopts="--import-mode=importlib"

Reports the median time of :func:`volbench.pricing.cone.vol_cone` (target under 20 ms) and its ratio
to a baseline measured in the same run: pandas rolling std plus numpy.percentile for the same
windows (the plain way to draw a cone, without current rank, counts or validation).
"""

from __future__ import annotations

import math
import statistics
import time

import numpy as np
import pandas as pd

from volbench.data.history import PriceHistory
from volbench.pricing.cone import DEFAULT_CONE_WINDOWS, PERCENTILES, vol_cone

BARS = 5040
REPEATS = 60
TARGET_MS = 20.0


def _history() -> PriceHistory:
    rng = np.random.default_rng(20)
    r = rng.standard_normal(BARS - 1) * 0.25 / math.sqrt(252)
    close = 100 * np.exp(np.concatenate(([0.0], np.cumsum(r))))
    dates = pd.bdate_range("2005-01-03", periods=BARS).to_numpy()
    return PriceHistory(name="BENCH-FICT", source=None, dates=dates, close=close)


def _baseline(h: PriceHistory) -> dict[int, np.ndarray]:
    r = pd.Series(np.log(h.close)).diff()
    q = list(PERCENTILES.values())
    return {w: np.percentile((r.rolling(w).std() * math.sqrt(252)).dropna().to_numpy(), q)
            for w in DEFAULT_CONE_WINDOWS}


def _times_ms(fn, repeats: int = REPEATS) -> tuple[float, float]:
    """(median, fastest) wall time in ms after a warm-up; the fastest shows the cost without
    interference from other processes on a shared machine."""
    for _ in range(3):  # warm up
        fn()
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return 1000 * statistics.median(times), 1000 * min(times)


def test_bench_cone():
    h = _history()
    cone = vol_cone(h)
    base = _baseline(h)
    for w in DEFAULT_CONE_WINDOWS:  # same numbers as the baseline (sanity, not timing)
        np.testing.assert_allclose(cone.table.loc[w, list(PERCENTILES)].to_numpy(float), base[w], rtol=1e-9)
    t_cone = _times_ms(lambda: vol_cone(h))
    t_ht = _times_ms(lambda: vol_cone(h, hodges_tompkins=True))
    t_base = _times_ms(lambda: _baseline(h))
    print(f"\ncone, {BARS} bars, windows {DEFAULT_CONE_WINDOWS}, {REPEATS} repeats (median / fastest):")
    print(f"  vol_cone                     {t_cone[0]:7.2f} / {t_cone[1]:6.2f} ms  (target median < {TARGET_MS:g} ms: "
          f"{'met' if t_cone[0] < TARGET_MS else 'NOT met'})")
    print(f"  vol_cone + Hodges-Tompkins   {t_ht[0]:7.2f} / {t_ht[1]:6.2f} ms")
    print(f"  baseline pandas+numpy        {t_base[0]:7.2f} / {t_base[1]:6.2f} ms")
    print(f"  ratio vol_cone / baseline    {t_cone[0] / t_base[0]:7.2f} / {t_cone[1] / t_base[1]:6.2f}")
