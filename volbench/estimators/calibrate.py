"""Regenerate the interval constants and measure the intervals' coverage by seeded simulation.

Run ``python -m volbench.estimators.calibrate`` to rewrite ``volbench/estimators/calibration.py``
(per-bar moments behind the effective degrees of freedom, and the discretisation bias of the range
estimators) and print the coverage table of docs/METHODS.md, "Confidence intervals and their
coverage". ``--check`` prints without writing. Every number comes from a fixed seed.

The simulation: driftless Brownian bars with exactly simulated highs and lows
(:mod:`volbench.estimators.simulate`), or, for the discretisation rows, bars whose high and low are
the extremes of M equally spaced trades. Coverage is measured on non-overlapping windows of n bars
through the same functions every command uses (the estimator's variance, its effective degrees of
freedom and the chi-square interval).
"""

from __future__ import annotations

import argparse
import math
from pathlib import Path

import numpy as np
import pandas as pd

from volbench.data.history import PriceHistory
from volbench.estimators import intervals
from volbench.estimators.registry import REGISTRY, dof_series
from volbench.estimators.simulate import LogBars, brownian_bars

SEED = 20_261_202
MOMENT_BARS = 4_000_000
BIAS_BARS = 100_000
BIAS_TRADES = 500
COVERAGE_WINDOWS = 2000
KEYS = ("close_to_close", "parkinson", "garman_klass", "rogers_satchell", "yang_zhang", "ewma")
RANGE_KEYS = ("parkinson", "garman_klass", "rogers_satchell", "yang_zhang")


def history_of(bars: LogBars, name: str = "simulated") -> PriceHistory:
    """A PriceHistory of simulated log bars (prices 100 x exp(log price); minute stamps as labels)."""
    n = bars.close.size
    dates = pd.date_range("2000-01-03", periods=n, freq="min").to_numpy()
    return PriceHistory(name=name, source=None, dates=dates, close=100 * np.exp(bars.close),
                        open=100 * np.exp(bars.open), high=100 * np.exp(bars.high), low=100 * np.exp(bars.low))


def session_moments(rng: np.random.Generator, bars: int = MOMENT_BARS, chunk: int = 500_000) -> dict[str, float]:
    """Var(gk), Var(rs) and Cov(c^2, rs) per bar of unit-variance driftless Brownian motion."""
    ln2 = math.log(2.0)
    sums = np.zeros(6)
    done = 0
    while done < bars:
        m = min(chunk, bars - done)
        b = brownian_bars(rng, m, substeps=8)
        u, d, c = b.high - b.open, b.low - b.open, b.close - b.open
        gk = 0.5 * (u - d) ** 2 - (2 * ln2 - 1) * c * c
        rs = u * (u - c) + d * (d - c)
        c2 = c * c
        sums += [gk.sum(), (gk * gk).sum(), rs.sum(), (rs * rs).sum(), c2.sum(), (c2 * rs).sum()]
        done += m
    g1, g2, r1, r2, c1, cr = sums / bars
    return {"GARMAN_KLASS_BAR_VARIANCE": g2 - g1 * g1, "ROGERS_SATCHELL_BAR_VARIANCE": r2 - r1 * r1,
            "SESSION_SQUARE_RS_COVARIANCE": cr - c1 * r1}


def discrete_bias(rng: np.random.Generator, trades: int = BIAS_TRADES, bars: int = BIAS_BARS) -> dict[str, float]:
    """c such that each range estimator's vol reads about -c / sqrt(trades) low on discrete trades."""
    v = 1e-4
    h = history_of(brownian_bars(rng, bars + 1, trades=trades, variance=v))
    out = {}
    for key in RANGE_KEYS:
        var = REGISTRY[key].variance(h, bars)[-1]
        out[key] = round(-(math.sqrt(var / v) - 1.0) * math.sqrt(trades), 2)
    return out


def coverage(key: str, n: int, rng: np.random.Generator, *, windows: int = COVERAGE_WINDOWS,
             trades: int | None = None, overnight_share: float = 0.0, confidence: float = 0.95,
             substeps: int = 8) -> tuple[float, float]:
    """(coverage, mean relative vol bias) of ``key``'s interval over ``windows`` windows of ``n`` bars.

    Per-bar variance 1e-4 (1 % a bar, so that long paths stay within floating point); windows do
    not overlap (EWMA, which uses every past return, is read every n bars after a 60-return start).
    """
    v = 1e-4
    spec = REGISTRY[key]
    lead = 60 if spec.memory == "all" else spec.extra_bars
    bars = brownian_bars(rng, lead + windows * n, substeps=substeps, trades=trades,
                         overnight_share=overnight_share, variance=v)
    h = history_of(bars)
    w = spec.whole_sample_window if spec.memory == "all" else n
    var = spec.variance(h, w)
    end = lead - 1 + n * np.arange(1, windows + 1)
    dof = dof_series(spec, h, w, var, {})
    dof = dof[end] if np.ndim(dof) else dof
    vol = np.sqrt(var[end] / v)
    lo, hi = intervals.chi2_interval(vol, dof, confidence)
    return float(np.mean((lo <= 1.0) & (1.0 <= hi))), float(np.mean(vol) - 1.0)


def coverage_table(seed: int = SEED, windows: int = COVERAGE_WINDOWS) -> list[dict]:
    """Rows of the coverage table: exact extremes at n = 10, 20, 60, 250 and discrete trades at 250."""
    rows = []
    cases = [(n, None) for n in (10, 20, 60, 250)] + [(250, 500), (250, 5000)]
    for i, (n, trades) in enumerate(cases):
        count = windows if trades is None or trades <= 500 else windows // 5
        row = {"n": n, "highs and lows": "exact" if trades is None else f"{trades} trades a bar"}
        for j, key in enumerate(KEYS):
            if trades is not None and key not in RANGE_KEYS and key != "close_to_close":
                continue
            rng = np.random.default_rng([seed, i, j])
            cov, bias = coverage(key, n, rng, windows=count, trades=trades)
            row[key] = (cov, bias)
        row["windows"] = count
        rows.append(row)
    return rows


def render(rows: list[dict]) -> str:
    head = "| n | highs and lows | windows | " + " | ".join(REGISTRY[k].label for k in KEYS) + " |"
    lines = [head, "|" + "---|" * (3 + len(KEYS))]
    for r in rows:
        cells = []
        for k in KEYS:
            if k not in r:
                cells.append("")
                continue
            cov, bias = r[k]
            cells.append(f"{cov:.1%}" + (f" (bias {bias:+.1%})" if abs(bias) >= 0.005 else ""))
        lines.append(f"| {r['n']} | {r['highs and lows']} | {r['windows']} | " + " | ".join(cells) + " |")
    return "\n".join(lines)


def write_constants(path: Path, moments: dict[str, float], bias: dict[str, float]) -> None:
    text = [('"""Constants measured by ``python -m volbench.estimators.calibrate`` (seeded simulation; '
             'do not edit by hand).'), '',
            'Per-bar moments of driftless Brownian motion with unit session variance, from exactly simulated',
            'highs and lows, and the vol bias of each range estimator on discretely traded prices:',
            f'vol reads about -c / sqrt(M) low with M trades a bar (c measured at M = {BIAS_TRADES}).', '"""', '']
    for k, v in moments.items():
        text.append(f"{k} = {v:.4f}")
    text.append(f"DISCRETE_BIAS = {bias!r}")
    text += [f"SEED = {SEED}", f"BARS = {MOMENT_BARS}", ""]
    path.write_text("\n".join(text), encoding="utf-8")


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(prog="python -m volbench.estimators.calibrate", description=__doc__.split("\n")[0])
    p.add_argument("--check", action="store_true", help="print the constants and table without writing")
    args = p.parse_args(argv)
    moments = session_moments(np.random.default_rng([SEED, 1]))
    bias = discrete_bias(np.random.default_rng([SEED, 2]))
    print("per-bar moments:", {k: round(v, 4) for k, v in moments.items()})
    print("discretisation bias c (vol ~ -c/sqrt(M)):", bias)
    if not args.check:
        write_constants(Path(__file__).with_name("calibration.py"), moments, bias)
        print("wrote", Path(__file__).with_name("calibration.py"))
    print(render(coverage_table()))
    return 0


if __name__ == "__main__":  # pragma: no cover - a maintenance script
    raise SystemExit(main())
