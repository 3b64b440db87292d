"""What volbench calls things on screen and in memos: full method names, never raw keys or two-letter codes.

The exponentially weighted estimator is named by its decay, described as the standard daily decay
0.94 when it has that value (the published source of the value is in docs/METHODS.md).
"""

from __future__ import annotations

from volbench.estimators import REGISTRY
from volbench.types import EWMA_LAMBDA


def estimator_name(key: str, lam: float | None = None) -> str:
    """Full name of estimator ``key`` as the window shows it (``lam``: the EWMA decay in use)."""
    spec = REGISTRY[key]
    if "lam" not in spec.options:
        return spec.label
    base = spec.label.split(" (")[0]
    lam = EWMA_LAMBDA if lam is None else lam
    return f"{base} (standard daily decay {EWMA_LAMBDA:g})" if lam == EWMA_LAMBDA else f"{base} (decay {lam:g})"


def estimator_help(key: str, lam: float | None = None) -> str:
    """Tooltip of an estimator: its full name, what it assumes, and its source (or, for the decay-
    weighted one, what its decay means)."""
    spec = REGISTRY[key]
    if "lam" in spec.options:
        return (f"{estimator_name(key, lam)}: recent returns weigh most, each day's weight is the decay times "
                f"the next day's; {EWMA_LAMBDA:g} is the standard daily decay (half-life about 11 bars).")
    return f"{spec.label}: {spec.assumes}\nSource: {spec.source}"
