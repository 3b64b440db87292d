"""Brownian-scaling check: does a price history behave like the Brownian motion Black-Scholes assumes?

Variance against horizon, variance-ratio tests, normality, independence and drift of the
increments, with plain-language verdicts on what they mean for the pricing vol.
"""

from volbench.scaling.check import (
    DEFAULT_HORIZONS,
    HORIZON_COLUMNS,
    MIN_PERIODS,
    MIN_RETURNS,
    ScalingResult,
    horizon_vol,
    scaling_check,
    scaling_verdicts,
)
from volbench.scaling.verdicts import PROPERTIES, Verdict

__all__ = [
    "DEFAULT_HORIZONS",
    "HORIZON_COLUMNS",
    "MIN_PERIODS",
    "MIN_RETURNS",
    "PROPERTIES",
    "ScalingResult",
    "Verdict",
    "horizon_vol",
    "scaling_check",
    "scaling_verdicts",
]
