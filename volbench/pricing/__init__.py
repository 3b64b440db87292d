"""Black-Scholes-Merton, the volatility cone, and the comparison of a proposed pricing vol with history."""

from volbench.pricing.bsm import Greeks, bsm_greeks, bsm_price, implied_vol, price_bounds
from volbench.pricing.compare import Comparison, OptionSpec, compare
from volbench.pricing.cone import (
    DEFAULT_CONE_WINDOWS,
    Cone,
    ConePlacement,
    hodges_tompkins_factor,
    vol_cone,
)

__all__ = [
    "DEFAULT_CONE_WINDOWS",
    "Comparison",
    "Cone",
    "ConePlacement",
    "Greeks",
    "OptionSpec",
    "bsm_greeks",
    "bsm_price",
    "compare",
    "hodges_tompkins_factor",
    "implied_vol",
    "price_bounds",
    "vol_cone",
]
