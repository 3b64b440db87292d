"""Number formatting shared by the command line, the window, the exports' text and the readings.

One module, one style: a percentage is ``23.45%`` everywhere (no space), a missing number is
``n/a``, and no number prints with more than about 6 significant digits or as a misleading zero.
"""

from __future__ import annotations

import math

MAX_PLAIN_PERCENT = 1e4
"""Percentages at or above this (100 x a decimal) print in scientific form with 4 significant digits."""
NA = "n/a"


def _finite(x) -> float | None:
    """``x`` as a finite float, or ``None`` (None, NaN, inf, text, booleans)."""
    if x is None or isinstance(x, (bool, str)):
        return None
    try:
        v = float(x)  # also numpy scalars
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def pct(x, digits: int = 2) -> str:
    """0.2345 -> '23.45%'; None/NaN -> 'n/a'.

    Never more than about 6 significant digits: a value of 10,000 % or more (a failed fit, say)
    prints as '5.4e+72%' rather than 75 digits.
    """
    v = _finite(x)
    if v is None:
        return NA
    p = 100.0 * v
    text = f"{p:.4g}" if abs(p) >= MAX_PLAIN_PERCENT else f"{p:.{digits}f}"
    return text + "%"


def number(x, digits: int = 4, *, signed: bool = False, grouping: bool = False) -> str:
    """Fixed ``digits`` decimals (``signed``: always a sign; ``grouping``: thousands separators).

    A non-zero value that would print as zero (|x| below half the last decimal) prints in
    scientific form with 3 significant digits instead, so a small price difference never reads
    0.0000; ``-0`` prints as ``0``.
    """
    v = _finite(x)
    if v is None:
        return NA
    v += 0.0  # no "-0.0000"
    sign = "+" if signed else ""
    if v != 0 and abs(v) < 0.5 * 10.0 ** -digits:
        return f"{v:{sign}.2e}"
    if v == 0:
        v = 0.0
    return f"{v:{sign}{',' if grouping else ''}.{digits}f}"


def sig(x, digits: int = 4) -> str:
    """``digits`` significant digits (general format); text passes through; None -> ''."""
    if x is None:
        return ""
    if isinstance(x, str):
        return x
    v = _finite(x)
    if v is None:
        try:
            float(x)
        except (TypeError, ValueError):
            return str(x)
        return NA
    return f"{v:.{digits}g}"


def p_value(x) -> str:
    """A p-value with 3 decimals, '<0.001' below that; 'n/a' when missing."""
    v = _finite(x)
    if v is None:
        return NA
    return "<0.001" if v < 0.001 else f"{v:.3f}"


def points(x) -> str:
    """Vol points with one decimal (4 significant digits for huge gaps)."""
    v = _finite(x)
    if v is None:
        return NA
    return f"{v:.4g}" if abs(v) >= 1e4 else f"{v:.1f}"


def money(x) -> str:
    """An absolute amount to the cent; small non-zero amounts with two significant figures."""
    v = _finite(x)
    if v is None:
        return NA
    v = abs(v)
    return f"{v:.2g}" if 0 < v < 0.005 else f"{v:.2f}"


def share(x) -> str:
    """A share of outcomes as a percentage: two decimals below 1 %, one above."""
    v = _finite(x)
    if v is None:
        return NA
    return f"{100 * v:.2f}%" if abs(v) < 0.01 else f"{100 * v:.1f}%"


def ordinal(n: int) -> str:
    """1 -> '1st', 22 -> '22nd', 13 -> '13th'."""
    suffix = "th" if 10 <= n % 100 <= 20 else {1: "st", 2: "nd", 3: "rd"}.get(n % 10, "th")
    return f"{n}{suffix}"


def json_safe(obj):
    """A structure made JSON-safe: NaN and infinities become null (never passed off as numbers),
    numpy scalars plain numbers, keys text."""
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {str(k): json_safe(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [json_safe(v) for v in obj]
    if hasattr(obj, "item") and callable(obj.item):  # numpy scalars
        return json_safe(obj.item())
    return obj
