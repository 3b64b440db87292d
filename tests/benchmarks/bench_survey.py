"""Benchmark: a survey of 500 files x 2,520 bars, Dask's overheads, GARCH fits per second, long series.

Run: make bench (or .venv/bin/pytest -q -s tests/benchmarks/bench_survey.py -o addopts="--import-mode=importlib")

Reports, in one run (ratios against baselines measured in the same run; no timed assertion):
- ``run_survey`` of 500 seeded OHLC files x 2,520 daily bars (estimates + cone + scaling, no GARCH)
  on 2 worker processes, against a bare pandas baseline that reads every file
  (``pandas.read_csv``) and computes a 20-bar rolling std of log returns, in this one process
  (target: survey <= 3x baseline), median of three alternating runs. Also the CPU seconds of
  both (workers included) and how many cores the two workers actually kept busy: on a machine
  shared with other work the wall-clock ratio measures the contention as much as the code, so
  the ratio with both cores free is printed too. Also the same survey in this process
  (per-series cost) and with workers started by ``forkserver`` (what the window gets: it cannot
  fork safely).
- Where a series' time goes: load, estimates, cone, scaling, per series, and the functions with
  the most own time under cProfile.
- Dask: ``LocalCluster`` start-up, the per-task overhead (many trivial tasks on 2 worker
  processes), and the same 500-file survey on that cluster.
- ``--with-garch``: GARCH(1,1) fits per second per worker (40 files on 2 workers).
- Scale on paper: one series of 1 and 5 years of 1-minute bars (98,280 and 491,400 bars), time
  and peak memory of a fresh worker process surveying it, against the same process surveying a
  100-bar file.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

FILES = 500
BARS = 2520
MINUTES_PER_DAY = 390
RUNS = Path(__file__).with_name("survey_runs.py")


def _write(path: Path, n: int, seed: int, *, freq: str = "B", start: str = "2010-01-04") -> None:
    rng = np.random.default_rng(seed)
    sigma = 0.15 + 0.25 * rng.random()
    per_bar = sigma / np.sqrt(252 if freq == "B" else 252 * MINUTES_PER_DAY)
    c = 50 * np.exp(np.cumsum(rng.standard_normal(n) * per_bar))
    o = np.concatenate(([50.0], c[:-1]))
    spread = np.abs(rng.standard_normal(n)) * per_bar / 2
    if freq == "B":
        dates = pd.bdate_range(start, periods=n).strftime("%Y-%m-%d")
    else:  # 390 one-minute bars a weekday, 09:30 to 15:59
        days = pd.bdate_range(start, periods=-(-n // MINUTES_PER_DAY))
        stamps = (days.values[:, None] + np.timedelta64(570, "m")
                  + np.arange(MINUTES_PER_DAY).astype("timedelta64[m]")).ravel()[:n]
        dates = pd.DatetimeIndex(stamps).strftime("%Y-%m-%d %H:%M")
    pd.DataFrame({"date": dates, "open": o, "high": np.maximum(o, c) * np.exp(spread),
                  "low": np.minimum(o, c) * np.exp(-spread), "close": c}).to_csv(path, index=False,
                                                                                 float_format="%.4f")


@pytest.fixture(scope="module")
def book(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("book")
    for i in range(FILES):
        _write(folder / f"s{i:03d}.csv", BARS, 1000 + i)
    return folder


def _clean_run(mode: str, folder: Path) -> None:
    """Run one timing in a fresh interpreter: pytest-qt loads PySide6 here, whose import hook slows
    every function-level import (measured: about a fifth of a series' time in this process)."""
    run = subprocess.run([sys.executable, str(RUNS), mode, str(folder)], check=False, capture_output=True,
                         text=True)
    assert run.returncode == 0, run.stderr[-3000:]
    print("\n" + run.stdout.rstrip())


@pytest.mark.parametrize("mode", ["pandas", "parts", "dask", "garch"])
def test_bench_survey(book, mode):
    _clean_run(mode, book)


_WORKER = """
import resource, sys, time
from volbench.survey import SurveySettings, survey_paths
days = int(sys.argv[2])
s = SurveySettings.build(window=days, days=days, annualization=252 * 390,
                   cone_windows=(390, 1950, 8190, 16380, 24570, 49140))
t = time.perf_counter()
rec = survey_paths([sys.argv[1]], s)[0][0]
print(time.perf_counter() - t, resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, rec.error)
"""


@pytest.mark.parametrize("years", [1, 5])
def test_bench_one_minute_bars(tmp_path, years):
    n = years * 252 * MINUTES_PER_DAY
    big, small = tmp_path / "minutes.csv", tmp_path / "small.csv"
    _write(big, n, 7, freq="min")
    _write(small, 400, 8, freq="min")
    out = {}
    for name, path in (("small", small), ("big", big)):
        run = subprocess.run([sys.executable, "-c", _WORKER, str(path), str(21 * MINUTES_PER_DAY if name == "big"
                                                                        else 60)],
                             capture_output=True, text=True, check=True)
        secs, rss, err = run.stdout.split(maxsplit=2)
        out[name] = (float(secs), float(rss), err.strip())
    secs, rss, err = out["big"]
    print(f"\n{years} year(s) of 1-minute bars ({n:,} bars, {big.stat().st_size / 2**20:.0f} MiB CSV): survey "
          f"{secs:.1f} s in a fresh process, peak RSS {rss:.0f} MiB (a 400-bar file: {out['small'][1]:.0f} MiB); "
          f"error: {err}")
