"""The one place that maps things on screen to colours.

Estimators use the Okabe-Ito colour-blind-safe set (Okabe & Ito, *Color Universal Design*, 2008),
one fixed colour each, the same in every plot, table swatch and legend. GARCH-type models carry
their colour and dash pattern in their spec (:mod:`volbench.models.family`: colours from Paul
Tol's colour-blind-safe "muted" scheme), so a model line is never mistaken for an estimator. The
proposed pricing vol is always near-black and dashed. Plain strings only, so this module needs no
Qt import.
"""

from __future__ import annotations

from volbench.models import family

# Okabe-Ito: blue, orange, bluish green, reddish purple, vermillion, sky blue (yellow is left out:
# too faint on a light background).
ESTIMATOR_COLOURS: dict[str, str] = {
    "close_to_close": "#0072B2",
    "parkinson": "#E69F00",
    "garman_klass": "#009E73",
    "rogers_satchell": "#CC79A7",
    "yang_zhang": "#D55E00",
    "ewma": "#56B4E9",
}
FALLBACK_COLOURS = ("#882255", "#332288", "#999933", "#44AA99", "#AA4499")

PRICING_VOL = "#222222"
PRICE_LINE = "#3B4A5A"
FLAGGED = "#D55E00"
EXCLUDED = "#9A9A9A"
REFERENCE = "#555555"
BAND = "#0072B2"
GRID_ALPHA = 0.18
BACKGROUND = "#FBFBF8"
FOREGROUND = "#2B2B2B"

SEVERITY_COLOURS = {"error": "#B8360A", "warning": "#9A6700", "info": "#3C6E91"}
STATUS_COLOURS = {"consistent": "#1E7A53", "doubtful": "#9A6700", "rejected": "#B8360A"}


def estimator_colour(key: str) -> str:
    """Fixed colour of estimator ``key`` (a stable fallback for keys added later)."""
    if key in ESTIMATOR_COLOURS:
        return ESTIMATOR_COLOURS[key]
    return FALLBACK_COLOURS[sum(map(ord, key)) % len(FALLBACK_COLOURS)]


def model_colour(model: str) -> str:
    """Colour of GARCH-type model ``model``: its spec's, else a stable one from the key."""
    return family.model_colour(model, FALLBACK_COLOURS[sum(map(ord, model)) % len(FALLBACK_COLOURS)])
