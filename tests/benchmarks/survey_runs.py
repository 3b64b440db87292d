"""Timed survey runs for bench_survey.py, in a clean interpreter (no pytest, no Qt import hooks).

Run by bench_survey.py as ``python survey_runs.py MODE FOLDER``; prints its report lines.
"""

from __future__ import annotations

import cProfile
import io
import multiprocessing
import os
import pstats
import resource
import statistics
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

from volbench.data import load_prices
from volbench.estimators import estimate_all, rolling_vol
from volbench.pricing.cone import vol_cone
from volbench.scaling import scaling_check
from volbench.survey import SurveySettings, run_survey, survey_paths

FILES = 500
BARS = 2520
GARCH_FILES = 40
TARGET = 3.0
FORK = multiprocessing.get_context("fork")


def _cpu() -> float:
    """CPU seconds of this process and of its finished children (the pool's workers)."""
    own, kids = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime + kids.ru_utime + kids.ru_stime


def _baseline(files) -> tuple[float, float]:
    c, t = _cpu(), time.perf_counter()
    for f in files:
        df = pd.read_csv(f)
        np.log(df["close"]).diff().rolling(20).std()
    return time.perf_counter() - t, _cpu() - c


def _survey(files, **kw) -> tuple[float, object, float]:
    c, t = _cpu(), time.perf_counter()
    result = run_survey(files, SurveySettings(), **kw)
    return time.perf_counter() - t, result, _cpu() - c


def against_pandas(book):
    _baseline(book[:20])
    base, ours, base_cpu, ours_cpu = [], [], [], []
    for _ in range(3):  # interleaved, so load from other processes hits both alike
        wall, cpu = _baseline(book)
        base.append(wall)
        base_cpu.append(cpu)
        elapsed, result, cpu = _survey(book, jobs=2, mp_context=FORK)
        ours.append(elapsed)
        ours_cpu.append(cpu)
        assert result.succeeded == FILES
    b, o = statistics.median(base), statistics.median(ours)
    ratio = statistics.median(x / y for x, y in zip(ours, base))
    bc, oc = statistics.median(base_cpu), statistics.median(ours_cpu)
    serial, _, serial_cpu = _survey(book[:100], jobs=1)
    fs, _, _ = _survey(book, jobs=2, mp_context=multiprocessing.get_context("forkserver"))
    load = os.getloadavg()[0]
    print(f"survey, {FILES} files x {BARS:,} bars (estimates + cone + scaling), 2 workers (fork): {o:.2f} s; "
          f"bare pandas read_csv + rolling(20).std, one process: {b:.2f} s; ratio {ratio:.1f}x (median of 3 "
          f"alternating runs; target <= {TARGET}x: {'met' if ratio <= TARGET else 'NOT met'})")
    print(f"  CPU: survey {oc:.2f} s in all ({1000 * oc / FILES:.1f} ms a series), baseline {bc:.2f} s; the 2 workers "
          f"kept {oc / o:.2f} cores busy (machine load average {load:.1f} on {os.cpu_count()} cores); with both "
          f"cores free the ratio would be about {oc / 2 / b:.1f}x")
    print(f"  per series in one process: {1000 * serial / 100:.1f} ms wall, {1000 * serial_cpu / 100:.1f} ms CPU; "
          f"2 workers started by forkserver: {fs:.2f} s ({fs / b:.1f}x the baseline)")


def where_the_time_goes(book):
    files = book[:50]
    parts = dict.fromkeys(("load", "estimates", "cone + current vol", "scaling"), 0.0)
    survey_paths(files[:2], SurveySettings())
    for f in files:
        t0 = time.perf_counter()
        h = load_prices(f)[0]
        t1 = time.perf_counter()
        estimate_all(h, 21)
        t2 = time.perf_counter()
        vol_cone(h)
        rolling_vol(h, "close_to_close", 21)
        t3 = time.perf_counter()
        scaling_check(h)
        t4 = time.perf_counter()
        for k, dt in zip(parts, (t1 - t0, t2 - t1, t3 - t2, t4 - t3)):
            parts[k] += dt / len(files)
    total = sum(parts.values())
    print("per series (2,520 bars): " + ", ".join(f"{k} {1000 * v:.1f} ms ({100 * v / total:.0f}%)"
                                                   for k, v in parts.items()))
    prof = cProfile.Profile()
    prof.enable()
    survey_paths(files, SurveySettings())
    prof.disable()
    out = io.StringIO()
    pstats.Stats(prof, stream=out).sort_stats("tottime").print_stats(12)
    lines = [ln for ln in out.getvalue().splitlines() if ln.strip()]
    start = next(i for i, ln in enumerate(lines) if ln.lstrip().startswith("ncalls"))
    print("cProfile of survey_paths on 50 files, most own time:")
    for ln in lines[start:start + 13]:
        print("  " + ln.replace(str(Path(sys.prefix)), "<venv>"))


def _noop(x):
    return x


def dask(book):
    from distributed import Client, LocalCluster

    t = time.perf_counter()
    cluster = LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                           dashboard_address=None)
    client = Client(cluster)
    client.submit(_noop, 0).result()
    start = time.perf_counter() - t
    try:
        n = 2000
        t = time.perf_counter()
        client.gather(client.map(_noop, range(n), pure=False))
        per_task = (time.perf_counter() - t) / n
        lat = []
        for i in range(30):
            t = time.perf_counter()
            client.submit(_noop, i, pure=False).result()
            lat.append(time.perf_counter() - t)
        elapsed, result, _ = _survey(book, scheduler=cluster.scheduler_address)
        assert result.succeeded == FILES and result.engine == "dask"
    finally:
        client.close()
        cluster.close()
    print(f"Dask LocalCluster (2 worker processes, loopback): start {start:.1f} s; {n} trivial tasks "
          f"{1000 * per_task:.2f} ms each (throughput); one task's round trip {1000 * statistics.median(lat):.1f} ms; "
          f"survey of {FILES} files on it: {elapsed:.2f} s (start-up not included)")


def garch(book):
    files = book[:GARCH_FILES]
    run_survey(files[:2], SurveySettings.build(with_garch=True), jobs=1)
    t = time.perf_counter()
    run_survey(files, SurveySettings(), jobs=2, mp_context=FORK)
    plain = time.perf_counter() - t
    t = time.perf_counter()
    result = run_survey(files, SurveySettings.build(with_garch=True), jobs=2, mp_context=FORK)
    with_garch = time.perf_counter() - t
    assert all(r.forward_vol is not None for r in result.records)
    print(f"--with-garch, {GARCH_FILES} files x {BARS:,} bars on 2 workers: {with_garch:.2f} s "
          f"({GARCH_FILES / with_garch / 2:.1f} series/s per worker); without: {plain:.2f} s; GARCH(1,1) alone: "
          f"{GARCH_FILES / max(with_garch - plain, 1e-9) / 2:.1f} fits/s per worker")


if __name__ == "__main__":
    mode, folder = sys.argv[1], Path(sys.argv[2])
    files = sorted(str(p) for p in folder.glob("*.csv"))
    {"pandas": against_pandas, "parts": where_the_time_goes, "dask": dask, "garch": garch}[mode](files)
