"""Implied vol of one premium: round trip, no-arbitrage bounds, negligible vega, statuses."""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from volbench.errors import VolbenchError
from volbench.pricing.bsm import bsm_greeks, bsm_price
from volbench.pricing.implied import IV_STATUSES, MIN_RELATIVE_VEGA, solve_implied_vol


def test_hull_example_round_trips():
    # Hull, Options, Futures and Other Derivatives, worked example (from memory): S=42, K=40,
    # r=0.10, sigma=0.20, T=0.5 gives c = 4.76 and p = 0.81.
    for kind, quoted in (("call", 4.76), ("put", 0.81)):
        price = bsm_price(42, 40, 0.5, 0.10, 0.20, 0.0, kind)
        assert round(price, 2) == quoted
        res = solve_implied_vol(price, 42, 40, 0.5, 0.10, 0.0, kind)
        assert res.status == "ok" and res.message == ""
        assert res.implied_vol == pytest.approx(0.20, abs=1e-12)
        assert res.price_check == pytest.approx(price, abs=1e-12)
        assert res.vega == pytest.approx(bsm_greeks(42, 40, 0.5, 0.10, 0.20, 0.0, kind).vega, rel=1e-10)
    # the rounded textbook premium 4.76 itself: the vol that reprices it exactly, a hair above 20 %
    res = solve_implied_vol(4.76, 42, 40, 0.5, 0.10, 0.0, "call")
    assert res.ok and 0.2000 < res.implied_vol < 0.2001
    assert bsm_price(42, 40, 0.5, 0.10, res.implied_vol) == pytest.approx(4.76, abs=1e-12)


@settings(max_examples=400, deadline=None)
@given(spot=st.floats(1.0, 500.0), log_m=st.floats(-1.2, 1.2), years=st.floats(0.005, 10.0),
       vol=st.floats(0.01, 3.0), rate=st.floats(-0.03, 0.15), q=st.floats(0.0, 0.08),
       kind=st.sampled_from(["call", "put"]))
def test_round_trip_to_1e8_wherever_vega_is_not_negligible(spot, log_m, years, vol, rate, q, kind):
    # Common practice, no source: price at a vol, recover the vol. Where vega clears the relative
    # threshold the vol comes back to 1e-8; below it the premium is refused, never mis-solved.
    strike = spot * math.exp(log_m)
    price = bsm_price(spot, strike, years, rate, vol, q, kind)
    vega = bsm_greeks(spot, strike, years, rate, vol, q, kind).vega
    scale = spot * math.exp(-q * years) + strike * math.exp(-rate * years)
    res = solve_implied_vol(price, spot, strike, years, rate, q, kind)
    assert res.status in IV_STATUSES
    if res.ok:
        assert abs(res.implied_vol - vol) <= 1e-8
    if vega > 1.05 * MIN_RELATIVE_VEGA * scale:
        assert res.ok, (res.status, res.message)
    if not res.ok:
        assert res.implied_vol is None and res.price_check is None


def test_vega_above_1e6_round_trips_at_the_textbook_scale():
    # At S=42, K around 40 (Hull's example scale) the relative threshold is about 1.6e-6, so every
    # option with vega above it round-trips to 1e-8; a grid over moneyness, life and vol.
    checked = 0
    for k in (20.0, 30.0, 38.0, 40.0, 42.0, 46.0, 60.0, 90.0):
        for t in (0.01, 0.1, 0.5, 2.0):
            for v in (0.02, 0.1, 0.2, 0.6, 1.5):
                for kind in ("call", "put"):
                    price = bsm_price(42, k, t, 0.10, v, 0.0, kind)
                    vega = bsm_greeks(42, k, t, 0.10, v, 0.0, kind).vega
                    res = solve_implied_vol(price, 42, k, t, 0.10, 0.0, kind)
                    if vega > 2e-6:
                        assert res.ok and abs(res.implied_vol - v) <= 1e-8, (k, t, v, kind)
                        checked += 1
                    elif not res.ok:
                        assert res.status in ("negligible_vega", "below_lower_bound", "unresolved")
    assert checked > 200


def test_premiums_outside_the_bounds_get_a_status_with_the_bounds():
    # Merton (1973) bounds, e.g. Hull: max(S e^-qT - K e^-rT, 0) < c < S e^-qT.
    lo = 42 - 40 * math.exp(-0.05)
    res = solve_implied_vol(1.5, 42, 40, 0.5, 0.10, 0.0, "call")
    assert res.status == "below_lower_bound" and res.implied_vol is None
    assert res.lower_bound == pytest.approx(lo, rel=1e-14) and res.upper_bound == 42.0
    assert "on or below its no-arbitrage lower bound 3.95082" in res.message
    res = solve_implied_vol(lo, 42, 40, 0.5, 0.10, 0.0, "call")  # on the bound itself
    assert res.status == "below_lower_bound"
    res = solve_implied_vol(42.0, 42, 40, 0.5, 0.10, 0.0, "call")
    assert res.status == "above_upper_bound" and "upper bound 42" in res.message
    res = solve_implied_vol(40.0, 42, 40, 0.5, 0.10, 0.0, "put")  # above K e^-rT = 38.05
    assert res.status == "above_upper_bound" and res.upper_bound == pytest.approx(40 * math.exp(-0.05))
    res = solve_implied_vol(-1.0, 42, 40, 0.5, 0.10, 0.0, "put")
    assert res.status == "below_lower_bound"
    d = res.as_dict()
    assert d["implied_vol"] is None and d["bounds"]["lower"] == 0.0 and d["inputs"]["type"] == "put"


def test_negligible_vega_is_refused():
    # Deep in the money, a day to expiry, 10 % vol: the premium is all intrinsic value.
    price = bsm_price(100, 60, 1 / 365, 0.02, 0.10, 0.0, "call")
    res = solve_implied_vol(price + 1e-12, 100, 60, 1 / 365, 0.02, 0.0, "call")
    assert res.status in ("negligible_vega", "below_lower_bound", "unresolved")
    # a case that solves but with a vega far below the threshold
    price = bsm_price(100, 75, 0.05, 0.0, 0.2, 0.0, "call")
    vega = bsm_greeks(100, 75, 0.05, 0.0, 0.2, 0.0, "call").vega
    assert vega < MIN_RELATIVE_VEGA * 175 and price > 25
    res = solve_implied_vol(price, 100, 75, 0.05, 0.0, 0.0, "call")
    assert res.status == "negligible_vega" and res.implied_vol is None and res.vega == pytest.approx(vega, rel=1e-3)
    assert "vega" in res.message and "negligible" in res.message
    loose = solve_implied_vol(price, 100, 75, 0.05, 0.0, 0.0, "call", min_relative_vega=0.0)
    assert loose.ok  # the same premium solves when the refusal is switched off


def test_unresolved_outside_the_search_bracket():
    res = solve_implied_vol(1e-9, 100.0, 100.0, 1e-4, 0.0)
    assert res.status == "unresolved" and "below 1e-06" in res.message


def test_bad_inputs_raise():
    with pytest.raises(VolbenchError, match=r"premium must be a finite number, got nan"):
        solve_implied_vol(float("nan"), 42, 40, 0.5, 0.1)
    with pytest.raises(VolbenchError, match=r"spot must be a positive finite number, got -42"):
        solve_implied_vol(4.0, -42, 40, 0.5, 0.1)
    with pytest.raises(VolbenchError, match=r"years must be a number, got 'soon'"):
        solve_implied_vol(4.0, 42, 40, "soon", 0.1)
    with pytest.raises(VolbenchError, match=r"option type must be 'call' or 'put', got 'straddle'"):
        solve_implied_vol(4.0, 42, 40, 0.5, 0.1, kind="straddle")
