"""Hindsight: evidence of which candidate vol would have forecast best on a history.

Core only (no Qt). :func:`hindsight` rolls the as-of date through a history and scores every
candidate (each estimator at each window, EWMA, GARCH and event-aware forecasts) against the vol
realized over the next N bars. Past accuracy is evidence, not a guarantee; estimates are
statistical, carry model risk and are not advice.
"""

from volbench.hindsight.forecasts import Forecast, HindsightCancelled
from volbench.hindsight.run import (
    DEFAULT_REFIT_EVERY,
    DEFAULT_WINDOWS,
    SCORE_COLUMNS,
    Hindsight,
    hindsight,
)
from volbench.hindsight.scoring import (
    diebold_mariano,
    dm_degrees_of_freedom,
    ewc_degrees_of_freedom,
    ewc_long_run_variance,
    prediction_factors,
    qlike,
)

__all__ = [
    "DEFAULT_REFIT_EVERY",
    "DEFAULT_WINDOWS",
    "SCORE_COLUMNS",
    "Forecast",
    "Hindsight",
    "HindsightCancelled",
    "diebold_mariano",
    "dm_degrees_of_freedom",
    "ewc_degrees_of_freedom",
    "ewc_long_run_variance",
    "hindsight",
    "prediction_factors",
    "qlike",
]
