"""The vol over an option's life: term structures of forward vol from expected per-bar variances.

A GARCH-family fit gives, at the last bar, the expected variance of each future bar h = 1, 2, ...
The vol to price an option over T bars is the square root of the *average* expected variance over
bars 1..T, annualized. This module holds that averaging, its closed form for GARCH(1,1)/GJR, and
Hull's continuous-time version, as pure functions of numbers and arrays.
"""

from __future__ import annotations

from collections.abc import Iterable

import numpy as np
import pandas as pd

from volbench import validate
from volbench.errors import VolbenchError
from volbench.types import DEFAULT_TERM_HORIZONS
from volbench.validate import MAX_HORIZON


def check_horizons(horizons: Iterable[int]) -> tuple[int, ...]:
    """Horizons in bars, sorted and unique (the one rule: :func:`volbench.validate.term_horizons`)."""
    return validate.term_horizons(horizons)


__all__ = ["DEFAULT_TERM_HORIZONS", "MAX_HORIZON", "check_horizons"]


def average_variance_path(variance_path: np.ndarray, horizons: Iterable[int]) -> np.ndarray:
    """Average of the expected per-bar variances over bars 1..T for each T in ``horizons``.

    ``variance_path[h - 1]`` is the expected variance of bar h ahead.
    """
    v = np.asarray(variance_path, dtype=float)
    t = np.asarray(list(horizons), dtype=int)
    if t.size and (t.min() < 1 or t.max() > v.size):
        raise VolbenchError(f"horizons must be between 1 and {v.size} bars for this forecast, got {t.tolist()}")
    return np.cumsum(v)[t - 1] / t


def term_structure(variance_path: np.ndarray, horizons: Iterable[int], annualization: float) -> pd.DataFrame:
    """Forward-vol term structure: ``horizon`` (bars) and annualized ``vol`` over bars 1..horizon.

    Notes
    -----
    vol(T) = sqrt(A x (1/T) sum_{h=1..T} E[s2_{t+h}]) (docs/METHODS.md, "GARCH and the vol over an
    option's life").
    """
    hz = list(horizons)
    avg = average_variance_path(variance_path, hz)
    return pd.DataFrame({"horizon": np.asarray(hz, dtype=int), "vol": np.sqrt(avg * annualization)})


def flat_term_structure(vol: float, horizons: Iterable[int]) -> pd.DataFrame:
    """A flat term structure at ``vol`` (used for the EWMA fallback)."""
    hz = np.asarray(list(horizons), dtype=int)
    return pd.DataFrame({"horizon": hz, "vol": np.full(hz.size, float(vol))})


def garch_variance_path(next_var: float, long_run_var: float, persistence: float, horizon: int) -> np.ndarray:
    """Expected per-bar variance h = 1..horizon bars ahead for GARCH(1,1) or GJR-GARCH(1,1,1).

    Notes
    -----
    E[s2_{t+h}] = V_L + p^(h-1) (s2_{t+1} - V_L), with p the persistence (alpha + beta; GJR:
    alpha + gamma/2 + beta under a symmetric innovation distribution) and V_L = omega / (1 - p)
    (Bollerslev 1986; docs/METHODS.md, "GARCH and the vol over an option's life").
    """
    h = np.arange(horizon)
    return long_run_var + persistence**h * (next_var - long_run_var)


def garch_average_variance(next_var: float, long_run_var: float, persistence: float, horizons) -> np.ndarray:
    """Closed form of the average expected variance over bars 1..T for GARCH(1,1)/GJR.

    Notes
    -----
    (1/T) sum_{h=1..T} [V_L + p^(h-1) (s2_{t+1} - V_L)] = V_L + (s2_{t+1} - V_L) (1 - p^T) / ((1 - p) T),
    a geometric sum of the h-step forecast (docs/METHODS.md, "GARCH and the vol over an option's life"); requires 0 <= p < 1.
    """
    p = float(persistence)
    if not 0 <= p < 1:
        raise VolbenchError(f"the closed form needs persistence in [0, 1), got {p}")
    t = np.asarray(list(horizons), dtype=float)
    return long_run_var + (next_var - long_run_var) * (1.0 - p**t) / ((1.0 - p) * t)


def hull_average_variance(v0: float, long_run_var: float, persistence: float, horizons) -> np.ndarray:
    """Hull's continuous-time average variance over a life of T bars (per bar, not annualized).

    Notes
    -----
    sigma(T)^2 / A = V_L + (1 - e^{-aT}) / (aT) (V(0) - V_L), a = ln(1/p) (Hull, *Options, Futures
    and Other Derivatives*, chapter on GARCH volatility term structures; recalled from memory).
    It integrates V(t) = V_L + e^{-at} (V(0) - V_L) over [0, T]; the discrete average is a left
    Riemann sum of the same curve, so the two differ by at most |V(0) - V_L| / T.
    """
    p = float(persistence)
    if not 0 < p < 1:
        raise VolbenchError(f"Hull's formula needs persistence in (0, 1), got {p}")
    a = np.log(1.0 / p)
    t = np.asarray(list(horizons), dtype=float)
    return long_run_var + (1.0 - np.exp(-a * t)) / (a * t) * (v0 - long_run_var)


def half_life(persistence: float) -> float:
    """Shock half-life ln(0.5) / ln(p) in bars; NaN when p is outside (0, 1) (docs/METHODS.md, "GARCH and the vol over an option's life")."""
    p = float(persistence)
    if not 0 < p < 1:
        return float("nan")
    return float(np.log(0.5) / np.log(p))


def interpolate_average_variance(variance_path: np.ndarray, days: float) -> float:
    """Average expected variance over a life of ``days`` bars, ``days`` possibly fractional.

    Total variance sum_{h<=T} E[s2_{t+h}] is interpolated linearly between whole bars (the last
    partial bar contributes its fraction); below one bar the first bar's variance is used.
    """
    v = np.asarray(variance_path, dtype=float)
    d = float(days)
    if not (np.isfinite(d) and d > 0):
        raise VolbenchError(f"days must be a positive number of bars, got {days!r}")
    if d > v.size:
        raise VolbenchError(f"days must be at most {v.size} bars for this forecast (the forecast horizon), "
                            f"got {days!r}; refit with a longer horizon")
    if d <= 1:
        return float(v[0])
    whole = int(np.floor(d))
    total = float(np.sum(v[:whole]))
    if d > whole:
        total += (d - whole) * float(v[whole])
    return total / d
