"""Intraday files analysed by day: the daily bars every daily tool works on, with the intraday bars
kept behind them for the realized measures.

:func:`by_days` is applied to every loaded history (the command line's ``load_from_args`` and the
window's load). A file of daily bars comes back unchanged. A file of intraday bars comes back as
one :class:`~volbench.data.history.PriceHistory` row per session (first open, highest high, lowest
low, last close: :func:`~volbench.intraday.sessions.daily_bars`), so close-to-close, the range
estimators, the cone, the scaling check, GARCH and comparisons all work unchanged on days and
annualize per trading day; its ``intraday`` attribute holds an :class:`IntradayBars` with the bars
and their sessions, from which the ``realized`` and ``bipower`` estimators read the per-day
realized measures (computed once per load and shared by every derived history).
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from functools import cached_property

import numpy as np
import pandas as pd

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.intraday.measures import RealizedMeasures, realized_measures
from volbench.intraday.sessions import SessionLayout, daily_bars, format_interval, infer_layout


@dataclass(frozen=True, eq=False)
class IntradayBars:
    """The intraday bars behind a history analysed by day.

    Attributes
    ----------
    bars
        The intraday history as loaded (quality policy applied).
    layout
        Its sessions and bar interval.
    """

    bars: PriceHistory
    layout: SessionLayout

    @property
    def bar_interval_seconds(self) -> float:
        return self.layout.bar_interval_seconds

    def describe(self) -> str:
        """``"5-minute bars, 78 a session, 126 sessions (sessions by calendar date)"``."""
        return f"{self.layout.describe()} (sessions by {self.layout.as_dict()['session_rule']})"

    def as_dict(self) -> dict:
        """The layout's record plus the number of intraday bars."""
        return {**self.layout.as_dict(), "intraday_bars": self.bars.n}

    @cached_property
    def _measures(self) -> RealizedMeasures | str:
        try:
            return realized_measures(self.bars, self.layout)
        except VolbenchError as exc:
            return str(exc)

    @property
    def problem(self) -> str | None:
        """Why no realized measure can be computed from these bars (``None`` when they can)."""
        m = self._measures
        return m if isinstance(m, str) else None

    @property
    def measures(self) -> RealizedMeasures:
        """Per-day realized measures at every bar (computed once).

        Raises
        ------
        VolbenchError
            No session has enough intraday returns, or prices never move.
        """
        m = self._measures
        if isinstance(m, str):
            raise VolbenchError(m)
        return m

    def whole_day(self, measure: str, dates: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Per-day terms aligned with the daily ``dates``: whole-day variance, session error term
        and squared overnight return.

        Parameters
        ----------
        measure
            ``"rv"`` or ``"bv"`` (the session measure).
        dates
            Dates of (part of) the daily history built from these bars.

        Returns
        -------
        v, q, o2
            ``v`` = session measure + squared overnight return; ``q`` = TQ / M (the session
            measure's error variance is nu x q); ``o2`` the squared overnight return. NaN on the
            first session (no overnight return); 0 on a session left out of the measures for too
            few returns (its price moves are in the next kept day's overnight return, so sums over
            days keep every move).
        """
        d = self.measures.daily
        pos = d.index.get_indexer(pd.DatetimeIndex(dates))
        o = d["overnight"].to_numpy()
        v_all = d[measure].to_numpy() + o * o
        q_all = d["tq"].to_numpy() / d["n_returns"].to_numpy()
        found = pos >= 0
        v, q, o2 = (np.zeros(len(pos)) for _ in range(3))
        v[found], q[found], o2[found] = v_all[pos[found]], q_all[pos[found]], (o * o)[pos[found]]
        first = np.asarray(dates, dtype="datetime64[ns]") <= self.layout.session_dates[0]
        v[first] = q[first] = o2[first] = np.nan
        return v, q, o2

    def covering(self, daily: PriceHistory) -> IntradayBars:
        """These bars cut to the sessions of ``daily`` (a daily history built from them, perhaps cut
        at an as-of date); itself when ``daily`` covers every session (its measures are then shared)."""
        sd = self.layout.session_dates
        if daily.n == len(sd) and daily.dates[0] == sd[0] and daily.dates[-1] == sd[-1]:
            return self
        day = self.bars.dates[self.layout.ends].astype("datetime64[D]").astype("datetime64[ns]")
        keep = np.isin(day[self.layout.session_of_bar], daily.dates)
        bars = self.bars.take(keep)
        return IntradayBars(bars, infer_layout(bars.dates, self.layout.session_break_seconds))

    def select(self, exclude_flagged: bool) -> PriceHistory:
        """The daily history rebuilt from the bars with flagged bars left out (or restored)."""
        return by_days(self.bars.select(exclude_flagged), self.layout.session_break_seconds)


def by_days(history: PriceHistory, session_break: str | float | None = None) -> PriceHistory:
    """The history to analyse: daily bars built from intraday bars, or a daily history unchanged.

    Parameters
    ----------
    history
        A history as loaded.
    session_break
        ``None``: one session per calendar date; else a gap (``"4h"``) that starts a new session.

    Returns
    -------
    PriceHistory
        ``history`` itself when it holds one bar a session; otherwise its daily bars with
        ``intraday`` set to the :class:`IntradayBars` they were built from.

    Raises
    ------
    VolbenchError
        A bad session break, or one that splits a calendar date into two sessions.

    Notes
    -----
    Common practice, no source: a day's bar is the first open, the highest high, the lowest low and
    the last close of its session; annualizing the daily series by trading days a year keeps the
    meaning of ``--annualization`` (bars a year of the analysed series).
    """
    if history.intraday is not None:
        return history
    lay = infer_layout(history.dates, session_break)
    if not lay.intraday:
        return history
    return replace(daily_bars(history, lay), intraday=IntradayBars(history, lay))


def interval_phrase(history: PriceHistory) -> str:
    """The line every table prints: ``"bars: 5-minute, 78 a session, 126 sessions (...); analysed by day"``
    or ``"bars: daily"``."""
    if history.intraday is None:
        return "bars: daily (one bar a session)"
    return f"bars: {history.intraday.describe()}; analysed by day"


__all__ = ["IntradayBars", "by_days", "format_interval", "interval_phrase"]
