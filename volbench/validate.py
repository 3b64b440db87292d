"""One validation function per user setting, shared by every command, the export and the window.

Each function is small and pure: it takes the raw value (text from the command line, a number from
a control, a value from a saved session), returns it normalised, or raises
:class:`~volbench.errors.VolbenchError` with one message. Because every front end calls the same
function, the same bad value gets the same answer everywhere. Messages name the setting as the user
sees it (the option or control), never a Python parameter.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable

import numpy as np
import pandas as pd

from volbench.errors import VolbenchError

PRICING_VOL_MAX = 5.0
"""Largest pricing vol accepted anywhere (500 %): above it a value is almost surely a percent."""
ABSURD_VOL = 5.0
"""Annualized vol above which a model's output is treated as a failed fit (500 %)."""
LAST = "last"
"""The as-of value meaning 'the last row of each file'."""
_ISO_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")
_ISO_DATE_TIME = re.compile(r"^\d{4}-\d{2}-\d{2}([T ]\d{2}:\d{2}(:\d{2}(\.\d+)?)?)?$")


def _is_int(x) -> bool:
    return isinstance(x, (int, np.integer)) and not isinstance(x, bool)


def window(value, *, minimum: int = 1) -> int | None:
    """Bars in an estimation window; ``None``/``"all"`` is the whole history."""
    if value is None or (isinstance(value, str) and value.strip().lower() == "all"):
        return None
    try:
        w = int(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"window must be a whole number of bars or 'all', got {value!r}") from None
    if isinstance(value, bool) or (isinstance(value, (float, np.floating)) and value != w):
        raise VolbenchError(f"window must be a whole number of bars or 'all', got {value!r}")
    if w < minimum:
        raise VolbenchError(f"window must be >= {minimum} bars, got {w}")
    return w


def annualization(value) -> float:
    """Bars per year used to annualize (e.g. 252 or 365)."""
    try:
        a = float(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"annualization must be a number of bars per year, got {value!r}") from None
    if not (a > 0 and a < 1e6):
        raise VolbenchError(f"annualization must be > 0 bars per year (e.g. 252 or 365), got {a:g}")
    return a


def pricing_vol(value, what: str = "pricing vol") -> float:
    """A proposed annualized vol: a decimal in (0, 5); says so when it looks like a percent."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"{what} must be a decimal such as 0.25 for 25%, got {value!r}") from None
    if not math.isfinite(v) or v <= 0:
        raise VolbenchError(f"{what} must be > 0 (a decimal such as 0.25 for 25%), got {v:g}")
    if v >= PRICING_VOL_MAX:
        hint = f"; it looks like a percent: did you mean {v / 100:g}?" if v < 100 * PRICING_VOL_MAX else ""
        raise VolbenchError(f"{what} must be a decimal below {PRICING_VOL_MAX:g} (0.25 means 25%), "
                            f"got {v:g}{hint}")
    return v


def days(value) -> int:
    """The option's life in bars: a whole number >= 1."""
    try:
        d = float(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"days must be a whole number of bars >= 1, got {value!r}") from None
    if isinstance(value, bool) or not math.isfinite(d) or d != int(d) or d < 1:
        raise VolbenchError(f"days must be a whole number of bars >= 1, got {d:g}")
    return int(d)


def date(value, what: str = "date", *, time_of_day: bool = False) -> pd.Timestamp | None:
    """A calendar date: text must be ISO ``YYYY-MM-DD``; ``None`` stays ``None``.

    Dates such as ``01/06/2022`` are refused: month-first and day-first readings of them differ.
    ``time_of_day=True`` (the core, for intraday rows) also accepts ISO ``YYYY-MM-DD HH:MM[:SS]``;
    the command line accepts dates only.
    """
    if value is None:
        return None
    if isinstance(value, str):
        text = value.strip()
        if not (_ISO_DATE_TIME if time_of_day else _ISO_DATE).match(text):
            raise VolbenchError(f"{what} must look like YYYY-MM-DD, got {value!r}")
        value = text
    try:
        ts = pd.Timestamp(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"{what} must look like YYYY-MM-DD, got {value!r}") from None
    if ts is pd.NaT:
        raise VolbenchError(f"{what} must look like YYYY-MM-DD, got {value!r}")
    return ts.tz_localize(None) if ts.tzinfo else ts


def as_of(value, *, time_of_day: bool = False) -> pd.Timestamp | None:
    """The as-of date: ISO ``YYYY-MM-DD``, or ``None``/``"last"`` for the last row."""
    if value is None or (isinstance(value, str) and value.strip().lower() == LAST):
        return None
    return date(value, "as-of date", time_of_day=time_of_day)


def date_within(ts: pd.Timestamp | None, first: str, last: str, *, what: str, name: str) -> None:
    """Refuse a date outside the data's range ``first`` .. ``last`` (ISO strings), naming the range."""
    if ts is None:
        return
    day = ts.normalize()
    if day < pd.Timestamp(first) or day > pd.Timestamp(last):
        fix = " or 'last' for the last row" if what == "as-of date" else ""
        raise VolbenchError(f"{name}: {what} {day.date()} is outside the data, which runs from {first} to "
                            f"{last}; choose a date in that range{fix}")


def as_of_for(history, value) -> str | None:
    """The as-of date checked against ``history``'s range; ``None`` for the last row."""
    ts = as_of(value, time_of_day=True)
    date_within(ts, history.first_date, history.last_date, what="as-of date", name=history.name)
    if ts is None:
        return None
    return ts.strftime("%Y-%m-%d") if ts == ts.normalize() else ts.isoformat()


def level(value, what: str = "confidence") -> float:
    """A confidence level strictly between 0 and 1 (e.g. 0.95)."""
    try:
        c = float(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"{what} must be between 0 and 1, got {value!r}") from None
    if not 0 < c < 1:
        raise VolbenchError(f"{what} must be between 0 and 1, got {c:g}")
    return c


def significance(value) -> float:
    """The significance level of the verdicts, between 0 and 0.5 (e.g. 0.05)."""
    try:
        a = float(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"alpha must be a significance level between 0 and 0.5, got {value!r}") from None
    if not 0.0 < a < 0.5:
        hint = f"; it looks like a percent: did you mean {a / 100:g}?" if 1.0 <= a < 50.0 else ""
        raise VolbenchError(f"alpha must be a significance level between 0 and 0.5 (e.g. 0.05), got {a:g}" + hint)
    return a


def lam(value) -> float:
    """EWMA decay lambda, strictly between 0 and 1 (0.94 for daily data)."""
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"EWMA lambda must be between 0 and 1 (exclusive), got {value!r}") from None
    if not 0 < x < 1:
        raise VolbenchError(f"EWMA lambda must be between 0 and 1 (exclusive), got {x:g}")
    return x


def choice(value, allowed: Iterable[str], what: str) -> str:
    """One of ``allowed`` (case-insensitive); the message lists the choices."""
    allowed = tuple(allowed)
    if not isinstance(value, str) or value.strip().lower() not in allowed:
        raise VolbenchError(f"unknown {what} {value!r}; choose one of: {', '.join(allowed)}")
    return value.strip().lower()


def estimator(value) -> str:
    """An estimator key from the registry (close_to_close, parkinson, ...)."""
    from volbench.estimators.registry import ESTIMATOR_KEYS

    if not isinstance(value, str) or value not in ESTIMATOR_KEYS:
        raise VolbenchError(f"unknown estimator {value!r}; choose one of: {', '.join(ESTIMATOR_KEYS)}")
    return value


def _model_keys() -> tuple[str, ...]:
    # the registry: a variant added there is accepted here
    from volbench.models.family import MODEL_REGISTRY

    return tuple(MODEL_REGISTRY)


def model(value) -> str:
    """A GARCH-type model key from the registry (garch, gjr, egarch, ...)."""
    return choice(value, _model_keys(), "model")


def models(value) -> tuple[str, ...]:
    """``"all"``, one model key or several -> unique model keys in the given order."""
    keys = _model_keys()
    if isinstance(value, str):
        value = keys if value.strip().lower() == "all" else (value,)
    out = tuple(dict.fromkeys(model(m) for m in value))
    if not out:
        raise VolbenchError(f"models must name at least one of: {', '.join(keys)}")
    return out


def distribution(value) -> str:
    """An innovation distribution key from the registry (normal, t)."""
    from volbench.models.family import DIST_REGISTRY

    return choice(value, tuple(DIST_REGISTRY), "distribution")


def mean(value) -> str:
    """The mean model of a GARCH fit: constant (estimated) or zero."""
    return choice(value, ("constant", "zero"), "mean")


MAX_HORIZON = 2520
"""Longest option life a forward-vol term structure accepts (ten years of daily bars)."""


def term_horizons(value) -> tuple[int, ...]:
    """Option lives in bars for a forward-vol term structure: sorted, unique, 1 to MAX_HORIZON."""
    try:
        raw = list(value)
    except TypeError:
        raise VolbenchError(f"horizons must be a list of whole numbers of bars, got {value!r}") from None
    out = []
    for h in raw:
        if isinstance(h, bool) or not isinstance(h, (int, np.integer)):
            if isinstance(h, (float, np.floating)) and float(h).is_integer():
                h = int(h)
            else:
                raise VolbenchError(f"horizons must be whole numbers of bars, got {h!r}")
        if not 1 <= int(h) <= MAX_HORIZON:
            raise VolbenchError(f"horizons must be between 1 and {MAX_HORIZON} bars, got {int(h)}")
        out.append(int(h))
    if not out:
        raise VolbenchError("horizons must list at least one horizon in bars, e.g. 5,21,63")
    return tuple(sorted(set(out)))


def cone_windows(value) -> tuple[int, ...]:
    """Window lengths of a volatility cone: distinct bar counts >= 2, sorted."""
    if isinstance(value, (int, str)) or not len(value):
        raise VolbenchError(f"windows must be a non-empty list of bar counts, e.g. 10,20,60; got {value!r}")
    ws = [window(w, minimum=2) for w in value]
    if any(w is None for w in ws):
        raise VolbenchError("cone windows must be bar counts, not 'all'")
    seen = {w for w in ws if ws.count(w) > 1}
    if seen:
        raise VolbenchError(f"cone windows must not repeat; {', '.join(map(str, sorted(seen)))} given twice")
    return tuple(sorted(ws))


def seed(value) -> int:
    """Seed of a simulation: a whole number >= 0."""
    if not _is_int(value) or value < 0:
        raise VolbenchError(f"seed must be a whole number >= 0, got {value!r}")
    return int(value)


def simulations(value) -> int:
    """Paths of a simulated forecast: a whole number from 100 to 100000."""
    if not _is_int(value) or not 100 <= value <= 100_000:
        raise VolbenchError(f"simulations must be a whole number between 100 and 100000, got {value!r}")
    return int(value)


def max_iterations(value) -> int | None:
    """Optimizer iteration cap: a whole number >= 1, or ``None`` for the library's default."""
    if value is None:
        return None
    if not _is_int(value) or value < 1:
        raise VolbenchError(f"max_iterations must be a whole number >= 1 or None, got {value!r}")
    return int(value)


def price(value, what: str = "price") -> float | None:
    """A price given by a user (strike, spot): a finite number > 0; ``None`` stays ``None`` (default)."""
    if value is None:
        return None
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"{what} must be a positive price, got {value!r}") from None
    if isinstance(value, bool) or not (math.isfinite(v) and v > 0):
        raise VolbenchError(f"{what} must be a positive price, got {v:g}")
    return v


def option_kind(value) -> str:
    """``"call"`` or ``"put"`` (case-insensitive)."""
    k = value.strip().lower() if isinstance(value, str) else value
    if k not in ("call", "put"):
        raise VolbenchError(f"option type must be 'call' or 'put', got {value!r}")
    return k


def rate(value, what: str = "rate") -> float:
    """A rate or yield: a finite decimal with |x| < 1; says so when it looks like a percent."""
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"{what} must be a decimal such as 0.05 for 5%, got {value!r}") from None
    if not np.isfinite(x):
        raise VolbenchError(f"{what} must be a finite decimal such as 0.05 for 5%, got {value!r}")
    if abs(x) >= 1:
        raise VolbenchError(f"{what} must be a decimal between -1 and 1 (0.05 means 5%), got {x:g}; "
                            f"it looks like a percent: did you mean {x / 100:g}?")
    return x


def day_basis(value) -> str:
    """What a number of days counts: ``"trading"`` or ``"calendar"`` (case-insensitive)."""
    from volbench.pricing.daycount import check_day_basis

    return check_day_basis(value)


def expiry(value) -> str | None:
    """The option's expiry date: ISO ``YYYY-MM-DD``; ``None`` stays ``None``."""
    ts = date(value, "expiry date")
    return None if ts is None else ts.strftime("%Y-%m-%d")


def session_break(value) -> float | None:
    """A session-break gap such as ``"4h"`` or ``"90min"`` in seconds; ``None`` (or ``""``, ``"date"``):
    one session per calendar date."""
    from volbench.intraday.sessions import parse_session_break

    if value is None or (isinstance(value, str) and value.strip().lower() in ("", "date", "calendar")):
        return None
    return parse_session_break(value)
