"""Shared type aliases and named string options."""

from __future__ import annotations

from typing import Literal

Column = Literal["open", "high", "low", "close", "volume"]
PRICE_COLUMNS: tuple[Column, ...] = ("open", "high", "low", "close")
Severity = Literal["error", "warning", "info"]
OutputFormat = Literal["table", "json", "csv"]
OptionType = Literal["call", "put"]

DEFAULT_ANNUALIZATION = 252.0
"""Bars per year used to annualize per-bar variance (common practice for exchange-traded daily data)."""


def check_annualization(annualization: float) -> float:
    """Validate an annualization factor (bars per year) and return it as float."""
    from volbench.errors import VolbenchError

    try:
        a = float(annualization)
    except (TypeError, ValueError):
        raise VolbenchError(f"annualization must be a number of bars per year, got {annualization!r}") from None
    if not (a > 0 and a < 1e6):
        raise VolbenchError(f"annualization must be > 0 bars per year (e.g. 252 or 365), got {annualization!r}")
    return a


def check_window(window: int | str | None, *, minimum: int = 2) -> int | None:
    """Validate a window of bars; ``None`` or ``"all"`` means the whole sample."""
    from volbench.errors import VolbenchError

    if window is None or (isinstance(window, str) and window.strip().lower() == "all"):
        return None
    try:
        w = int(window)
    except (TypeError, ValueError):
        raise VolbenchError(f"window must be a whole number of bars or 'all', got {window!r}") from None
    if isinstance(window, float) and window != w:
        raise VolbenchError(f"window must be a whole number of bars or 'all', got {window!r}")
    if w < minimum:
        raise VolbenchError(f"window must be >= {minimum} bars, got {w}")
    return w


def check_positive(value, message: str) -> float:
    """``value`` as a finite float > 0; otherwise VolbenchError ``"{message}, got {value!r}"``."""
    import math

    from volbench.errors import VolbenchError

    try:
        v = float(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"{message}, got {value!r}") from None
    if not (math.isfinite(v) and v > 0):
        raise VolbenchError(f"{message}, got {value!r}")
    return v
