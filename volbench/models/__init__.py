"""GARCH-family fits (via ``arch``) and the forward vol over an option's life.

Core only (no Qt). :func:`fit_garch` fits one model; :func:`fit_models` fits several to one
series and ranks them by BIC; :func:`fit_many` runs many series in worker processes with
progress and cancellation. Estimates are statistical, carry model risk and are not advice.
"""

from volbench.models.batch import FitCancelled, fit_many
from volbench.models.compare import GarchComparison, evidence, fit_models
from volbench.models.garch import (
    DEFAULT_SEED,
    DEFAULT_SIMULATIONS,
    DISTS,
    FALLBACK,
    MEANS,
    MIN_RETURNS,
    MODEL_LABELS,
    MODELS,
    GarchFit,
    fit_garch,
)
from volbench.models.term import DEFAULT_TERM_HORIZONS

__all__ = [
    "DEFAULT_SEED",
    "DEFAULT_SIMULATIONS",
    "DEFAULT_TERM_HORIZONS",
    "DISTS",
    "FALLBACK",
    "MEANS",
    "MIN_RETURNS",
    "MODELS",
    "MODEL_LABELS",
    "FitCancelled",
    "GarchComparison",
    "GarchFit",
    "evidence",
    "fit_garch",
    "fit_many",
    "fit_models",
]
