"""Seeded generator of the bundled intraday demo series: invented, not a real listing.

*Gullridge Energy*, a fictional company on the fictional Vell Harbour Exchange, trades from 09:30
to 16:00 on business days. Its file holds six months of 5-minute OHLC bars stamped at each bar's
start. The efficient log price is a Brownian motion whose daily variance follows a log-AR(1)
(so volatility clusters and a HAR forecast has something to find), with a share of each day's
variance arriving overnight and a few planted jumps inside sessions. Trades print at the bid or
the ask at random around the efficient price (bid-ask bounce), a little noise that the signature
plot can see at the shortest intervals. Every parameter and each jump's date, time and size are
written to ``PARAMETERS.json`` (key ``"intraday"``) by :func:`write_intraday_sample`.

The file goes into ``intraday/`` below the sample folder, so that tools opening
``sample_prices/*.csv`` as daily files do not pick it up before intraday files are analysed by day.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass
from pathlib import Path

import numpy as np
import pandas as pd
from scipy.signal import lfilter

INTRADAY_SEED = 20261212
TRADING_DAYS = 252


@dataclass(frozen=True)
class IntradayParams:
    file: str = "intraday/gullridge_energy_5min.csv"
    name: str = "GULLRIDGE-EN"
    description: str = ("Gullridge Energy: 5-minute bars 09:30-16:00, volatility that clusters, a few "
                        "planted jumps, a little bid-ask noise")
    start: str = "2024-01-02"
    sessions: int = 126
    session_open: str = "09:30"
    bar_minutes: int = 5
    bars_per_session: int = 78
    ticks_per_bar: int = 10
    annual_vol: float = 0.28  # long-run vol of the diffusion, overnight included, without the jumps
    overnight_share: float = 0.15  # share of each day's diffusive variance that arrives overnight
    log_variance_persistence: float = 0.92  # daily AR(1) coefficient of log variance
    log_variance_shock_sd: float = 0.20  # daily shock to log variance
    half_spread: float = 0.0003  # bid-ask bounce: trades print at +- this in log price
    jumps: int = 4
    jump_size_min: float = 0.02  # absolute log jump, drawn uniformly between min and max
    jump_size_max: float = 0.035
    start_price: float = 36.0


def daily_variances(p: IntradayParams, rng: np.random.Generator) -> np.ndarray:
    """Per-day diffusive variance with mean annual_vol^2 / 252 (log-AR(1), started stationary)."""
    phi, s = p.log_variance_persistence, p.log_variance_shock_sd
    stat_sd = s / np.sqrt(1 - phi**2)
    eta = rng.standard_normal(p.sessions) * s
    x = lfilter([1.0], [1.0, -phi], eta, zi=[phi * rng.standard_normal() * stat_sd])[0]
    return p.annual_vol**2 / TRADING_DAYS * np.exp(x - 0.5 * stat_sd**2)


def simulate_intraday(p: IntradayParams, rng: np.random.Generator) -> tuple[pd.DataFrame, list[dict]]:
    """5-minute OHLC bars (unrounded) and the planted jumps."""
    days, bars, steps = p.sessions, p.bars_per_session, p.ticks_per_bar
    n = bars * steps
    v = daily_variances(p, rng)
    inc = rng.standard_normal((days, n)) * np.sqrt(v * (1 - p.overnight_share) / n)[:, None]
    jump_days = np.sort(rng.choice(np.arange(1, days), size=p.jumps, replace=False))
    jump_bars = rng.integers(1, bars - 1, size=p.jumps)
    sizes = rng.uniform(p.jump_size_min, p.jump_size_max, p.jumps) * rng.choice([-1.0, 1.0], p.jumps)
    inc[jump_days, (jump_bars + 1) * steps - 1] += sizes
    night = rng.standard_normal(days) * np.sqrt(v * p.overnight_share)
    night[0] = 0.0
    path = np.concatenate((np.zeros((days, 1)), np.cumsum(inc, axis=1)), axis=1)
    opens = np.log(p.start_price) + np.cumsum(night + np.concatenate(([0.0], path[:-1, -1])))
    ticks = opens[:, None] + path + p.half_spread * rng.choice([-1.0, 1.0], size=path.shape)
    o, c = ticks[:, 0:n:steps], ticks[:, steps::steps]
    inner = ticks[:, :-1].reshape(days, bars, steps)
    h, lo = np.maximum(inner.max(axis=2), c), np.minimum(inner.min(axis=2), c)
    dates = pd.bdate_range(p.start, periods=days)
    first = pd.Timedelta(p.session_open + ":00")
    stamps = pd.DatetimeIndex((dates.values[:, None] + np.timedelta64(first)
                               + np.arange(bars)[None, :] * np.timedelta64(p.bar_minutes, "m")).ravel())
    frame = pd.DataFrame({"Timestamp": stamps.strftime("%Y-%m-%d %H:%M"), "Open": np.exp(o).ravel(),
                          "High": np.exp(h).ravel(), "Low": np.exp(lo).ravel(), "Close": np.exp(c).ravel()})
    planted = [{"date": dates[d].strftime("%Y-%m-%d"), "bar": stamps[d * bars + b].strftime("%H:%M"),
                "log_size": round(float(s), 6)} for d, b, s in zip(jump_days, jump_bars, sizes)]
    return frame, planted


def write_intraday_sample(out: str | Path) -> dict:
    """Write the intraday CSV below ``out`` and return its entry for ``PARAMETERS.json``."""
    p = IntradayParams()
    frame, planted = simulate_intraday(p, np.random.default_rng(INTRADAY_SEED))
    path = Path(out) / p.file
    path.parent.mkdir(parents=True, exist_ok=True)
    frame.to_csv(path, index=False, float_format="%.4f", lineterminator="\n")
    return {**asdict(p), "seed": INTRADAY_SEED, "planted_jumps": planted,
            "timestamps": "start of each bar, exchange local time"}
