"""HAR-RV forecast of whole-day realized variance as a forward-vol term structure.

Corsi's heterogeneous autoregression (2009, J. Financial Econometrics 7(2)) regresses tomorrow's
realized variance on today's, the last week's average and the last month's average:
RV_{t+1} = b0 + bd RV_t + bw mean(RV_{t-4..t}) + bm mean(RV_{t-21..t}) + e. ``arch``'s
:class:`arch.univariate.HARX` with lags 1, 5 and 22 fits it by least squares and iterates it for
multi-day forecasts.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from arch.univariate import HARX

from volbench.errors import VolbenchError
from volbench.intraday.measures import RealizedMeasures
from volbench.models.term import DEFAULT_TERM_HORIZONS, check_horizons, term_structure
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization

HAR_LAGS = (1, 5, 22)
MIN_HAR_DAYS = 60
"""Fewest whole-day variances to fit on: 22 for the longest lag and 38 to estimate four coefficients."""
SCALE = 1e4
"""Variances are fitted in percent squared (daily RV of a 20 % vol is about 1.6), a scale at which
``arch`` needs no rescaling; results are scaled back."""
PARAM_NAMES = ("const", "daily", "weekly", "monthly")


@dataclass(frozen=True, eq=False)
class HarForecast:
    """A HAR-RV fit and its forward-vol term structure.

    Attributes
    ----------
    name
        Series name.
    params, std_errors
        Coefficients ``const`` (per-day variance), ``daily``, ``weekly``, ``monthly`` and their
        standard errors (ordinary least squares, from ``arch``).
    r_squared, nobs
        Fit quality and the number of days regressed.
    variance_path
        Expected whole-day variance of each day ahead, 1..max horizon (after any flooring).
    term_structure
        Columns ``horizon`` (trading days) and ``vol`` (annualized): sqrt(A x mean of the expected
        variances over days 1..horizon).
    floored_days, floor
        Days ahead whose forecast was zero or negative, and the value put in their place.
    annualization
        Trading days a year.
    notes
        Plain sentences (e.g. how many forecasts were floored).
    """

    name: str
    params: dict[str, float]
    std_errors: dict[str, float]
    r_squared: float
    nobs: int
    variance_path: np.ndarray
    term_structure: pd.DataFrame
    floored_days: int
    floor: float
    annualization: float
    notes: tuple[str, ...] = field(default=())

    @property
    def persistence(self) -> float:
        """bd + bw + bm: how slowly the forecast returns to its long-run level."""
        return self.params["daily"] + self.params["weekly"] + self.params["monthly"]

    def as_dict(self) -> dict:
        return {
            "params": dict(self.params),
            "std_errors": dict(self.std_errors),
            "r_squared": self.r_squared,
            "nobs": self.nobs,
            "persistence": self.persistence,
            "term_structure": [{"horizon": int(h), "vol": float(v)}
                               for h, v in zip(self.term_structure["horizon"], self.term_structure["vol"])],
            "floored_days": self.floored_days,
            "annualization": self.annualization,
            "notes": list(self.notes),
        }


def har_forecast(
    measures: RealizedMeasures,
    horizons: Iterable[int] = DEFAULT_TERM_HORIZONS,
    *,
    annualization: float = DEFAULT_ANNUALIZATION,
    measure: str = "rv",
) -> HarForecast:
    """Fit HAR-RV to the whole-day variances and forecast the vol over each option life.

    Parameters
    ----------
    measures
        Per-day realized measures.
    horizons
        Option lives in trading days.
    annualization
        Trading days a year.
    measure
        Session measure in the whole-day variance: ``"rv"`` (default), ``"bv"`` or ``"kernel"``.

    Returns
    -------
    HarForecast

    Raises
    ------
    VolbenchError
        Fewer than :data:`MIN_HAR_DAYS` days, constant variances, or bad horizons.

    Notes
    -----
    Fitted on y_t = S_t + o_t^2 (session measure plus squared overnight return) with
    ``arch.univariate.HARX(y, lags=[1, 5, 22])``; the multi-day forecast iterates the fitted
    regression day by day (:func:`iterate_har`; equal to arch's ``forecast(method="analytic")`` when
    nothing is floored). A linear HAR can forecast a zero or negative variance (for instance after
    a sharp fall when the weekly or monthly coefficient is negative). Such a day is replaced by the
    floor, the smallest positive whole-day variance in the fitting sample (the lowest level the data
    show as possible), before it feeds the next day's forecast; how many days were floored is
    reported. Term structure as for GARCH: vol(T) = sqrt(A (1/T) sum_{h=1..T} E[y_{t+h}])
    (docs/METHODS.md, "GARCH and the vol over an option's life").
    """
    a = check_annualization(annualization)
    hz = check_horizons(horizons)
    y = measures.whole_day(measure)
    if len(y) < MIN_HAR_DAYS:
        raise VolbenchError(f"{measures.name}: the HAR forecast needs at least {MIN_HAR_DAYS} days of realized "
                            f"variance, has {len(y)}")
    if not np.ptp(y.to_numpy()) > 0:
        raise VolbenchError(f"{measures.name}: daily realized variance is constant; the HAR regression cannot be fitted")
    ys = pd.Series(y.to_numpy() * SCALE, index=y.index, name="rv")
    res = HARX(ys, lags=list(HAR_LAGS), rescale=False).fit(disp="off")
    names = list(res.params.index[:4])
    params = {k: float(res.params[n]) for k, n in zip(PARAM_NAMES, names)}
    params["const"] /= SCALE
    ses = {k: float(res.std_err[n]) for k, n in zip(PARAM_NAMES, names)}
    ses["const"] /= SCALE
    floor = float(y[y > 0].min())
    path, bad = iterate_har(params, y.to_numpy(), max(hz), floor)
    notes = []
    if bad:
        notes.append(f"{bad} of {path.size} daily variance forecasts came out zero or negative and were replaced "
                     f"by the smallest positive daily variance in the sample ({floor:.3g}) before feeding the "
                     "next day's forecast")
    path.setflags(write=False)
    return HarForecast(
        name=measures.name, params=params, std_errors=ses, r_squared=float(res.rsquared), nobs=int(res.nobs),
        variance_path=path, term_structure=term_structure(path, hz, a), floored_days=bad, floor=floor,
        annualization=a, notes=tuple(notes),
    )


def iterate_har(params: dict[str, float], y: np.ndarray, horizon: int, floor: float) -> tuple[np.ndarray, int]:
    """Expected whole-day variance for days 1..horizon ahead by iterating the fitted HAR.

    y_{T+h} = const + daily y_{T+h-1} + weekly mean(y_{T+h-5..T+h-1}) + monthly mean(y_{T+h-22..T+h-1}),
    forecasts standing in for unknown future values; a forecast <= 0 is replaced by ``floor``.
    Returns the path and the number of days floored. Loops over days ahead, not over bars.
    """
    lag = HAR_LAGS[-1]
    buf = np.concatenate((np.asarray(y, dtype=float)[-lag:], np.empty(horizon)))
    c, bd, bw, bm = (params[k] for k in PARAM_NAMES)
    floored = 0
    for h in range(horizon):
        t = lag + h
        f = c + bd * buf[t - 1] + bw * buf[t - 5:t].mean() + bm * buf[t - lag:t].mean()
        if not f > 0:
            f, floored = floor, floored + 1
        buf[t] = f
    return buf[lag:].copy(), floored
