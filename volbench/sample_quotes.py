"""Seeded generator of invented option quotes on one sample series, from a known smile plus noise.

The quotes are for the invented Ironvale Mining series of the Vell Harbour Exchange, as of its
last bar. Each quote's vol is the true smile
``sigma(k, T) = atm(T) + skew sqrt(0.25 / T) k + curvature k^2``, k = ln(K / F),
F = S e^{(r - q)T}, plus Gaussian noise; bid and ask are the Black-Scholes-Merton prices at that vol
less and plus a half-spread in vol points, rounded down and up to the tick. The true parameters go
into ``sample_prices/PARAMETERS.json`` under ``option_quotes``, so tests can compare what the
implied-vol code recovers with the truth. Nothing here describes a real market.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from volbench.pricing.bsm import bsm_price

QUOTE_SEED = 20261213
QUOTES_FOLDER = "quotes"


@dataclass(frozen=True)
class QuoteParams:
    """True parameters of a generated quotes file (all vols annualized decimals, ACT/365 years)."""

    file: str
    series_file: str
    as_of: str
    spot: float
    rate: float
    dividend_yield: float
    expiries: tuple[str, ...]
    atm_vols: tuple[float, ...]
    skew: float
    curvature: float
    strike_low: float
    strike_high: float
    strike_step: float
    noise_vol_points: float
    half_spread_vol_points: float
    tick: float
    seed: int
    smile: str = "sigma(k, T) = atm(T) + skew * sqrt(0.25 / T) * k + curvature * k^2, k = ln(K / F), F = S exp((r - q) T)"
    years: str = "calendar days from as_of to expiry / 365"

    def forward(self, years: float) -> float:
        return self.spot * math.exp((self.rate - self.dividend_yield) * years)

    def true_vol(self, strike, years: float, atm: float):
        k = np.log(np.asarray(strike, dtype=float) / self.forward(years))
        return atm + self.skew * math.sqrt(0.25 / years) * k + self.curvature * k * k


def _years(as_of: str, expiry: str) -> float:
    return (pd.Timestamp(expiry) - pd.Timestamp(as_of)).days / 365.0


def generate_quotes(p: QuoteParams) -> pd.DataFrame:
    """Quotes (Expiry, Strike, Type, Bid, Ask) for every expiry x strike x call/put of ``p``.

    Rows whose ask would be below one tick are left out (nobody quotes them).
    """
    rng = np.random.default_rng(p.seed)
    strikes = np.arange(p.strike_low, p.strike_high + p.strike_step / 2, p.strike_step)
    frames = []
    for expiry, atm in zip(p.expiries, p.atm_vols):
        t = _years(p.as_of, expiry)
        true = p.true_vol(strikes, t, atm)
        for kind in ("call", "put"):
            vol = true + rng.standard_normal(strikes.size) * p.noise_vol_points / 100.0
            lo = np.maximum(vol - p.half_spread_vol_points / 100.0, 1e-4)
            hi = vol + p.half_spread_vol_points / 100.0
            bid = bsm_price(p.spot, strikes, t, p.rate, lo, p.dividend_yield, kind)
            ask = bsm_price(p.spot, strikes, t, p.rate, hi, p.dividend_yield, kind)
            bid = np.floor(bid / p.tick + 1e-9) * p.tick
            ask = np.ceil(ask / p.tick - 1e-9) * p.tick
            frames.append(pd.DataFrame({"Expiry": expiry, "Strike": strikes, "Type": kind, "Bid": bid, "Ask": ask,
                                        "_order": np.arange(strikes.size)}))
    out = pd.concat(frames, ignore_index=True)
    out = out[out.Ask >= p.tick].sort_values(["Expiry", "_order", "Type"], kind="stable")
    return out.drop(columns="_order").reset_index(drop=True)


def ironvale_params(prices_csv: Path) -> QuoteParams:
    """The sample's parameters: as of the last bar of ``prices_csv``, spot its close."""
    prices = pd.read_csv(prices_csv)
    as_of, spot = str(prices["Date"].iloc[-1]), float(prices["Close"].iloc[-1])
    return QuoteParams(
        file=f"{QUOTES_FOLDER}/ironvale_mining_quotes.csv", series_file=prices_csv.name, as_of=as_of, spot=spot,
        rate=0.035, dividend_yield=0.01,
        expiries=("2024-11-15", "2024-12-20", "2025-01-17", "2025-03-21", "2025-06-20"),
        atm_vols=(0.28, 0.29, 0.295, 0.302, 0.308), skew=-0.12, curvature=0.35,
        strike_low=round(spot * 0.8), strike_high=round(spot * 1.2), strike_step=1.0,
        noise_vol_points=0.3, half_spread_vol_points=0.6, tick=0.01, seed=QUOTE_SEED,
    )


def write_sample_quotes(out: str | Path) -> dict:
    """Write the sample quotes under ``out/quotes/`` and return their true parameters (for PARAMETERS.json).

    Reads the Ironvale Mining prices already written in ``out`` for the as-of date and spot.
    """
    out = Path(out)
    p = ironvale_params(out / "ironvale_mining.csv")
    frame = generate_quotes(p)
    path = out / p.file
    path.parent.mkdir(parents=True, exist_ok=True)
    text = frame.assign(Strike=[f"{k:g}" for k in frame.Strike], Bid=[f"{b:.2f}" for b in frame.Bid],
                        Ask=[f"{a:.2f}" for a in frame.Ask])
    text.to_csv(path, index=False, lineterminator="\n")
    meta = asdict(p)
    meta["description"] = ("invented option quotes on Ironvale Mining (bid/ask), from the smile below plus "
                           "noise; price with --spot at the series' last close and the rate and yield here")
    meta["forwards"] = {e: p.forward(_years(p.as_of, e)) for e in p.expiries}
    return meta
