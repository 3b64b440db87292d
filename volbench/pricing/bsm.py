"""Black-Scholes-Merton prices, greeks and implied volatility for European calls and puts.

Vectorised over numpy arrays (inputs broadcast together; scalars in, floats out). Every input is
checked once, here, with a message naming the bad value; nothing returns a silent NaN.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq
from scipy.special import ndtr

from volbench.errors import VolbenchError
from volbench.types import OptionType

OPTION_KINDS: tuple[OptionType, ...] = ("call", "put")
DAYS_PER_YEAR_THETA = 365.0
"""Calendar days per year used for ``theta_day`` (desk convention; common practice, no source)."""

IV_LOW, IV_HIGH, IV_HIGH_MAX = 1e-6, 10.0, 100.0
"""Implied-vol search bracket: from 0.0001% to 1,000%, widened once to 10,000%."""


@dataclass(frozen=True)
class Greeks:
    """Black-Scholes-Merton value and sensitivities of one option (or arrays of them).

    Attributes
    ----------
    price
        Option value, in the currency of spot and strike.
    delta
        dV/dS.
    gamma
        d2V/dS2.
    vega
        dV/dsigma per 1.00 of volatility (a move from 0.20 to 1.20).
    vega_point
        dV/dsigma per vol point (0.01 of volatility): ``vega / 100``.
    theta
        dV/dt per year of calendar time passing (= -dV/dT), usually negative.
    theta_day
        ``theta / 365``: per calendar day. Divide ``theta`` by 252 for per trading day instead.
    rho
        dV/dr per 1.00 of the continuously compounded rate.
    """

    price: float | np.ndarray
    delta: float | np.ndarray
    gamma: float | np.ndarray
    vega: float | np.ndarray
    vega_point: float | np.ndarray
    theta: float | np.ndarray
    theta_day: float | np.ndarray
    rho: float | np.ndarray

    def as_dict(self) -> dict:
        def conv(x):
            return float(x) if np.ndim(x) == 0 else np.asarray(x).tolist()

        return {k: conv(getattr(self, k)) for k in
                ("price", "delta", "gamma", "vega", "vega_point", "theta", "theta_day", "rho")}


# ---------------------------------------------------------------------------- validation
def _array(name: str, value) -> np.ndarray:
    try:
        a = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise VolbenchError(f"{name} must be a number, got {value!r}") from None
    return a


def _first_bad(a: np.ndarray, bad: np.ndarray) -> float:
    return float(a[bad].flat[0]) if a.ndim else float(a)


def _positive(name: str, value, hint: str = "") -> np.ndarray:
    a = _array(name, value)
    bad = ~(np.isfinite(a) & (a > 0))
    if np.any(bad):
        raise VolbenchError(f"{name} must be a positive finite number{hint}, got {_first_bad(a, bad):g}")
    return a


def _finite(name: str, value) -> np.ndarray:
    a = _array(name, value)
    bad = ~np.isfinite(a)
    if np.any(bad):
        raise VolbenchError(f"{name} must be a finite number (a decimal, e.g. 0.05 for 5%), "
                            f"got {_first_bad(a, bad):g}")
    return a


def check_kind(kind) -> OptionType:
    """``"call"`` or ``"put"`` (case-insensitive; the one rule: :func:`volbench.validate.option_kind`)."""
    from volbench import validate

    return validate.option_kind(kind)


def _inputs(spot, strike, years, rate, vol, dividend_yield):
    s = _positive("spot", spot)
    k = _positive("strike", strike)
    t = _positive("years to expiry", years)
    v = _positive("vol", vol, " (a decimal, e.g. 0.25 for 25%)")
    r = _finite("rate", rate)
    q = _finite("dividend yield", dividend_yield)
    try:
        arrays = np.broadcast_arrays(s, k, t, r, v, q)
    except ValueError:
        shapes = ", ".join(str(np.shape(x)) for x in (s, k, t, r, v, q))
        raise VolbenchError(f"spot, strike, years, rate, vol and dividend yield must be scalars or "
                            f"arrays of matching shape, got shapes {shapes}") from None
    scalar = all(np.ndim(x) == 0 for x in (s, k, t, r, v, q))
    return arrays, scalar


def _out(x: np.ndarray, scalar: bool):
    return float(x) if scalar else x


def _d1_d2(s, k, t, r, v, q):
    sqt = v * np.sqrt(t)
    d1 = (np.log(s / k) + (r - q + 0.5 * v * v) * t) / sqt
    return d1, d1 - sqt


# ---------------------------------------------------------------------------- prices and greeks
def bsm_price(spot, strike, years, rate, vol, dividend_yield=0.0, kind: OptionType = "call"):
    """Black-Scholes-Merton value of a European call or put with continuous dividend yield.

    Parameters
    ----------
    spot, strike
        Positive prices.
    years
        Time to expiry in years (> 0).
    rate, dividend_yield
        Continuously compounded risk-free rate and dividend yield, decimals (0.05 = 5%).
    vol
        Annualized volatility, decimal (> 0).
    kind
        ``"call"`` or ``"put"``.

    Returns
    -------
    float or ndarray
        A float when every input is a scalar, else an array of the broadcast shape.

    Raises
    ------
    VolbenchError
        Non-positive or non-finite spot, strike, years or vol; non-finite rate or yield; bad kind.

    Notes
    -----
    c = S e^{-qT} N(d1) - K e^{-rT} N(d2), p = K e^{-rT} N(-d2) - S e^{-qT} N(-d1),
    d1 = [ln(S/K) + (r - q + sigma^2/2) T] / (sigma sqrt T), d2 = d1 - sigma sqrt T
    (Black & Scholes 1973; Merton 1973; e.g. Hull, *Options, Futures and Other Derivatives*).
    N(-d) is evaluated directly, not as 1 - N(d), to keep far out-of-the-money values accurate.
    """
    kind = check_kind(kind)
    (s, k, t, r, v, q), scalar = _inputs(spot, strike, years, rate, vol, dividend_yield)
    return _out(_price(s, k, t, r, v, q, kind), scalar)


def _price(s, k, t, r, v, q, kind):
    d1, d2 = _d1_d2(s, k, t, r, v, q)
    fs, fk = s * np.exp(-q * t), k * np.exp(-r * t)
    if kind == "call":
        return fs * ndtr(d1) - fk * ndtr(d2)
    return fk * ndtr(-d2) - fs * ndtr(-d1)


def bsm_greeks(spot, strike, years, rate, vol, dividend_yield=0.0, kind: OptionType = "call") -> Greeks:
    """Value and greeks of a European call or put (same inputs as :func:`bsm_price`).

    Returns
    -------
    Greeks
        Floats for scalar inputs, arrays otherwise. Units are given on :class:`Greeks`.

    Raises
    ------
    VolbenchError
        As :func:`bsm_price`.

    Notes
    -----
    With n the standard normal density (Hull, *Options, Futures and Other Derivatives*):
    delta_c = e^{-qT} N(d1), delta_p = -e^{-qT} N(-d1);
    gamma = e^{-qT} n(d1) / (S sigma sqrt T); vega = S e^{-qT} n(d1) sqrt T;
    theta_c = -S e^{-qT} n(d1) sigma / (2 sqrt T) - r K e^{-rT} N(d2) + q S e^{-qT} N(d1),
    theta_p = -S e^{-qT} n(d1) sigma / (2 sqrt T) + r K e^{-rT} N(-d2) - q S e^{-qT} N(-d1);
    rho_c = K T e^{-rT} N(d2), rho_p = -K T e^{-rT} N(-d2).
    Theta is per year of calendar time; ``theta_day`` divides by 365 (common practice, no source).
    """
    kind = check_kind(kind)
    (s, k, t, r, v, q), scalar = _inputs(spot, strike, years, rate, vol, dividend_yield)
    d1, d2 = _d1_d2(s, k, t, r, v, q)
    eq, er = np.exp(-q * t), np.exp(-r * t)
    sqt = np.sqrt(t)
    pdf = np.exp(-0.5 * d1 * d1) / np.sqrt(2.0 * np.pi)
    gamma = eq * pdf / (s * v * sqt)
    vega = s * eq * pdf * sqt
    decay = -s * eq * pdf * v / (2.0 * sqt)
    if kind == "call":
        price = s * eq * ndtr(d1) - k * er * ndtr(d2)
        delta = eq * ndtr(d1)
        theta = decay - r * k * er * ndtr(d2) + q * s * eq * ndtr(d1)
        rho = k * t * er * ndtr(d2)
    else:
        price = k * er * ndtr(-d2) - s * eq * ndtr(-d1)
        delta = -eq * ndtr(-d1)
        theta = decay + r * k * er * ndtr(-d2) - q * s * eq * ndtr(-d1)
        rho = -k * t * er * ndtr(-d2)
    return Greeks(
        price=_out(price, scalar), delta=_out(delta, scalar), gamma=_out(gamma, scalar),
        vega=_out(vega, scalar), vega_point=_out(vega / 100.0, scalar),
        theta=_out(theta, scalar), theta_day=_out(theta / DAYS_PER_YEAR_THETA, scalar),
        rho=_out(rho, scalar),
    )


# ---------------------------------------------------------------------------- implied vol
def price_bounds(spot, strike, years, rate, dividend_yield=0.0, kind: OptionType = "call") -> tuple[float, float]:
    """No-arbitrage bounds (lower, upper) on a European option's price (scalars).

    Notes
    -----
    Call: max(S e^{-qT} - K e^{-rT}, 0) < c < S e^{-qT}; put: max(K e^{-rT} - S e^{-qT}, 0) < p < K e^{-rT}
    (Merton 1973; e.g. Hull, *Options, Futures and Other Derivatives*). Any positive finite vol
    gives a price strictly inside them, so a price on or outside a bound has no implied vol.
    """
    kind = check_kind(kind)
    (s, k, t, r, _, q), _ = _inputs(spot, strike, years, rate, 1.0, dividend_yield)
    fs, fk = float(s * np.exp(-q * t)), float(k * np.exp(-r * t))
    if kind == "call":
        return max(fs - fk, 0.0), fs
    return max(fk - fs, 0.0), fk


def implied_vol(price, spot, strike, years, rate, dividend_yield=0.0, kind: OptionType = "call") -> float:
    """The volatility at which the Black-Scholes-Merton value equals ``price`` (scalars only).

    Parameters
    ----------
    price
        Observed option price (> 0).
    spot, strike, years, rate, dividend_yield, kind
        As :func:`bsm_price`.

    Returns
    -------
    float
        Annualized implied volatility, decimal.

    Raises
    ------
    VolbenchError
        Bad inputs; a price on or outside the no-arbitrage bounds (the message gives them); a price
        so close to a bound that the vol is below 0.0001% or above 10,000% (outside the search bracket).

    Notes
    -----
    The price is strictly increasing in vol, so the root is bracketed in [1e-6, 10] (widened to 100
    once) and found with ``scipy.optimize.brentq`` (xtol 1e-13); its convergence flag is checked.
    """
    kind = check_kind(kind)
    for name, x in (("price", price), ("spot", spot), ("strike", strike), ("years", years),
                    ("rate", rate), ("dividend_yield", dividend_yield)):
        if np.ndim(x) != 0:
            raise VolbenchError(f"implied_vol takes one option at a time; {name} has shape {np.shape(x)}")
    p = float(_finite("option price", price))
    lo, hi = price_bounds(spot, strike, years, rate, dividend_yield, kind)
    if not lo < p < hi:
        raise VolbenchError(
            f"{kind} price {p:g} is outside the no-arbitrage bounds: it must lie strictly between "
            f"{lo:.6g} and {hi:.6g} for spot {spot:g}, strike {strike:g}, {years:g} years, rate {rate:g}, "
            f"dividend yield {dividend_yield:g} ("
            + ("max(S e^-qT - K e^-rT, 0) < c < S e^-qT" if kind == "call"
               else "max(K e^-rT - S e^-qT, 0) < p < K e^-rT")
            + "); no volatility reproduces it; check the price, the inputs and the option type"
        )
    s, k, t, r, q = (float(x) for x in (spot, strike, years, rate, dividend_yield))

    def f(v: float) -> float:
        return float(_price(s, k, t, r, v, q, kind)) - p

    if f(IV_LOW) >= 0:
        raise VolbenchError(f"{kind} price {p:g} is too close to its lower bound {lo:.6g}: "
                            f"the implied vol is below {IV_LOW:.0e} and cannot be resolved")
    high = IV_HIGH
    if f(high) <= 0:
        high = IV_HIGH_MAX
        if f(high) <= 0:
            raise VolbenchError(f"{kind} price {p:g} is too close to its upper bound {hi:.6g}: "
                                f"the implied vol is above {IV_HIGH_MAX:g} (10,000%) and cannot be resolved")
    root, info = brentq(f, IV_LOW, high, xtol=1e-13, maxiter=200, full_output=True, disp=False)
    if not info.converged:
        raise VolbenchError(f"implied vol search did not converge for {kind} price {p:g} ({info.flag})")
    return float(root)


def check_pricing_vol(vol, what: str = "pricing vol") -> float:
    """A vol given by a user: decimal in (0, 5); one rule and one message everywhere (volbench.validate)."""
    from volbench import validate

    return validate.pricing_vol(vol, what)


def check_rate(value, what: str = "rate") -> float:
    """A rate or yield given by a user: a finite decimal with |x| < 1 (volbench.validate)."""
    from volbench import validate

    return validate.rate(value, what)
