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
EWMA_LAMBDA = 0.94
"""RiskMetrics decay for daily data (J.P. Morgan/Reuters RiskMetrics Technical Document, 1996)."""
DEFAULT_CONE_WINDOWS: tuple[int, ...] = (10, 20, 40, 60, 120, 250)
"""Window lengths of the volatility cone, in bars."""
DEFAULT_TERM_HORIZONS: tuple[int, ...] = (5, 10, 21, 42, 63, 126, 252)
"""Default option lives in bars: a week, two weeks, one, two, three, six and twelve months."""
DEFAULT_SEED = 20_240_917
"""Seed of simulated forecasts (EGARCH) unless the user gives one."""
DEFAULT_SIMULATIONS = 2000
"""Paths of a simulated forecast unless the user gives a number."""


def check_annualization(annualization: float) -> float:
    """Validate an annualization factor (bars per year) and return it as float (see volbench.validate)."""
    from volbench import validate

    return validate.annualization(annualization)


def check_window(window: int | str | None, *, minimum: int = 2) -> int | None:
    """Validate a window of bars; ``None`` or ``"all"`` means the whole sample (see volbench.validate)."""
    from volbench import validate

    return validate.window(window, minimum=minimum)


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
