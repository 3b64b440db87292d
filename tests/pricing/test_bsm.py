"""Black-Scholes-Merton prices, greeks and implied vol."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from scipy import integrate, stats

from volbench.errors import VolbenchError
from volbench.pricing.bsm import (
    bsm_greeks,
    bsm_price,
    check_pricing_vol,
    check_rate,
    implied_vol,
    price_bounds,
)

CASES = [  # spot, strike, years, rate, vol, dividend yield
    (42.0, 40.0, 0.5, 0.10, 0.20, 0.0),
    (100.0, 110.0, 1.0, 0.03, 0.35, 0.02),
    (100.0, 90.0, 0.25, -0.01, 0.15, 0.04),
    (50.0, 50.0, 2.0, 0.05, 0.60, 0.01),
]


def test_hull_worked_example_to_the_cent():
    # Hull, Options, Futures and Other Derivatives, worked Black-Scholes example (from memory):
    # S=42, K=40, r=0.10, sigma=0.20, T=0.5 -> c = 4.76, p = 0.81.
    assert round(bsm_price(42, 40, 0.5, 0.10, 0.20), 2) == 4.76
    assert round(bsm_price(42, 40, 0.5, 0.10, 0.20, kind="put"), 2) == 0.81


@pytest.mark.parametrize("s,k,t,r,v,q", CASES)
def test_matches_discounted_expectation_under_lognormal(s, k, t, r, v, q):
    # Reference library: scipy.stats.lognorm + scipy.integrate.quad. Under the risk-neutral measure
    # ln S_T ~ N(ln S + (r - q - v^2/2) T, v^2 T); the price is e^{-rT} E[payoff] (Merton 1973).
    dist = stats.lognorm(s=v * math.sqrt(t), scale=s * math.exp((r - q - 0.5 * v * v) * t))
    call = math.exp(-r * t) * integrate.quad(lambda x: (x - k) * dist.pdf(x), k, np.inf, epsabs=1e-12)[0]
    put = math.exp(-r * t) * integrate.quad(lambda x: (k - x) * dist.pdf(x), 0, k, epsabs=1e-12)[0]
    assert bsm_price(s, k, t, r, v, q, "call") == pytest.approx(call, rel=1e-8)
    assert bsm_price(s, k, t, r, v, q, "put") == pytest.approx(put, rel=1e-8)


def test_put_call_parity_to_1e12():
    # Put-call parity c - p = S e^{-qT} - K e^{-rT} (Merton 1973; e.g. Hull), a model-free identity.
    s = 100.0
    k = np.array([60.0, 80.0, 95.0, 100.0, 105.0, 120.0, 150.0])[:, None, None]
    t = np.array([0.02, 0.25, 1.0, 3.0])[None, :, None]
    v = np.array([0.05, 0.2, 0.5, 1.2])[None, None, :]
    for r, q in [(0.0, 0.0), (0.05, 0.02), (-0.01, 0.03)]:
        c = bsm_price(s, k, t, r, v, q, "call")
        p = bsm_price(s, k, t, r, v, q, "put")
        parity = s * np.exp(-q * t) - k * np.exp(-r * t)
        assert np.max(np.abs((c - p) - parity)) < 1e-12


@pytest.mark.parametrize("kind", ["call", "put"])
@pytest.mark.parametrize("s,k,t,r,v,q", CASES)
def test_greeks_match_central_finite_differences(kind, s, k, t, r, v, q):
    # Common practice, no source: central differences f'(x) ~ (f(x+h) - f(x-h)) / 2h, error O(h^2).
    g = bsm_greeks(s, k, t, r, v, q, kind)

    def price(**kw):
        args = {"spot": s, "strike": k, "years": t, "rate": r, "vol": v, "dividend_yield": q} | kw
        return bsm_price(**args, kind=kind)

    hd, hs, hv, ht, hr = 1e-5 * s, 1e-3 * s, 1e-5, 1e-6, 1e-6
    assert g.price == pytest.approx(price(), rel=1e-14)
    assert g.delta == pytest.approx((price(spot=s + hd) - price(spot=s - hd)) / (2 * hd), rel=1e-7, abs=1e-9)
    fd_gamma = (price(spot=s + hs) - 2 * price() + price(spot=s - hs)) / hs**2
    assert g.gamma == pytest.approx(fd_gamma, rel=1e-4)
    assert g.vega == pytest.approx((price(vol=v + hv) - price(vol=v - hv)) / (2 * hv), rel=1e-6)
    # theta is per year of calendar time passing: -dV/dT
    assert g.theta == pytest.approx(-(price(years=t + ht) - price(years=t - ht)) / (2 * ht), rel=1e-5, abs=1e-8)
    assert g.rho == pytest.approx((price(rate=r + hr) - price(rate=r - hr)) / (2 * hr), rel=1e-6)
    assert g.vega_point == pytest.approx(g.vega / 100, rel=1e-15)
    assert g.theta_day == pytest.approx(g.theta / 365, rel=1e-15)


def test_vectorised_equals_scalar_loop():
    # Common practice, no source: the array path must equal one-at-a-time scalar calls.
    k = np.linspace(70, 130, 7)
    v = np.linspace(0.1, 0.7, 7)
    g = bsm_greeks(100.0, k, 0.75, 0.02, v, 0.01, "put")
    for i in range(7):
        one = bsm_greeks(100.0, float(k[i]), 0.75, 0.02, float(v[i]), 0.01, "put")
        for name in ("price", "delta", "gamma", "vega", "theta", "rho"):
            assert getattr(g, name)[i] == pytest.approx(getattr(one, name), rel=1e-14, abs=1e-300)
    assert isinstance(bsm_price(100, 100, 1, 0, 0.2), float)
    assert bsm_price(100, k, 1, 0, 0.2).shape == (7,)


def test_greeks_signs_and_call_put_relations():
    # Textbook relations (e.g. Hull): delta_c - delta_p = e^{-qT}; equal gamma and vega for call and put.
    s, k, t, r, v, q = 100.0, 105.0, 0.8, 0.04, 0.3, 0.02
    c, p = bsm_greeks(s, k, t, r, v, q, "call"), bsm_greeks(s, k, t, r, v, q, "put")
    assert c.delta - p.delta == pytest.approx(math.exp(-q * t), rel=1e-13)
    assert c.gamma == pytest.approx(p.gamma, rel=1e-13)
    assert c.vega == pytest.approx(p.vega, rel=1e-13)
    assert c.rho > 0 > p.rho
    assert c.theta < 0


@pytest.mark.parametrize("kind", ["call", "put"])
def test_implied_vol_round_trip_over_grid(kind):
    # Common practice, no source: price at a vol, then recover that vol with brentq.
    s, r, q = 100.0, 0.03, 0.01
    for k, t, v in itertools.product([80.0, 95.0, 100.0, 105.0, 120.0], [0.1, 0.5, 1.0, 2.0],
                                     [0.08, 0.2, 0.45, 0.9]):
        price = bsm_price(s, k, t, r, v, q, kind)
        vega = bsm_greeks(s, k, t, r, v, q, kind).vega
        if vega < 1e-6:  # vol not identifiable from a price that does not move with it
            continue
        assert implied_vol(price, s, k, t, r, q, kind) == pytest.approx(v, abs=1e-8), (k, t, v)


def test_price_bounds_are_the_no_arbitrage_bounds():
    # Merton (1973) bounds, e.g. Hull: max(S e^-qT - K e^-rT, 0) < c < S e^-qT;
    # max(K e^-rT - S e^-qT, 0) < p < K e^-rT.
    s, k, t, r, q = 100.0, 90.0, 1.0, 0.05, 0.02
    lo, hi = price_bounds(s, k, t, r, q, "call")
    assert lo == pytest.approx(s * math.exp(-q * t) - k * math.exp(-r * t))
    assert hi == pytest.approx(s * math.exp(-q * t))
    lo, hi = price_bounds(s, k, t, r, q, "put")
    assert lo == 0.0
    assert hi == pytest.approx(k * math.exp(-r * t))
    for v in (0.2, 0.5, 3.0):
        assert price_bounds(s, k, t, r, q, "call")[0] < bsm_price(s, k, t, r, v, q) < s * math.exp(-q * t)


def test_implied_vol_rejects_prices_outside_bounds():
    with pytest.raises(VolbenchError, match=r"call price 101 is outside the no-arbitrage bounds: it must lie "
                                            r"strictly between 0 and 100 .*< c < S e\^-qT"):
        implied_vol(101.0, 100.0, 100.0, 1.0, 0.0)
    with pytest.raises(VolbenchError, match=r"call price 5 is outside the no-arbitrage bounds: it must lie "
                                            r"strictly between 10 and 100"):
        implied_vol(5.0, 100.0, 90.0, 1.0, 0.0)
    with pytest.raises(VolbenchError, match=r"put price 90 is outside .* strictly between 0 and 90 .*< p < K e\^-rT"):
        implied_vol(90.0, 100.0, 90.0, 1.0, 0.0, kind="put")
    with pytest.raises(VolbenchError, match="call price 0 is outside the no-arbitrage bounds"):
        implied_vol(0.0, 100.0, 100.0, 1.0, 0.0)
    with pytest.raises(VolbenchError, match="option price must be a finite number"):
        implied_vol(float("nan"), 100.0, 100.0, 1.0, 0.0)
    with pytest.raises(VolbenchError, match=r"implied_vol takes one option at a time; strike has shape \(2,\)"):
        implied_vol(5.0, 100.0, [90.0, 100.0], 1.0, 0.0)


def test_implied_vol_outside_the_search_bracket():
    # an at-the-money call 1e-4 years out is worth about 0.4 S sigma sqrt(T) (Brenner & Subrahmanyam
    # 1988 approximation, from memory): 1e-9 needs a vol far below 1e-6, 50 one far above 100
    with pytest.raises(VolbenchError, match=r"call price 1e-09 is too close to its lower bound 0: "
                                            r"the implied vol is below 1e-06"):
        implied_vol(1e-9, 100.0, 100.0, 1e-4, 0.0)
    with pytest.raises(VolbenchError, match=r"call price 50 is too close to its upper bound 100: "
                                            r"the implied vol is above 100 \(10,000%\)"):
        implied_vol(50.0, 100.0, 100.0, 1e-6, 0.0)


@pytest.mark.parametrize("kwargs,message", [
    ({"spot": 0}, "spot must be a positive finite number, got 0"),
    ({"spot": -5}, "spot must be a positive finite number, got -5"),
    ({"strike": float("nan")}, "strike must be a positive finite number, got nan"),
    ({"years": 0}, "years to expiry must be a positive finite number, got 0"),
    ({"vol": 0}, r"vol must be a positive finite number \(a decimal, e.g. 0.25 for 25%\), got 0"),
    ({"vol": [0.2, -0.1]}, "vol must be a positive finite number .*got -0.1"),
    ({"rate": float("inf")}, "rate must be a finite number"),
    ({"dividend_yield": float("nan")}, "dividend yield must be a finite number"),
    ({"kind": "straddle"}, "option type must be 'call' or 'put', got 'straddle'"),
    ({"spot": "abc"}, "spot must be a number, got 'abc'"),
    ({"strike": [90, 100, 110], "vol": [0.2, 0.3]}, "must be scalars or arrays of matching shape"),
])
def test_input_validation_messages(kwargs, message):
    args = {"spot": 100.0, "strike": 100.0, "years": 1.0, "rate": 0.0, "vol": 0.2, "dividend_yield": 0.0, "kind": "call"}
    args.update(kwargs)
    with pytest.raises(VolbenchError, match=message):
        bsm_price(**args)
    with pytest.raises(VolbenchError, match=message):
        bsm_greeks(**args)


def test_kind_is_case_insensitive():
    assert bsm_price(100, 100, 1, 0, 0.2, kind="PUT") == bsm_price(100, 100, 1, 0, 0.2, kind="put")


def test_user_vol_and_rate_checks_catch_percents():
    assert check_pricing_vol(0.25) == 0.25
    assert check_pricing_vol(4.5) == 4.5
    with pytest.raises(VolbenchError, match=r"pricing vol must be a decimal below 5 \(0.25 means 25%\), got 25; "
                                            r"it looks like a percent: did you mean 0.25\?"):
        check_pricing_vol(25)
    with pytest.raises(VolbenchError, match=r"pricing vol must be > 0 .*got 0"):
        check_pricing_vol(0)
    with pytest.raises(VolbenchError, match=r"pricing vol must be > 0 .*got -0.2"):
        check_pricing_vol(-0.2)
    with pytest.raises(VolbenchError, match="pricing vol must be a decimal below 5 .*got 1000$"):
        check_pricing_vol(1000)
    with pytest.raises(VolbenchError, match="pricing vol must be a decimal such as 0.25 for 25%, got 'x'"):
        check_pricing_vol("x")
    assert check_rate(-0.01) == -0.01
    with pytest.raises(VolbenchError, match=r"rate must be a decimal between -1 and 1 .*got 5; .*did you mean 0.05\?"):
        check_rate(5)
    with pytest.raises(VolbenchError, match="dividend yield must be a finite decimal"):
        check_rate(float("nan"), "dividend yield")
