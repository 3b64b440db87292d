"""Benchmark: full Brownian-scaling check on 500 series x 5,040 daily bars (20 years each).

Run: .venv/bin/pytest -q -s tests/benchmarks/bench_scaling.py -o addopts="--import-mode=importlib"

Reports, in one run:
- wall time of :func:`volbench.scaling.scaling_check` over all 500 series (default horizons
  1..60, Ljung-Box lags 5/10/20, 20 autocorrelations, 200 QQ points), per series and in total;
- the variance-ratio part alone, computed the fast way (:func:`variance_ratio_table`) and with
  ``arch.unitroot.VarianceRatio`` (:func:`variance_ratio_table_arch`, the reference; timed on the
  first 100 series and scaled to 500), with their ratio, and the full check's time had it used arch;
- a floor baseline: close-to-close vol of every series (log, diff, std);
- peak traced memory of one check (tracemalloc) and of the input data, and the process's
  maximum resident set size (resource.getrusage).
The core loops over series and horizons only, never over bars.
"""

from __future__ import annotations

import resource
import time
import tracemalloc

import numpy as np
import pandas as pd

from volbench.data.history import PriceHistory
from volbench.scaling import DEFAULT_HORIZONS, scaling_check
from volbench.scaling.ratio import variance_ratio_table, variance_ratio_table_arch

SERIES = 500
BARS = 5040
ARCH_SUBSET = 100


def _histories() -> list[PriceHistory]:
    rng = np.random.default_rng(5040)
    r = rng.standard_normal((SERIES, BARS - 1)) * 0.25 / np.sqrt(252)
    closes = 50.0 * np.exp(np.concatenate((np.zeros((SERIES, 1)), np.cumsum(r, axis=1)), axis=1))
    dates = pd.bdate_range("2005-01-03", periods=BARS).to_numpy()
    return [PriceHistory(name=f"FICT-{i:03d}", source=None, dates=dates, close=closes[i]) for i in range(SERIES)]


def _timed(fn) -> float:
    t0 = time.perf_counter()
    fn()
    return time.perf_counter() - t0


def test_bench_scaling():
    tracemalloc.start()
    histories = _histories()
    data_mb = tracemalloc.get_traced_memory()[0] / 2**20
    tracemalloc.stop()
    ys = [np.log(h.close) for h in histories]

    # sanity (not timing): the fast variance-ratio table equals arch's on two series
    for y in ys[:2]:
        np.testing.assert_allclose(variance_ratio_table(y, DEFAULT_HORIZONS).to_numpy(float),
                                   variance_ratio_table_arch(y, DEFAULT_HORIZONS).to_numpy(float),
                                   rtol=0, atol=1e-10, equal_nan=True)

    scaling_check(histories[0])  # warm up imports and caches
    t_full = _timed(lambda: [scaling_check(h) for h in histories])
    t_vr_fast = _timed(lambda: [variance_ratio_table(y, DEFAULT_HORIZONS) for y in ys])
    t_vr_arch = _timed(lambda: [variance_ratio_table_arch(y, DEFAULT_HORIZONS) for y in ys[:ARCH_SUBSET]])
    t_vr_arch *= SERIES / ARCH_SUBSET
    t_base = _timed(lambda: [np.std(np.diff(y), ddof=1) * np.sqrt(252) for y in ys])

    tracemalloc.start()
    scaling_check(histories[1])
    peak_one = tracemalloc.get_traced_memory()[1] / 2**20
    tracemalloc.stop()
    maxrss_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024

    print(f"\nscaling check, {SERIES} series x {BARS} bars, horizons {DEFAULT_HORIZONS}:")
    print(f"  full check (fast variance ratios)   {t_full:8.2f} s   ({1000 * t_full / SERIES:6.2f} ms/series)")
    print(f"  full check had it used arch (est.)  {t_full - t_vr_fast + t_vr_arch:8.2f} s")
    print(f"  variance ratios, fast               {t_vr_fast:8.2f} s   ({1000 * t_vr_fast / SERIES:6.2f} ms/series)")
    print(f"  variance ratios, arch VarianceRatio {t_vr_arch:8.2f} s   ({1000 * t_vr_arch / SERIES:6.2f} ms/series; "
          f"timed on {ARCH_SUBSET} series, scaled)")
    print(f"  ratio arch / fast variance ratios   {t_vr_arch / t_vr_fast:8.1f}")
    print(f"  baseline close-to-close vol         {t_base:8.3f} s;  full check / baseline {t_full / t_base:8.0f}")
    print(f"  memory: input data {data_mb:.1f} MiB traced; one check peaks at {peak_one:.2f} MiB traced; "
          f"process max RSS {maxrss_mb:.0f} MiB")
