"""GARCH-type fits (via ``arch``) and the forward vol over an option's life.

Core only (no Qt). Each model is a :class:`~volbench.models.family.ModelSpec` in
:data:`MODEL_REGISTRY`; :func:`fit_garch` fits one; :func:`fit_models` fits several to one series
and ranks them by BIC (:mod:`volbench.models.ranking`); :func:`fit_many` runs many series in worker
processes with progress and cancellation. Estimates are statistical, carry model risk and are not
advice.
"""

from volbench.models.batch import FitCancelled, fit_many
from volbench.models.family import (
    DIST_REGISTRY,
    MODEL_REGISTRY,
    DistSpec,
    ModelSpec,
    get_dist,
    get_model,
    model_keys,
)
from volbench.models.garch import FALLBACK, MIN_RETURNS, GarchFit, fit_garch
from volbench.models.ranking import GarchComparison, evidence, fit_models
from volbench.settings import GarchSettings
from volbench.types import DEFAULT_SEED, DEFAULT_SIMULATIONS, DEFAULT_TERM_HORIZONS

__all__ = [
    "DEFAULT_SEED",
    "DEFAULT_SIMULATIONS",
    "DEFAULT_TERM_HORIZONS",
    "DIST_REGISTRY",
    "FALLBACK",
    "MIN_RETURNS",
    "MODEL_REGISTRY",
    "DistSpec",
    "FitCancelled",
    "GarchComparison",
    "GarchFit",
    "GarchSettings",
    "ModelSpec",
    "evidence",
    "fit_garch",
    "fit_many",
    "fit_models",
    "get_dist",
    "get_model",
    "model_keys",
]
