"""The HAR-RV forecast as a comparison candidate ("HAR-RV forward vol").

A history analysed by day from intraday bars offers the HAR-RV forward vol over the option's life
(:func:`volbench.intraday.har.har_forecast`, fitted on the whole-day realized variances up to the
history's last day); a file of daily bars offers nothing and is not listed as missing (there are no
intraday bars to forecast from, and a daily comparison reads as it always did).
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np

from volbench.candidates import Candidate, CandidateSet
from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.intraday.har import HarForecast, har_forecast, iterate_har
from volbench.models.term import DEFAULT_TERM_HORIZONS
from volbench.types import DEFAULT_ANNUALIZATION

SOURCE = "har"
LABEL = "HAR-RV forward vol"


@dataclass(frozen=True, eq=False)
class HarCandidates:
    """A HAR-RV forecast offered to a comparison, or why there is none.

    ``forecast`` is ``None`` on a daily file (``reason`` ``None``: nothing to offer) or when the fit
    failed (``reason`` says why). ``history`` is the whole-day variance series it was fitted on.
    """

    forecast: HarForecast | None
    reason: str | None = None
    history: np.ndarray | None = None

    def forward_vol(self, days: int) -> float:
        """sqrt(A x mean expected whole-day variance over days 1..``days``) (docs/METHODS.md, HAR)."""
        f = self.forecast
        path = f.variance_path
        if days > path.size:
            path, _ = iterate_har(f.params, self.history, days, f.floor)
        return float(math.sqrt(f.annualization * float(np.mean(path[:days]))))

    def candidates(self, days: int) -> CandidateSet:
        if self.forecast is None:
            return CandidateSet(SOURCE, (), {} if self.reason is None else {SOURCE: self.reason},
                                title="HAR-RV forecast", what="forward vol")
        f = self.forecast
        floored = f"; {f.floored_days} negative forecasts floored" if f.floored_days else ""
        note = (f"HAR-RV (Corsi 2009), lags 1, 5, 22 days, fitted on {f.nobs} days of realized variance + "
                f"overnight (R^2 {f.r_squared:.2f}); mean forecast variance over {days} days{floored}")
        c = Candidate(SOURCE, SOURCE, LABEL, self.forward_vol(days), window=days, note=note)
        return CandidateSet(SOURCE, (c,), title="HAR-RV forecast", what="forward vol")

    def as_dict(self) -> dict:
        return {"forecast": self.forecast.as_dict() if self.forecast is not None else None, "reason": self.reason}


def har_candidates(history: PriceHistory, horizons: Iterable[int] = DEFAULT_TERM_HORIZONS, *,
                   annualization: float = DEFAULT_ANNUALIZATION) -> HarCandidates:
    """The HAR-RV forecast of the intraday bars behind ``history`` (nothing for daily bars).

    A fit that cannot be made (too few days, constant variance) is returned with its reason, so a
    comparison lists it as missing rather than failing.
    """
    if history.intraday is None:
        return HarCandidates(None)
    src = history.intraday.covering(history)
    try:
        m = src.measures
        f = har_forecast(m, horizons, annualization=annualization)
    except VolbenchError as exc:
        return HarCandidates(None, str(exc))
    return HarCandidates(f, None, m.whole_day("rv").to_numpy())
