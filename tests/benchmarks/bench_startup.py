"""Benchmark: start-up of the command line and first paint of the window, in fresh processes.

Run: make bench (or QT_QPA_PLATFORM=offscreen .venv/bin/pytest -q -s tests/benchmarks/bench_startup.py
-o addopts="--import-mode=importlib")

* ``volbench --help`` and ``volbench price ...`` (wall time of a fresh process) against
  ``python -c "import numpy"`` in the same run. Target: at most 3x.
* The window (``volbench gui FILE`` through the command line's ``main``, offscreen): time from
  process start to the first paint of a top-level window, and to the first paint of the workbench
  window itself, against a bare PySide6 window holding one pyqtgraph plot. Target: first paint at
  most 1.5x.

Each figure is the median of several fresh processes; the machine is shared, so ratios are the point.
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

RUNS = 5

_FIRST_PAINT = """
import os, sys, time
from PySide6.QtCore import QEvent, QObject
from PySide6.QtWidgets import QApplication

class Watch(QObject):
    first = None
    def eventFilter(self, obj, event):
        if event.type() == QEvent.Type.Paint and obj.isWidgetType():
            now = time.perf_counter()
            if Watch.first is None:
                Watch.first = now
            if obj.window().objectName() != "start_frame":
                print(f"{Watch.first} {now}", flush=True)
                os._exit(0)
        return False

watch = Watch()
app = QApplication([sys.argv[0]])
app.installEventFilter(watch)
if sys.argv[1] == "bare":
    import pyqtgraph as pg
    from PySide6.QtWidgets import QMainWindow
    window = QMainWindow()
    plot = pg.PlotWidget()
    plot.plot([0.0, 1.0, 2.0, 3.0], [1.0, 3.0, 2.0, 4.0])
    window.setCentralWidget(plot)
    window.resize(1360, 900)
    window.show()
    app.exec()
else:
    from volbench.cli import main
    main(["gui", sys.argv[2]])
"""


def _wall(args: list[str], env=None) -> float:
    t = time.perf_counter()
    subprocess.run(args, check=True, capture_output=True, env=env)
    return time.perf_counter() - t


def _paint(mode: str, file: Path) -> tuple[float, float]:
    """Seconds from launching the process to the first paint of any window, and of the real one."""
    env = {**os.environ, "QT_QPA_PLATFORM": "offscreen"}
    t = time.perf_counter()
    done = subprocess.run([sys.executable, "-c", _FIRST_PAINT, mode, str(file)], check=True, capture_output=True,
                          text=True, env=env, timeout=120)
    first, real = (float(x) for x in done.stdout.split())
    # perf_counter is CLOCK_MONOTONIC on Linux, shared across processes
    return first - t, real - t


def test_bench_cli_startup():
    volbench = str(Path(sys.executable).with_name("volbench"))
    cases = {
        'python -c "import numpy"': [sys.executable, "-c", "import numpy"],
        "volbench --help": [volbench, "--help"],
        "volbench price (spot 100, strike 105, rate 3%, vol 25%, 0.5 y)": [
            volbench, "price", "--spot", "100", "--strike", "105", "--rate", "0.03", "--vol", "0.25", "--years", "0.5"],
    }
    times = {name: [] for name in cases}
    for _ in range(RUNS):  # interleaved, so a burst of load hits every case alike
        for name, args in cases.items():
            times[name].append(_wall(args))
    base = statistics.median(times['python -c "import numpy"'])
    print(f"\nstart-up, median of {RUNS} fresh processes (baseline python -c \"import numpy\": {base * 1000:.0f} ms)")
    for name, ts in times.items():
        med = statistics.median(ts)
        print(f"  {name:<58} {med * 1000:7.0f} ms  {med / base:5.2f}x the baseline (target <= 3x)")


def test_bench_window_first_paint(tmp_path):
    rng = np.random.default_rng(11)
    close = 100 * np.exp(np.cumsum(rng.normal(0, 0.01, 1260)))
    file = tmp_path / "fict.csv"
    pd.DataFrame({"date": pd.bdate_range("2020-01-01", periods=1260).strftime("%Y-%m-%d"),
                  "close": close}).to_csv(file, index=False)
    bare, first, real = [], [], []
    for _ in range(RUNS):
        bare.append(_paint("bare", file)[0])
        f, r = _paint("volbench", file)
        first.append(f)
        real.append(r)
    b, f, r = (statistics.median(x) for x in (bare, first, real))
    print(f"\nwindow first paint, median of {RUNS} fresh processes (offscreen): bare PySide6 window with one "
          f"pyqtgraph plot {b * 1000:.0f} ms; volbench gui FILE: start frame {f * 1000:.0f} ms ({f / b:.2f}x, "
          f"target <= 1.5x), workbench window {r * 1000:.0f} ms ({r / b:.2f}x)")
