"""Number formatting shared by the command line, the window and the readings."""

from __future__ import annotations

import math

MAX_PLAIN_PERCENT = 1e4
"""Percentages at or above this (100 x a decimal) print in scientific form with 4 significant digits."""


def pct(x, digits: int = 2, *, space: bool = True) -> str:
    """0.2345 -> '23.45 %' (``space=False``: '23.45%'); None/NaN -> 'n/a'.

    Never more than about 6 significant digits: a value of 10,000 % or more (a failed fit, say)
    prints as '5.4e+72 %' rather than 75 digits.
    """
    if x is None or isinstance(x, bool) or not isinstance(x, (int, float)) or not math.isfinite(x):
        try:
            x = float(x)  # numpy scalars
        except (TypeError, ValueError):
            return "n/a"
        if not math.isfinite(x):
            return "n/a"
    p = 100.0 * float(x)
    text = f"{p:.4g}" if abs(p) >= MAX_PLAIN_PERCENT else f"{p:.{digits}f}"
    return text + (" %" if space else "%")
