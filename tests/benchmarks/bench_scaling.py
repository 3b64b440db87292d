"""Benchmark: full Brownian-scaling check on 500 series x 5,040 daily bars (20 years each).

Run: .venv/bin/pytest -q -s tests/benchmarks/bench_scaling.py -o addopts="--import-mode=importlib"

Reports, in one run:
- scaling check + volatility cone (default windows) of all 500 series, each run on new history
  objects (logs are cached per history), against a numpy floor measured in alternating runs:
  the bare numpy of the same core numbers (log closes and returns, the overlapping variance at
  each horizon, moments of the non-overlapping returns, one FFT for 20 autocorrelations of
  returns and squared returns, and per cone window a cumulative-sum rolling std and
  numpy.percentile). Target: <= 2 s;
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

import dataclasses
import resource
import statistics
import time
import tracemalloc

import numpy as np
import pandas as pd
import scipy.fft

from volbench.data.history import PriceHistory
from volbench.pricing.cone import DEFAULT_CONE_WINDOWS, PERCENTILES, vol_cone
from volbench.scaling import DEFAULT_HORIZONS, scaling_check
from volbench.scaling.ratio import variance_ratio_table, variance_ratio_table_arch

SERIES = 500
BARS = 5040
ARCH_SUBSET = 100
TARGET_S = 2.0


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


def _floor(histories: list[PriceHistory]) -> None:
    """Bare numpy of the check's and the cone's core numbers, nothing else (see the module docstring)."""
    qs = list(PERCENTILES.values())
    for h in histories:
        y = np.log(h.close)
        r = np.diff(y)
        n = r.shape[0]
        mu = (y[-1] - y[0]) / n
        for k in DEFAULT_HORIZONS:
            d = y[k:] - y[:-k] - k * mu
            d @ d
            x = np.diff(y[::-k][::-1])
            c = x - x.mean()
            c2 = c * c
            c2.mean(), (c2 * c).mean(), (c2 * c2).mean()
        e = r - r.mean()
        size = scipy.fft.next_fast_len(n + 21, real=True)
        spec = scipy.fft.rfft(np.stack((e, e * e - (e * e).mean())), n=size)
        scipy.fft.irfft(spec.real ** 2 + spec.imag ** 2, n=size)[:, :21]
        sq = np.concatenate(([0.0], np.cumsum(e)))
        sq2 = np.concatenate(([0.0], np.cumsum(e * e)))
        for w in DEFAULT_CONE_WINDOWS:
            s1, s2 = sq[w:] - sq[:-w], sq2[w:] - sq2[:-w]
            np.percentile(np.sqrt((s2 - s1 * s1 / w) / (w - 1) * 252), qs)


def _run(fn, histories: list[PriceHistory]) -> float:
    fresh = [dataclasses.replace(h) for h in histories]  # nothing cached yet
    t0 = time.perf_counter()
    fn(fresh)
    return time.perf_counter() - t0


def test_bench_scaling_and_cone():
    histories = _histories()
    ours_fn = lambda hs: [(scaling_check(h), vol_cone(h)) for h in hs]
    ours_fn(histories[:5])
    _floor(histories[:5])
    ours, floor, check_only, cone_only = [], [], [], []
    for _ in range(3):
        floor.append(_run(_floor, histories))
        ours.append(_run(ours_fn, histories))
    for _ in range(2):
        check_only.append(_run(lambda hs: [scaling_check(h) for h in hs], histories))
        cone_only.append(_run(lambda hs: [vol_cone(h) for h in hs], histories))
    med, fl = statistics.median(ours), statistics.median(floor)
    ratio = statistics.median(o / f for o, f in zip(ours, floor))
    print(f"\nscaling check + cone ({len(DEFAULT_CONE_WINDOWS)} windows), {SERIES} series x {BARS} bars, "
          "new history objects each run (median / fastest of 3):")
    print(f"  volbench            {med:6.2f} / {min(ours):5.2f} s  ({1000 * med / SERIES:5.2f} ms a series; "
          f"target <= {TARGET_S:g} s: {'met' if med <= TARGET_S else 'NOT met'})")
    print(f"    check alone       {statistics.median(check_only):6.2f} s;  cone alone {statistics.median(cone_only):6.2f} s")
    print(f"  numpy floor         {fl:6.2f} / {min(floor):5.2f} s;  ratio volbench / floor {ratio:5.2f}x "
          "(median of alternating runs)")
