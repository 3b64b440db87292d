"""The classical volatility estimators, behind one registry."""

from volbench.estimators.base import Estimate, EstimatorSpec, RollingVol
from volbench.estimators.registry import (
    DAILY_KEYS,
    ESTIMATOR_KEYS,
    REGISTRY,
    EstimateReport,
    RollingReport,
    availability,
    estimate_all,
    get_spec,
    point_estimate,
    rolling_all,
    rolling_vol,
    rolling_windows,
)

__all__ = [
    "DAILY_KEYS",
    "ESTIMATOR_KEYS",
    "REGISTRY",
    "Estimate",
    "EstimateReport",
    "EstimatorSpec",
    "RollingReport",
    "RollingVol",
    "availability",
    "estimate_all",
    "get_spec",
    "point_estimate",
    "rolling_all",
    "rolling_vol",
    "rolling_windows",
]
