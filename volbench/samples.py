"""Seeded generator of the bundled demo data: an invented market, not real listings.

The scenario: the *Vell Harbour Exchange*, a fictional market on an invented island, lists a few
invented companies. Every series is simulated from a model whose parameters are written next to
the CSVs in ``PARAMETERS.json``, so tests and demos can compare estimates with the truth.

Run ``python -m volbench.samples --out sample_prices`` to (re)write the files; the committed files
equal what this writes (a test checks it).

Highs and lows come from a fine intraday path (``STEPS_PER_BAR`` steps a bar), so range
estimators are meaningful; with a finite number of steps they are still biased slightly low.
"""

from __future__ import annotations

import argparse
import json
from dataclasses import asdict, dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from volbench import sample_events
from volbench.sample_intraday import write_intraday_sample
from volbench.sample_quotes import write_sample_quotes

SEED = 20261201
STEPS_PER_BAR = 390
BARS_PER_YEAR = 252
START = "2019-01-02"
YEARS = 6
MARKET = "Vell Harbour Exchange (fictional)"


@dataclass(frozen=True)
class SeriesParams:
    file: str
    name: str
    description: str
    model: str
    annual_drift: float
    annual_vol: float  # long-run annualized vol of close-to-close returns
    overnight_share: float = 0.0  # share of each bar's variance that arrives between close and open
    garch_alpha: float | None = None
    garch_beta: float | None = None
    start_price: float = 50.0
    split_date: str | None = None  # unadjusted split: prices from this date on are divided by split_ratio
    split_ratio: float | None = None
    bad_rows: tuple[str, ...] = ()


SERIES = (
    SeriesParams("kestrel_orchards.csv", "KESTREL-ORCH", "Kestrel Orchards: fruit grower, steady",
                 "gbm", 0.06, 0.22, start_price=42.0),
    SeriesParams("ironvale_mining.csv", "IRONVALE-MIN", "Ironvale Mining: volatility clusters",
                 "garch11", 0.04, 0.32, garch_alpha=0.09, garch_beta=0.89, start_price=18.5),
    SeriesParams("saltmarsh_ferries.csv", "SALTMARSH-FRY", "Saltmarsh Ferries: large overnight gaps",
                 "gbm_gaps", 0.03, 0.30, overnight_share=0.4, start_price=73.0),
    SeriesParams("quillon_textiles.csv", "QUILLON-TEX", "Quillon Textiles: unadjusted 2:1 split, a few bad rows",
                 "gbm", 0.05, 0.25, start_price=120.0, split_date="2022-06-15", split_ratio=2.0,
                 bad_rows=("missing close", "non-numeric high", "high below low", "duplicate date", "bad tick")),
)


def _daily_variances(p: SeriesParams, n: int, rng: np.random.Generator) -> np.ndarray:
    v_long = p.annual_vol**2 / BARS_PER_YEAR
    if p.model != "garch11":
        return np.full(n, v_long)
    a, b = p.garch_alpha, p.garch_beta
    omega = v_long * (1 - a - b)
    z = rng.standard_normal(n)
    v = np.empty(n)
    v[0] = v_long
    for t in range(1, n):  # the GARCH recursion is inherently sequential; n is a few thousand
        v[t] = omega + a * v[t - 1] * z[t - 1] ** 2 + b * v[t - 1]
    return v


def simulate(p: SeriesParams, rng: np.random.Generator) -> pd.DataFrame:
    """OHLC bars for one series (unrounded, before bad rows are planted)."""
    dates = pd.bdate_range(START, periods=YEARS * BARS_PER_YEAR)
    n = len(dates)
    var = _daily_variances(p, n, rng)
    mu = p.annual_drift / BARS_PER_YEAR
    night = p.overnight_share * var
    day = var - night
    overnight = rng.standard_normal(n) * np.sqrt(night) + (mu - 0.5 * var) * p.overnight_share
    steps = rng.standard_normal((n, STEPS_PER_BAR)) * np.sqrt(day / STEPS_PER_BAR)[:, None]
    steps += ((mu - 0.5 * var) * (1 - p.overnight_share) / STEPS_PER_BAR)[:, None]
    path = np.cumsum(steps, axis=1)
    hi = np.maximum(path.max(axis=1), 0.0)
    lo = np.minimum(path.min(axis=1), 0.0)
    oc = path[:, -1]
    log_open = np.log(p.start_price) + np.cumsum(overnight + np.concatenate(([0.0], oc[:-1])))
    frame = pd.DataFrame({
        "Date": dates.strftime("%Y-%m-%d"),
        "Open": np.exp(log_open), "High": np.exp(log_open + hi),
        "Low": np.exp(log_open + lo), "Close": np.exp(log_open + oc),
        "Volume": rng.integers(20_000, 400_000, n),
    })
    if p.split_date:
        after = dates >= pd.Timestamp(p.split_date)
        for c in ("Open", "High", "Low", "Close"):
            frame.loc[after, c] /= p.split_ratio
    return frame


def _plant_bad_rows(frame: pd.DataFrame) -> pd.DataFrame:
    """Deliberate defects for the import checks (documented in PARAMETERS.json)."""
    f = frame.astype({c: object for c in ("Open", "High", "Low", "Close")}).copy()
    f.loc[100, "Close"] = ""                      # missing close
    f.loc[200, "High"] = "n/a"                    # non-numeric high
    hi, lo = f.loc[300, "High"], f.loc[300, "Low"]
    f.loc[300, "High"], f.loc[300, "Low"] = lo, hi  # high below low
    dup = f.loc[[400]].copy()                     # duplicate date, later line slightly different
    dup["Close"] = float(dup["Close"].iloc[0]) * 1.001
    tick = 500                                    # bad tick: close x10 for one bar, fixed next bar
    f.loc[tick, "Close"] = float(f.loc[tick, "Close"]) * 10
    f.loc[tick, "High"] = f.loc[tick, "Close"]
    return pd.concat([f.iloc[:401], dup, f.iloc[401:]], ignore_index=True)


def _fmt(frame: pd.DataFrame) -> pd.DataFrame:
    out = frame.copy()
    for c in ("Open", "High", "Low", "Close"):
        out[c] = [v if isinstance(v, str) else f"{v:.4f}" for v in out[c]]
    return out


def write_samples(out: str | Path) -> list[Path]:
    """Write every sample CSV and ``PARAMETERS.json`` into ``out``; return the CSV paths."""
    out = Path(out)
    out.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(SEED)
    paths = []
    for p in SERIES:
        frame = sample_events.plant(p.file, simulate(p, rng))
        if p.bad_rows:
            frame = _plant_bad_rows(frame)
        path = out / p.file
        _fmt(frame).to_csv(path, index=False, lineterminator="\n")
        paths.append(path)
    # a close-only index level file, semicolon-separated with decimal commas, newest row first
    idx = simulate(SeriesParams("", "", "", "gbm", 0.05, 0.16, start_price=1000.0), rng)
    levels = pd.DataFrame({"Date": idx["Date"], "Last": [f"{v:.2f}".replace(".", ",") for v in idx["Close"]]})
    index_path = out / "vell_harbour_index.csv"
    levels.iloc[::-1].to_csv(index_path, index=False, sep=";", lineterminator="\n")
    paths.append(index_path)
    meta = {
        "market": MARKET,
        "generator": "python -m volbench.samples --out sample_prices",
        "seed": SEED,
        "steps_per_bar": STEPS_PER_BAR,
        "bars_per_year": BARS_PER_YEAR,
        "start": START,
        "bars": YEARS * BARS_PER_YEAR,
        "series": [asdict(p) for p in SERIES] + [{
            "file": index_path.name, "name": "VELL-HARBOUR-IDX",
            "description": "Vell Harbour all-share index level: close only, ';' separated, decimal commas, "
                           "newest first", "model": "gbm", "annual_drift": 0.05, "annual_vol": 0.16}],
        "bad_rows_in_quillon": {"line 102": "missing close", "line 202": "non-numeric high",
                                "line 302": "high below low", "line 403": "duplicate of line 402's date",
                                "line 503": "bad tick (close x10 for one bar)"},
        "intraday": write_intraday_sample(out),
    }
    meta["option_quotes"] = write_sample_quotes(out)
    meta["events"] = sample_events.write_events(out, pd.bdate_range(START, periods=YEARS * BARS_PER_YEAR))
    (out / "PARAMETERS.json").write_text(json.dumps(meta, indent=2) + "\n")
    return paths


def sample_files() -> list[str]:
    """The bundled sample files: ./sample_prices, else the folder beside the package (empty when neither exists)."""
    for folder in (Path.cwd() / "sample_prices", Path(__file__).resolve().parents[1] / "sample_prices"):
        files = sorted(folder.glob("*.csv"))
        if files:
            return [str(f) for f in files]
    return []


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(prog="python -m volbench.samples", description=__doc__.splitlines()[0])
    ap.add_argument("--out", default="sample_prices", help="folder to write into (default: sample_prices)")
    args = ap.parse_args(argv)
    for p in write_samples(args.out):
        print(p)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
