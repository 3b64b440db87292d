"""What the window (and a memo) shows of the price promises: one compact, JSON-ready summary.

:func:`promise_summary` reads a comparison's :class:`~volbench.pricing.promise.PromiseCheck` (the
numbers ``volbench compare --format json`` prints under ``bands``, ``bands_by_candidate`` and
``straddle``, and the export's ``price_bands`` and ``breakevens`` sheets) and lays them out for
display: promised against observed per candidate, the band fan of the pricing vol from the as-of
date to expiry, and the histogram of the history's h-bar moves with the normal density the
pricing vol promises. Nothing is recomputed: every share is the check's own number.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from volbench.errors import VolbenchError
from volbench.pricing.bands import MoveHistogram, band_fan, move_histogram

SUMMARY_COLUMNS = ("key", "label", "vol", "sigmas", "low_price", "high_price", "promised", "observed", "observed_ci_low", "observed_ci_high",
                   "observed_below", "observed_above", "promise_in_ci", "windows")


@dataclass(frozen=True, eq=False)
class PromiseSummary:
    """The price promises of a comparison, ready to draw.

    Attributes
    ----------
    name, as_of, days, annualization, spot
        Series, last date, option life in bars, bars a year, spot of the bands.
    table
        Per candidate (pricing vol first): ``label``, ``vol``, for each band k ``promised_<k>``,
        ``observed_<k>`` (non-overlapping windows), ``in_ci_<k>``; ``straddle_promised``,
        ``straddle_observed``, ``rank`` (G-statistic rank, 1 = history kept its bands best).
    bands
        The pricing vol's band rows as in :attr:`PromiseCheck.bands` (:data:`SUMMARY_COLUMNS`).
    fan
        :func:`~volbench.pricing.bands.band_fan` of the pricing vol, bar 0 (as-of) to ``days``.
    fan_dates
        Weekday dates of the fan's bars (bar 0 = as-of date).
    histogram
        The history's non-overlapping h-bar log moves with the N(0, vol² h / A) density at the
        pricing vol (:func:`~volbench.pricing.bands.move_histogram`).
    verdict, warnings
        The check's one-sentence verdict and its warnings (too few windows...).
    """

    name: str
    as_of: str
    days: int
    annualization: float
    spot: float
    table: pd.DataFrame
    bands: pd.DataFrame
    fan: pd.DataFrame
    fan_dates: np.ndarray
    histogram: MoveHistogram
    verdict: str
    warnings: tuple[str, ...]

    def as_dict(self) -> dict:
        recs = [{k: (None if isinstance(v, float) and not np.isfinite(v) else v) for k, v in r.items()}
                for r in self.table.to_dict(orient="records")]
        return {"name": self.name, "as_of": self.as_of, "days": self.days, "annualization": self.annualization,
                "spot": self.spot, "table": recs, "bands": self.bands.to_dict(orient="records"),
                "fan": {"dates": [str(d) for d in self.fan_dates],
                        **{c: self.fan[c].tolist() for c in self.fan.columns}},
                "histogram": self.histogram.as_dict(), "verdict": self.verdict, "warnings": list(self.warnings)}


def promise_summary(comparison, bins: int = 30) -> PromiseSummary:
    """The summary of ``comparison.promises`` (a :class:`~volbench.pricing.compare.Comparison`).

    Raises
    ------
    VolbenchError
        The comparison has no price promises (its ``unavailable["bands"]`` says why).
    """
    p = comparison.promises
    if p is None:
        raise VolbenchError(dict(comparison.unavailable).get("bands", "no price promises for this comparison"))
    b = p.bands
    wide = {"key": [], "label": [], "vol": []}
    for key, rows in b.groupby("key", sort=False):
        wide["key"].append(key)
        wide["label"].append(rows["label"].iloc[0])
        wide["vol"].append(float(rows["vol"].iloc[0]))
        for r in rows.itertuples(index=False):
            for what, col in (("promised", "promised"), ("observed", "observed"), ("in_ci", "promise_in_ci")):
                wide.setdefault(f"{what}_{r.sigmas:g}", []).append(getattr(r, col))
    table = pd.DataFrame(wide)
    st = p.straddles.set_index("key")
    table["straddle_promised"] = st.loc[table["key"], "promised_share_beyond"].to_numpy()
    table["straddle_observed"] = st.loc[table["key"], "observed_share_beyond"].to_numpy()
    table["rank"] = p.scores.loc[table["key"], "rank"].to_numpy()
    primary = b[b["key"] == p.primary][list(SUMMARY_COLUMNS)].reset_index(drop=True)
    vol = float(primary["vol"].iloc[0])
    fan = band_fan(p.spot, vol, p.days, p.annualization, p.sigmas)
    start = np.datetime64(p.as_of, "D")
    dates = np.busday_offset(start, np.arange(p.days + 1), roll="forward")
    hist = move_histogram(p.moves.to_numpy(), vol, p.days, p.annualization, bins=bins)
    return PromiseSummary(p.name, p.as_of, p.days, p.annualization, p.spot, table, primary, fan, dates, hist,
                          p.verdict, tuple(p.warnings))
