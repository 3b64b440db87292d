"""Implied vol of one premium, with a status instead of an exception for premiums that have none.

:func:`solve_implied_vol` wraps the root finder :func:`volbench.pricing.bsm.implied_vol`: it checks
the no-arbitrage bounds first, solves, and refuses a vol the premium cannot pin down (negligible
vega). Bad inputs (a negative spot, a NaN premium) still raise
:class:`~volbench.errors.VolbenchError`; a premium that simply has no trustworthy implied vol gets
a status and a message, so a table of quotes can show every row.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

from volbench.errors import VolbenchError
from volbench.pricing.bsm import bsm_greeks, check_kind, implied_vol, price_bounds
from volbench.types import OptionType

IVStatus = Literal["ok", "below_lower_bound", "above_upper_bound", "negligible_vega", "unresolved"]
IV_STATUSES: tuple[IVStatus, ...] = ("ok", "below_lower_bound", "above_upper_bound", "negligible_vega",
                                     "unresolved")

MIN_RELATIVE_VEGA = 2e-8
"""A vol is refused when vega (per 1.00 of vol) is below this share of S e^{-qT} + K e^{-rT}.

Prices carry rounding errors of a few parts in 1e16 of those amounts, so below this ratio a
premium no longer pins the vol to 1e-8 (measured on 60,000 random options: the worst round-trip
error is 7e-9 above the threshold, 1.6e-8 at half of it). It is relative so that it means the
same for a spot of 1 and of 5,000.
"""


@dataclass(frozen=True)
class ImpliedVol:
    """The implied vol of one premium, or why there is none.

    Attributes
    ----------
    status
        ``"ok"``; ``"below_lower_bound"`` / ``"above_upper_bound"`` (the premium is on or outside a
        no-arbitrage bound, so no vol reproduces it); ``"negligible_vega"`` (a vol was found but the
        price hardly moves with vol, so the premium does not determine it); ``"unresolved"`` (the
        vol lies outside 0.0001 %-10,000 %).
    implied_vol
        Annualized decimal, ``None`` unless ``status == "ok"``.
    price_check
        Black-Scholes-Merton price at ``implied_vol`` (equals the premium to rounding).
    vega
        dPrice/dvol per 1.00 of vol at the solved vol (also given for ``negligible_vega``).
    lower_bound, upper_bound
        The no-arbitrage bounds the premium must lie strictly between.
    message
        One sentence for the user (empty when ``ok``).
    premium, kind, spot, strike, years, rate, dividend_yield
        The inputs.
    """

    status: IVStatus
    implied_vol: float | None
    price_check: float | None
    vega: float | None
    lower_bound: float
    upper_bound: float
    message: str
    premium: float
    kind: OptionType
    spot: float
    strike: float
    years: float
    rate: float
    dividend_yield: float

    @property
    def ok(self) -> bool:
        return self.status == "ok"

    def as_dict(self) -> dict:
        return {
            "implied_vol": self.implied_vol, "price_check": self.price_check, "vega": self.vega,
            "status": self.status, "message": self.message,
            "bounds": {"lower": self.lower_bound, "upper": self.upper_bound},
            "inputs": {"premium": self.premium, "type": self.kind, "spot": self.spot, "strike": self.strike,
                       "years": self.years, "rate": self.rate, "dividend_yield": self.dividend_yield},
        }


def _scalar(name: str, value) -> float:
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"{name} must be a number, got {value!r}") from None
    if not math.isfinite(x):
        raise VolbenchError(f"{name} must be a finite number, got {value!r}")
    return x


def solve_implied_vol(premium, spot, strike, years, rate, dividend_yield=0.0, kind: OptionType = "call",
                      *, min_relative_vega: float = MIN_RELATIVE_VEGA) -> ImpliedVol:
    """Implied vol of a European option's premium, with bound and vega checks (scalars).

    Parameters
    ----------
    premium
        Observed option price.
    spot, strike, years, rate, dividend_yield, kind
        As :func:`volbench.pricing.bsm.bsm_price` (years > 0, rates continuous decimals).
    min_relative_vega
        Refuse the vol when vega < this x (S e^{-qT} + K e^{-rT}); see :data:`MIN_RELATIVE_VEGA`.

    Returns
    -------
    ImpliedVol
        ``status`` says whether ``implied_vol`` is usable; the bounds are always given.

    Raises
    ------
    VolbenchError
        Non-numeric or non-finite inputs, non-positive spot, strike or years, a bad option type.

    Notes
    -----
    Bounds: max(S e^{-qT} - K e^{-rT}, 0) < c < S e^{-qT} and max(K e^{-rT} - S e^{-qT}, 0) < p <
    K e^{-rT} (Merton 1973; e.g. Hull, *Options, Futures and Other Derivatives*). Inside them the
    price is strictly increasing in vol and the root is found by :func:`volbench.pricing.bsm.implied_vol`
    (``scipy.optimize.brentq``). Vega = S e^{-qT} n(d1) sqrt(T) at the root
    (docs/METHODS.md, "Implied vol and option quotes").
    """
    kind = check_kind(kind)
    p = _scalar("premium", premium)
    s, k, t = _scalar("spot", spot), _scalar("strike", strike), _scalar("years", years)
    r, q = _scalar("rate", rate), _scalar("dividend yield", dividend_yield)
    lo, hi = price_bounds(s, k, t, r, q, kind)  # validates spot, strike and years
    base = {"lower_bound": lo, "upper_bound": hi, "premium": p, "kind": kind, "spot": s, "strike": k,
            "years": t, "rate": r, "dividend_yield": q}
    rule = ("max(S e^-qT - K e^-rT, 0) < call < S e^-qT" if kind == "call"
            else "max(K e^-rT - S e^-qT, 0) < put < K e^-rT")
    where = f"{kind} {p:g} (strike {k:g}, {t:.6g} years)"
    if p <= lo:
        return ImpliedVol("below_lower_bound", None, None, None, message=(
            f"{where} is on or below its no-arbitrage lower bound {lo:.6g} ({rule}); no vol gives it: "
            "check the premium, spot, rate, dividend yield and option type"), **base)
    if p >= hi:
        return ImpliedVol("above_upper_bound", None, None, None, message=(
            f"{where} is on or above its no-arbitrage upper bound {hi:.6g} ({rule}); no vol gives it: "
            "check the premium, spot, rate, dividend yield and option type"), **base)
    try:
        vol = implied_vol(p, s, k, t, r, q, kind)
    except VolbenchError as exc:  # inside the bounds but outside the search bracket
        return ImpliedVol("unresolved", None, None, None, message=f"{where}: {exc}", **base)
    g = bsm_greeks(s, k, t, r, vol, q, kind)
    scale = s * math.exp(-q * t) + k * math.exp(-r * t)
    if g.vega < min_relative_vega * scale:
        return ImpliedVol("negligible_vega", None, None, float(g.vega), message=(
            f"{where}: vega {g.vega:.3g} per 1.00 of vol is negligible (below {min_relative_vega:g} x "
            f"(S e^-qT + K e^-rT) = {min_relative_vega * scale:.3g}): the price hardly moves with vol, so "
            "the premium does not determine it; use a strike nearer the money"), **base)
    return ImpliedVol("ok", float(vol), float(g.price), float(g.vega), message="", **base)
