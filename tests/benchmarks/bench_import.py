"""Benchmark: importing price files against a bare pandas baseline on the same files.

Run: make bench (or .venv/bin/pytest -q -s tests/benchmarks/bench_import.py -o addopts="--import-mode=importlib")

Two workloads, generated here (invented prices, seeded):

* one OHLCV file of 2,000,000 minute bars through ``volbench check`` (the whole command: read,
  parse, every quality check, the findings table), against ``pandas.read_csv`` +
  ``pandas.to_datetime`` of the same file. Each is run in a fresh process; the time is measured
  inside the process (interpreter start and imports excluded) and the memory is the process's
  peak resident size (``resource.getrusage``), also shown above an import-only process of the same
  libraries. Targets: at most 2.5x the baseline's time and 2x its peak memory.
* 500 files of 2,520 daily bars through :func:`volbench.data.load_many` in one warm process,
  against a loop of ``read_csv`` + ``to_datetime`` (and of ``read_csv`` alone). Target: at most 3x.

Ratios, not times, are the point: the machine is shared.
"""

from __future__ import annotations

import json
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

ROWS = 2_000_000
FILES, BARS = 500, 2520
RUNS = 3

_BASELINE = """
import json, resource, sys, time
import pandas as pd
t0 = time.perf_counter()
df = pd.read_csv(sys.argv[1])
dates = pd.to_datetime(df["Date"])
t = time.perf_counter() - t0
print(json.dumps({"seconds": t, "rss_kib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, "rows": len(df)}))
"""
_VOLBENCH = """
import contextlib, io, json, resource, sys, time
from volbench.cli import main
out = io.StringIO()
t0 = time.perf_counter()
with contextlib.redirect_stdout(out):
    code = main(["check", sys.argv[1]])
t = time.perf_counter() - t0
print(json.dumps({"seconds": t, "rss_kib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, "code": code,
                  "head": out.getvalue()[:300]}))
"""
_IMPORTS_BASELINE = """
import json, resource
import pandas as pd
print(json.dumps({"rss_kib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss}))
"""
_IMPORTS_VOLBENCH = """
import json, resource
from volbench.cli import main
print(json.dumps({"rss_kib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss}))
"""


def _ohlc(n: int, seed: int, freq: str, start: str) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    r = rng.normal(0, 0.25 / np.sqrt(252 * (390 if freq == "min" else 1)), n)
    close = 100 * np.exp(np.cumsum(r))
    open_ = np.concatenate([[100.0], close[:-1]]) * np.exp(rng.normal(0, 0.0002, n))
    high = np.maximum(open_, close) * (1 + np.abs(rng.normal(0, 0.001, n)))
    low = np.minimum(open_, close) * (1 - np.abs(rng.normal(0, 0.001, n)))
    dates = pd.date_range(start, periods=n, freq=freq) if freq == "min" else pd.bdate_range(start, periods=n)
    return pd.DataFrame({"Date": dates, "Open": open_, "High": high, "Low": low, "Close": close,
                         "Volume": rng.integers(1000, 100000, n)})


def _run(code: str, path: Path | None = None) -> dict:
    args = [sys.executable, "-c", code] + ([str(path)] if path else [])
    done = subprocess.run(args, capture_output=True, text=True, check=True)
    return json.loads(done.stdout.strip().splitlines()[-1])


def test_bench_import_large_file():
    with tempfile.TemporaryDirectory() as d:
        path = Path(d) / "minute_bars.csv"
        _ohlc(ROWS, 1, "min", "2015-01-05 09:30").to_csv(path, index=False, float_format="%.4f",
                                                          date_format="%Y-%m-%d %H:%M:%S")
        size_mb = path.stat().st_size / 1e6
        base = [_run(_BASELINE, path) for _ in range(RUNS)]
        ours = [_run(_VOLBENCH, path) for _ in range(RUNS)]
        idle_base, idle_ours = _run(_IMPORTS_BASELINE), _run(_IMPORTS_VOLBENCH)
    assert all(o["code"] == 0 for o in ours) and base[0]["rows"] == ROWS
    tb, to = statistics.median(b["seconds"] for b in base), statistics.median(o["seconds"] for o in ours)
    mb, mo = (statistics.median(x["rss_kib"] for x in runs) / 1024 for runs in (base, ours))
    ib, io_ = idle_base["rss_kib"] / 1024, idle_ours["rss_kib"] / 1024
    print(f"\nimport of one file, {ROWS:,} minute bars ({size_mb:.0f} MB), median of {RUNS} fresh processes:")
    print(f"  volbench check              {to:6.2f} s   peak RSS {mo:7.0f} MiB ({mo - io_:6.0f} above its imports)")
    print(f"  read_csv + to_datetime      {tb:6.2f} s   peak RSS {mb:7.0f} MiB ({mb - ib:6.0f} above its imports)")
    print(f"  ratio                       {to / tb:6.2f}x (target <= 2.5x: {'met' if to / tb <= 2.5 else 'NOT met'})"
          f"   memory {mo / mb:4.2f}x (target <= 2x: {'met' if mo / mb <= 2 else 'NOT met'};"
          f" above imports {(mo - io_) / (mb - ib):4.2f}x)")
    print(f"  first lines of the check output: {ours[0]['head'].splitlines()[0]}")


def test_bench_import_many_files():
    from volbench.data import load_many

    with tempfile.TemporaryDirectory() as d:
        paths = []
        for i in range(FILES):
            p = Path(d) / f"fict_{i:03d}.csv"
            _ohlc(BARS, 100 + i, "B", "2005-01-03").to_csv(p, index=False, float_format="%.4f",
                                                            date_format="%Y-%m-%d")
            paths.append(p)

        def baseline():
            for p in paths:
                df = pd.read_csv(p)
                pd.to_datetime(df["Date"])

        def read_only():
            for p in paths:
                pd.read_csv(p)

        def ours():
            return load_many(paths)

        ours()  # warm up every path once
        times = {}
        for name, fn in (("baseline", baseline), ("read_csv", read_only), ("volbench", ours)):
            runs = []
            for _ in range(RUNS):
                t0 = time.perf_counter()
                fn()
                runs.append(time.perf_counter() - t0)
            times[name] = statistics.median(runs)
        assert len(ours()) == FILES
    t = times
    print(f"\nimport of {FILES} files x {BARS:,} daily bars, warm process, median of {RUNS}:")
    print(f"  volbench load_many          {t['volbench']:6.2f} s")
    print(f"  read_csv + to_datetime loop {t['baseline']:6.2f} s   ratio {t['volbench'] / t['baseline']:5.2f}x "
          f"(target <= 3x: {'met' if t['volbench'] / t['baseline'] <= 3 else 'NOT met'})")
    print(f"  read_csv loop               {t['read_csv']:6.2f} s   ratio {t['volbench'] / t['read_csv']:5.2f}x")
