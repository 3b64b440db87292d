"""Implied vols per quote, the forward from put-call parity, ATM vols, term structure and calendar arbitrage."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pandas as pd
import pytest

from volbench.errors import VolbenchError
from volbench.market import forward_variance, implied_surface, read_quotes
from volbench.market.surface import atm_from_smile, parity_forward
from volbench.pricing.bsm import bsm_price
from volbench.sample_quotes import QuoteParams, generate_quotes

AS_OF = "2025-01-15"


def _exact_quotes(tmp_path, vol_of_strike, *, spot=50.0, rate=0.03, q=0.01,
                  expiries=("2025-02-21", "2025-04-17"), strikes=(40, 45, 48, 50, 52, 55, 60), kinds=("call", "put")):
    rows = []
    for e in expiries:
        t = (pd.Timestamp(e) - pd.Timestamp(AS_OF)).days / 365
        for k in strikes:
            for kind in kinds:
                rows.append(f"{e},{k},{kind},{bsm_price(spot, k, t, rate, vol_of_strike(k, t), q, kind)!r}")
    p = tmp_path / "exact.csv"
    p.write_text("expiry,strike,type,mid\n" + "\n".join(rows) + "\n")
    return read_quotes(p)


def test_flat_vol_is_recovered_exactly_with_the_parity_forward(tmp_path):
    # Common practice, no source: exact BSM premiums at one vol give that vol back at every strike,
    # the parity forward equals S e^{(r - q)T} (put-call parity, e.g. Hull) and the ATM vol is the vol.
    quotes = _exact_quotes(tmp_path, lambda k, t: 0.3)
    s = implied_surface(quotes, spot=50, rate=0.03, as_of=AS_OF)  # dividend yield 0 here: parity overrides
    ok = s.quotes[s.quotes.status == "ok"]
    assert len(ok) == len(s.quotes) == 28
    assert np.max(np.abs(ok.implied_vol - 0.3)) < 1e-8
    for e in s.expiries:
        assert e.forward == pytest.approx(50 * math.exp(0.02 * e.life.years), rel=1e-12)
        assert e.forward_source == "put-call parity, 3 pairs"
        assert e.implied_dividend_yield == pytest.approx(0.01, abs=1e-10)
        assert e.atm_implied_vol == pytest.approx(0.3, abs=1e-8)
    first, second = s.expiries
    assert first.forward_implied_vol == pytest.approx(0.3, abs=1e-8) and first.previous_expiry is None
    assert second.forward_implied_vol == pytest.approx(0.3, abs=1e-6) and not second.calendar_arbitrage
    d = s.as_dict()
    assert set(d["quotes"][0]) >= {"expiry", "strike", "type", "premium", "years", "implied_vol", "status"}
    assert set(d["term_structure"][0]) >= {"expiry", "trading_days", "years", "atm_implied_vol", "forward_implied_vol"}
    assert d["quotes"][0]["expiry"] == "2025-02-21"


def test_atm_is_interpolated_on_the_forward_moneyness_axis(tmp_path):
    # A smile linear in ln(K/F): linear interpolation at ln(K/F) = 0 returns its level exactly.
    spot, rate, q = 50.0, 0.03, 0.01

    def smile(k, t):
        return 0.25 - 0.2 * math.log(k / (spot * math.exp((rate - q) * t)))

    quotes = _exact_quotes(tmp_path, smile, kinds=("call", "put"))
    s = implied_surface(quotes, spot=spot, rate=rate, as_of=AS_OF)
    for e in s.expiries:
        assert e.atm_implied_vol == pytest.approx(0.25, abs=1e-8)
        # the smile points are out of the money: puts below the forward, calls at and above
        below = e.smile[e.smile.moneyness < 0]
        above = e.smile[e.smile.moneyness >= 0]
        assert set(below.type) == {"put"} and set(above.type) == {"call"}


def test_without_pairs_the_forward_comes_from_spot_and_carry(tmp_path):
    quotes = _exact_quotes(tmp_path, lambda k, t: 0.2, kinds=("call",))
    s = implied_surface(quotes, spot=50, rate=0.03, dividend_yield=0.01, as_of=AS_OF)
    e = s.expiries[0]
    assert e.forward_source == "spot and carry"
    assert e.forward == pytest.approx(50 * math.exp(0.02 * e.life.years), rel=1e-14)
    assert e.atm_implied_vol == pytest.approx(0.2, abs=1e-8)


def test_parity_forward_and_atm_helpers():
    # F = K + e^{rT}(C - P) (put-call parity; e.g. Hull); hand numbers.
    calls = pd.Series([5.0, 2.0, 0.5], index=[95.0, 100.0, 105.0])
    puts = pd.Series([0.6, 1.9, 5.2], index=[95.0, 100.0, 105.0])
    f, n = parity_forward(calls, puts, 0.5, 0.04)
    g = math.exp(0.02)
    assert n == 3
    assert f == pytest.approx(np.median([95 + g * 4.4, 100 + g * 0.1, 105 - g * 4.7]), rel=1e-15)
    assert parity_forward(calls, puts.rename(index=lambda k: k + 1), 0.5, 0.04) is None
    smile = pd.DataFrame({"moneyness": [-0.1, -0.02, 0.03], "implied_vol": [0.3, 0.26, 0.24]})
    vol, note = atm_from_smile(smile)
    assert note is None and vol == pytest.approx(0.26 + (0.02 / 0.05) * (0.24 - 0.26), rel=1e-14)
    vol, note = atm_from_smile(smile[smile.moneyness < 0])
    assert vol is None and "does not extrapolate" in note


def test_forward_variance_formula():
    # docs/METHODS.md, "Implied vol and option quotes": (s2^2 T2 - s1^2 T1) / (T2 - T1); hand numbers.
    assert forward_variance(0.2, 0.25, 0.25, 0.5) == pytest.approx((0.03125 - 0.01) / 0.25, rel=1e-14)
    assert forward_variance(0.4, 0.25, 0.2, 0.5) < 0
    with pytest.raises(VolbenchError, match="forward variance needs T2 > T1"):
        forward_variance(0.2, 0.5, 0.2, 0.5)


def _planted(tmp_path, atm_vols):
    p = QuoteParams(file="planted.csv", series_file="", as_of=AS_OF, spot=50.0, rate=0.03, dividend_yield=0.0,
                    expiries=("2025-02-14", "2025-03-14", "2025-06-20"), atm_vols=atm_vols, skew=-0.1,
                    curvature=0.3, strike_low=40, strike_high=60, strike_step=1.0, noise_vol_points=0.0,
                    half_spread_vol_points=0.2, tick=0.01, seed=7)
    path = tmp_path / "planted.csv"
    generate_quotes(p).to_csv(path, index=False)
    return implied_surface(read_quotes(path), spot=50.0, rate=0.03, as_of=AS_OF)


def test_planted_calendar_arbitrage_is_flagged(tmp_path):
    # Planted: 40 % to 2025-02-14, then 20 % to 2025-03-14: total variance falls (0.4^2 x 30/365 >
    # 0.2^2 x 58/365), a calendar arbitrage; the third expiry is consistent with the second.
    s = _planted(tmp_path, (0.40, 0.20, 0.22))
    first, second, third = s.expiries
    assert not first.calendar_arbitrage
    assert second.calendar_arbitrage and second.forward_implied_vol is None and second.forward_variance < 0
    assert second.previous_expiry == "2025-02-14"
    assert second.forward_variance == pytest.approx(forward_variance(first.atm_implied_vol, first.life.years,
                                                                     second.atm_implied_vol, second.life.years))
    assert not third.calendar_arbitrage and third.previous_expiry == "2025-03-14"
    assert s.as_dict()["term_structure"][1]["calendar_arbitrage"] is True
    clean = _planted(tmp_path, (0.22, 0.23, 0.24))
    assert not any(e.calendar_arbitrage for e in clean.expiries)


def test_expired_quotes_are_findings_and_refused_premiums_keep_their_row(tmp_path):
    p = tmp_path / "q.csv"
    p.write_text("expiry,strike,type,mid\n2025-01-10,50,call,1\n2025-01-15,50,call,1\n"
                 "2025-03-21,51,call,2.5\n2025-03-21,40,call,5.0\n")
    s = implied_surface(read_quotes(p), spot=50, rate=0.0, as_of=AS_OF)
    assert [(f.kind, f.line) for f in s.findings] == [("expired", 2), ("expired", 3)]
    assert "expiry 2025-01-10 is not after the as-of date 2025-01-15" in s.findings[0].message
    row = s.quotes.set_index("line").loc[5]
    assert row.status == "below_lower_bound" and np.isnan(row.implied_vol)  # 5.0 < intrinsic 10
    assert s.expiries[0].atm_note is not None  # one usable strike cannot bracket the forward
    with pytest.raises(VolbenchError, match="every quote expires on or before the as-of date 2025-06-01"):
        implied_surface(read_quotes(p), spot=50, rate=0.0, as_of="2025-06-01")


def test_bad_market_inputs(tmp_path):
    quotes = _exact_quotes(tmp_path, lambda k, t: 0.3)
    with pytest.raises(VolbenchError, match="spot must be a positive price, got -1"):
        implied_surface(quotes, spot=-1, rate=0.03, as_of=AS_OF)
    with pytest.raises(VolbenchError, match="rate must be a decimal between -1 and 1"):
        implied_surface(quotes, spot=50, rate=3, as_of=AS_OF)
    s = implied_surface(quotes, spot=50, rate=0.03, as_of=AS_OF)
    assert s.expiry("2025-04-17").expiry == "2025-04-17"
    with pytest.raises(VolbenchError, match="no expiry 2025-05-01 in the quotes; they hold: 2025-02-21, 2025-04-17"):
        s.expiry("2025-05-01")
    assert dataclasses.is_dataclass(s) and s.term_structure().shape[0] == 2
