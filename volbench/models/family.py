"""GARCH-type model families: one spec per model and per innovation distribution, one registry each.

Fitting (:mod:`volbench.models.garch`), the fit checks (:mod:`volbench.models.checks`), the
ranking, the comparison candidates, the exports, the command line and the window read what they
need about a model from its :class:`ModelSpec` (label, ``arch`` arguments, persistence and shock
response terms, closed-form term structure or not, colour), never from ``if model == ...``
branches. A new GARCH-type variant is one :class:`ModelSpec` added to :data:`MODEL_REGISTRY`
(plus its tests); a new innovation distribution is one :class:`DistSpec` in :data:`DIST_REGISTRY`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any


@dataclass(frozen=True)
class ModelSpec:
    """Declared contract of one GARCH-type model.

    Attributes
    ----------
    key, label, short
        Stable key (CLI, exports, sessions); full label for tables ("GJR-GARCH(1,1,1)"); short
        name for notes and controls ("GJR-GARCH").
    arch
        Keyword arguments of ``arch.arch_model`` that select the volatility process
        (``vol``, ``p``, ``o``, ``q``, optionally ``power``).
    persistence
        Weight of each parameter in the persistence p = sum w_k theta_k (alpha + beta for GARCH;
        alpha + gamma / 2 + beta for GJR under a symmetric density; beta for EGARCH). For a
        log-variance model these are the autoregressive terms of log variance.
    response
        Shock-response parameters: their Wald test says whether the fit finds volatility
        clustering; for a ``response_bounded`` model their sum on its lower bound 0 means none.
    response_bounded
        The response terms are constrained to be >= 0 (GARCH, GJR): a sum on 0 is a boundary fit
        (no clustering), which sends the forward vol to the constant-vol fallback.
    asymmetry
        The leverage term of an asymmetric model (GJR's ``gamma[1]``), if any: when the symmetric
        response sits on 0 and this term carries the whole response, a note says so.
    log_variance
        The recursion is on log variance (EGARCH): omega is the log-variance constant, the
        long-run level is exp(omega / (1 - p)) and converting omega to decimal units shifts it by
        (1 - p) ln 100^2.
    closed_form
        Multi-step variance forecasts have a closed form (``arch``'s analytic forecast); otherwise
        they are simulated with a seeded generator.
    colour, dash
        Line colour (hex) and dash pattern (``solid``, ``dash``, ``dashdot``, ``dot``) in every plot.
    source, assumes
        Published source of the recursion and, in a sentence, what it assumes (help texts).
    """

    key: str
    label: str
    short: str
    arch: Mapping[str, Any]
    persistence: Mapping[str, float]
    response: tuple[str, ...]
    response_bounded: bool = True
    asymmetry: str | None = None
    log_variance: bool = False
    closed_form: bool = True
    colour: str = "#882255"
    dash: str = "solid"
    source: str = ""
    assumes: str = ""

    def __post_init__(self) -> None:
        object.__setattr__(self, "arch", MappingProxyType(dict(self.arch)))
        object.__setattr__(self, "persistence", MappingProxyType(dict(self.persistence)))
        object.__setattr__(self, "response", tuple(self.response))

    @property
    def forecast_method(self) -> str:
        """``"analytic"`` or ``"simulation"``: how the multi-step variance forecast is made."""
        return "analytic" if self.closed_form else "simulation"

    @property
    def response_name(self) -> str:
        """The response terms as written in warnings, e.g. ``"alpha[1] + gamma[1]"``."""
        return " + ".join(self.response)


@dataclass(frozen=True)
class DistSpec:
    """One innovation distribution: key, label, ``arch`` name and the bounds of its shape parameters.

    A shape parameter on its lower bound makes the fit degenerate (a warning); on its upper bound
    the distribution is indistinguishable from the normal (a note).
    """

    key: str
    label: str
    arch: str
    shape_bounds: Mapping[str, tuple[float, float]] = field(default_factory=dict)

    def __post_init__(self) -> None:
        object.__setattr__(self, "shape_bounds", MappingProxyType(dict(self.shape_bounds)))


GARCH = ModelSpec(
    key="garch", label="GARCH(1,1)", short="GARCH",
    arch={"vol": "GARCH", "p": 1, "o": 0, "q": 1},
    persistence={"alpha[1]": 1.0, "beta[1]": 1.0}, response=("alpha[1]",),
    colour="#882255", dash="solid",  # Paul Tol's colour-blind-safe "muted" wine
    source="Bollerslev (1986), Journal of Econometrics 31(3)",
    assumes="Today's variance is a constant plus a share of yesterday's squared shock and of yesterday's "
            "variance; up and down moves raise it alike.",
)
GJR = ModelSpec(
    key="gjr", label="GJR-GARCH(1,1,1)", short="GJR-GARCH",
    arch={"vol": "GARCH", "p": 1, "o": 1, "q": 1},
    persistence={"alpha[1]": 1.0, "gamma[1]": 0.5, "beta[1]": 1.0}, response=("alpha[1]", "gamma[1]"),
    asymmetry="gamma[1]",
    colour="#332288", dash="dash",  # Tol indigo
    source="Glosten, Jagannathan & Runkle (1993), Journal of Finance 48(5)",
    assumes="As GARCH(1,1), with falling prices raising variance more than rising ones (leverage).",
)
EGARCH = ModelSpec(
    key="egarch", label="EGARCH(1,1)", short="EGARCH",
    arch={"vol": "EGARCH", "p": 1, "o": 1, "q": 1},
    persistence={"beta[1]": 1.0}, response=("alpha[1]", "gamma[1]"), response_bounded=False,
    log_variance=True, closed_form=False,
    colour="#999933", dash="dashdot",  # Tol olive
    source="Nelson (1991), Econometrica 59(2)",
    assumes="Log variance follows an autoregression driven by the size and sign of standardized shocks; "
            "multi-step forecasts have no closed form and are simulated.",
)

MODEL_REGISTRY: dict[str, ModelSpec] = {s.key: s for s in (GARCH, GJR, EGARCH)}
"""Every GARCH-type model volbench fits, in display order. Register a variant by adding its spec."""

NORMAL = DistSpec("normal", "normal", "normal")
STUDENT_T = DistSpec("t", "Student-t", "t", {"nu": (2.05, 500.0)})  # arch's bounds on nu

DIST_REGISTRY: dict[str, DistSpec] = {s.key: s for s in (NORMAL, STUDENT_T)}
"""Innovation distributions a fit may use."""

MEANS: tuple[str, ...] = ("constant", "zero")


def model_keys() -> tuple[str, ...]:
    """Keys of every registered model, in display order."""
    return tuple(MODEL_REGISTRY)


def dist_keys() -> tuple[str, ...]:
    return tuple(DIST_REGISTRY)


def get_model(key: str) -> ModelSpec:
    """The spec of model ``key`` (validated: the message lists the registered models)."""
    from volbench import validate

    return MODEL_REGISTRY[validate.model(key)]


def get_dist(key: str) -> DistSpec:
    """The spec of distribution ``key`` (validated)."""
    from volbench import validate

    return DIST_REGISTRY[validate.distribution(key)]


def model_colour(key: str, fallback: str = "#44AA99") -> str:
    """Plot colour of model ``key`` (``fallback`` for a key not registered)."""
    spec = MODEL_REGISTRY.get(key)
    return spec.colour if spec is not None else fallback
