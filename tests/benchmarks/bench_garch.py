"""Benchmark: GARCH(1,1)-t fits, one on 5,040 bars and 100 series in worker processes.

Run: .venv/bin/pytest -q -s tests/benchmarks/bench_garch.py -o addopts="--import-mode=importlib"

Reports, in one run:
- :func:`volbench.models.fit_garch` (GARCH(1,1), Student-t, 5,040 bars: 20 years of daily data)
  against the bare ``arch_model(...).fit(disp="off")`` on the same returns (target ratio <= 1.2),
  and against the bare fit plus reading ``res.std_err`` (arch computes its robust covariance
  lazily, on first access; fit_garch must report standard errors, so this is the like-for-like
  baseline). Timings are interleaved so that load from other processes hits all of them alike.
- :func:`volbench.models.fit_many` on 100 series of 2,520 bars: serial (``processes=1``) and two
  worker processes, started with ``fork`` and with ``forkserver`` (the safe default when a GUI
  or other threads run), wall time and speed-up over serial; with the machine's parallel
  capacity measured in the same run (two pure-Python spin loops in two processes vs one), since
  the machine is shared and a speed-up cannot exceed it.
"""

from __future__ import annotations

import multiprocessing
import os
import statistics
import time

import numpy as np
from arch import arch_model
from arch.univariate import StudentsT

from volbench.models import fit_garch, fit_many
from volbench.models.garch import _variance_forecast
from volbench.models.term import term_structure
from volbench.settings import GarchSettings
from volbench.types import DEFAULT_TERM_HORIZONS

BARS = 5040
REPEATS = 25
SERIES = 100
SERIES_BARS = 2520
TARGET_RATIO = 1.2
TRUE = [0.03, 0.02, 0.08, 0.90, 6.0]  # mu, omega, alpha, beta, nu on arch's percent scale


def _history(n, seed, name="bench"):
    import pandas as pd

    from volbench.data.history import PriceHistory

    sim = arch_model(None, vol="GARCH", p=1, q=1, dist="t")
    sim.distribution = StudentsT(seed=np.random.default_rng(seed))
    y = sim.simulate(TRUE, n - 1)["data"].to_numpy()
    close = 50.0 * np.exp(np.concatenate(([0.0], np.cumsum(y / 100))))
    return PriceHistory(name=name, source=None, dates=pd.date_range("2000-01-03", periods=n, freq="B").to_numpy(),
                        close=close)


def _timed(fn):
    t = time.perf_counter()
    fn()
    return time.perf_counter() - t


def test_bench_single_fit():
    h = _history(BARS, 1)
    y = 100 * h.log_returns()

    def bare():
        return arch_model(y, vol="GARCH", p=1, q=1, dist="t").fit(disp="off")

    def bare_se():
        res = arch_model(y, vol="GARCH", p=1, q=1, dist="t").fit(disp="off")
        return res.std_err

    def ours():
        return fit_garch(h, "garch", GarchSettings(models=("garch",), dist="t"))

    for fn in (bare, bare_se, ours):  # warm-up
        fn()
    t = {"bare": [], "bare_se": [], "ours": []}
    for _ in range(REPEATS):
        t["bare"].append(_timed(bare))
        t["bare_se"].append(_timed(bare_se))
        t["ours"].append(_timed(ours))
    med = {k: statistics.median(v) * 1e3 for k, v in t.items()}
    best = {k: min(v) * 1e3 for k, v in t.items()}
    # the extras alone, on an existing fit: variance forecast over 252 bars + term structure
    am = arch_model(y, vol="GARCH", p=1, q=1, dist="t", rescale=False)
    prm = am.fit(disp="off").params.to_numpy()

    def extras():
        path = _variance_forecast(am, prm, 252, "analytic", 0, 0) / 1e4
        return term_structure(path, DEFAULT_TERM_HORIZONS, 252.0)

    t_fc = statistics.median(_timed(extras) for _ in range(REPEATS)) * 1e3
    print(f"\nGARCH(1,1)-t fit, {BARS} bars, {REPEATS} interleaved repeats (median / fastest ms):")
    print(f"  bare arch fit                  {med['bare']:7.1f} / {best['bare']:6.1f}")
    print(f"  bare arch fit + std_err        {med['bare_se']:7.1f} / {best['bare_se']:6.1f}")
    print(f"  volbench fit_garch             {med['ours']:7.1f} / {best['ours']:6.1f}")
    print(f"  ratio fit_garch / bare fit     {med['ours'] / med['bare']:7.2f} / {best['ours'] / best['bare']:6.2f}"
          f"   (target <= {TARGET_RATIO})")
    print(f"  ratio fit_garch / fit+std_err  {med['ours'] / med['bare_se']:7.2f} / {best['ours'] / best['bare_se']:6.2f}")
    print(f"  of which forecast (252 bars) + term structure: {t_fc:.1f} ms")
    fit = ours()
    print(f"  estimates: alpha {fit.params['alpha[1]']:.3f}, beta {fit.params['beta[1]']:.3f}, "
          f"nu {fit.params['nu']:.2f} (true 0.08, 0.90, 6.0)")


def _spin(_=None) -> float:
    t = time.perf_counter()
    x = 0
    for i in range(15_000_000):
        x += i
    return time.perf_counter() - t


def _parallel_capacity() -> float:
    """How much faster two CPU-bound processes finish two jobs than one process does: the ceiling
    on any speed-up here (2.0 on two idle cores; less when other work shares the machine)."""
    one = _spin() + _spin()
    ctx = multiprocessing.get_context("fork" if "fork" in multiprocessing.get_all_start_methods() else "spawn")
    with ctx.Pool(2) as pool:
        pool.map(abs, [0, 1])  # workers started before timing
        t = time.perf_counter()
        pool.map(_spin, [0, 1], chunksize=1)
        return one / (time.perf_counter() - t)


def test_bench_many_series():
    hs = [_history(SERIES_BARS, 100 + i, name=f"S{i:03d}") for i in range(SERIES)]
    kw = {"models": "garch", "dist": "t"}
    t_serial = _timed(lambda: fit_many(hs, GarchSettings(processes=1, **kw)))
    rows = [("serial (processes=1)", t_serial)]
    for method in ("fork", "forkserver"):
        if method in multiprocessing.get_all_start_methods():
            ctx = multiprocessing.get_context(method)
            rows.append((f"2 processes, {method}", _timed(lambda c=ctx: fit_many(hs, GarchSettings(processes=2, **kw),
                                                                              mp_context=c))))
    capacity = _parallel_capacity()
    print(f"\nfit_many: {SERIES} series x {SERIES_BARS} bars, GARCH(1,1)-t, {os.cpu_count()} CPUs "
          f"(load average {os.getloadavg()[0]:.1f}; two spinning processes run {capacity:.2f}x one, "
          "the ceiling for any speed-up now):")
    for label, secs in rows:
        print(f"  {label:<26} {secs:6.2f} s   speed-up {t_serial / secs:4.2f}x")
