"""Regenerate the family false-alarm table by seeded simulation.

``python -m volbench.scaling.calibrate`` runs the scaling check on seeded Gaussian random walks of
several lengths, records each property's p-value, and writes to
``volbench/scaling/false_alarm_table.py``, per length and level, the share of series with at least
one property below the level (at least one non-"consistent" verdict) and the share with any
"rejected" (Holm). It also prints each property's
own rate (its test's size) and the share with any "rejected" (Holm), for docs/METHODS.md, "Brownian-scaling check".
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np
import pandas as pd

from volbench.data.history import PriceHistory
from volbench.scaling.check import scaling_check
from volbench.scaling.verdicts import family_statuses

SEED = 20_261_203
SERIES = 1000
LENGTHS = (63, 126, 252, 504, 1260, 2520, 5040)
ALPHAS = (0.01, 0.02, 0.05, 0.1, 0.2)


def brownian_history(rng: np.random.Generator, n_returns: int, name: str = "brownian") -> PriceHistory:
    """Closes of a Gaussian random walk (1 % a bar) with consecutive calendar dates."""
    close = 100 * np.exp(np.concatenate(([0.0], np.cumsum(rng.normal(0.0, 0.01, n_returns)))))
    dates = pd.date_range("2000-01-03", periods=n_returns + 1, freq="D").to_numpy()
    return PriceHistory(name=name, source=None, dates=dates, close=close)


def p_values(n_returns: int, series: int, seed: int) -> np.ndarray:
    """(series, 4) p-values of the four properties on seeded random walks."""
    rng = np.random.default_rng([seed, n_returns])
    out = np.empty((series, 4))
    for i in range(series):
        res = scaling_check(brownian_history(rng, n_returns))
        out[i] = [v.p_value for v in res.verdicts]
    return out


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(prog="python -m volbench.scaling.calibrate", description=__doc__.split("\n")[0])
    p.add_argument("--series", type=int, default=SERIES, help="series per length (default %(default)s)")
    p.add_argument("--check", action="store_true", help="print without writing the table")
    args = p.parse_args(argv)
    table = {}
    print("| returns | level | each property non-consistent (variance, normal, independent, drift) | "
          "any non-consistent | any rejected |")
    print("|---|---|---|---|---|")
    for n in LENGTHS:
        pv = p_values(n, args.series, SEED)
        table[n] = {}
        for a in ALPHAS:
            below = pv < a
            anyrej = float(np.mean([("rejected" in family_statuses(list(row), a)) for row in pv]))
            table[n][a] = (round(float(below.any(axis=1).mean()), 4), round(anyrej, 4))
            if a == 0.05:
                each = ", ".join(f"{x:.1%}" for x in below.mean(axis=0))
                print(f"| {n} | {a:g} | {each} | {table[n][a][0]:.1%} | {anyrej:.1%} |", flush=True)
    if not args.check:
        path = Path(__file__).with_name("false_alarm_table.py")
        lines = ['"""Written by ``python -m volbench.scaling.calibrate`` (seeded simulation; do not edit by hand)."""',
                 "", f"SEED = {SEED}", f"SERIES = {args.series}", f"ALPHAS = {ALPHAS!r}", f"LENGTHS = {LENGTHS!r}",
                 "TABLE = {"]
        lines += [f"    {n}: {table[n]!r}," for n in LENGTHS]
        lines += ["}", ""]
        path.write_text("\n".join(lines), encoding="utf-8")
        print("wrote", path)
    return 0


if __name__ == "__main__":  # pragma: no cover - a maintenance script
    raise SystemExit(main())
