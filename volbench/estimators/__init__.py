"""The classical volatility estimators, behind one registry."""

from volbench.estimators.base import Estimate, EstimatorSpec, RollingVol
from volbench.estimators.registry import (
    ESTIMATOR_KEYS,
    REGISTRY,
    EstimateReport,
    availability,
    estimate_all,
    get_spec,
    point_estimate,
    rolling_vol,
)

__all__ = [
    "ESTIMATOR_KEYS",
    "REGISTRY",
    "Estimate",
    "EstimateReport",
    "EstimatorSpec",
    "RollingVol",
    "availability",
    "estimate_all",
    "get_spec",
    "point_estimate",
    "rolling_vol",
]
