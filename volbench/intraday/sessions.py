"""Bar spacing, trading sessions and daily bars from intraday timestamps.

A price file may hold one bar a day or many. This module reads the spacing from the timestamps
(it is never assumed), groups bars into sessions, and builds the daily OHLC bars on which every
daily estimator, the cone, the scaling check and GARCH work unchanged.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError

DAY_SECONDS = 86400.0
"""Nominal spacing reported for a file of daily bars (one bar a session)."""
_DAY_NS = 86_400_000_000_000


def _ro(a: np.ndarray) -> np.ndarray:
    a = np.array(a, copy=True)
    a.setflags(write=False)
    return a


@dataclass(frozen=True, eq=False)
class SessionLayout:
    """How the bars of one history fall into trading sessions.

    Attributes
    ----------
    intraday
        True when sessions hold several bars (median bars a session >= 2).
    bar_interval_seconds
        Median spacing of consecutive bars within a session; :data:`DAY_SECONDS` for daily bars.
    session_of_bar
        Session number (0, 1, ...) of each bar, non-decreasing.
    starts, ends
        Index of the first and last bar of each session.
    session_dates
        ``datetime64[ns]`` at midnight: the calendar date of each session's last bar (its close).
    bars_per_session
        Median number of bars a session.
    session_break_seconds
        ``None`` when sessions are calendar dates; otherwise a gap longer than this starts a new
        session (for sessions that cross midnight).
    """

    intraday: bool
    bar_interval_seconds: float
    session_of_bar: np.ndarray
    starts: np.ndarray
    ends: np.ndarray
    session_dates: np.ndarray
    bars_per_session: int
    session_break_seconds: float | None = None

    @property
    def n_sessions(self) -> int:
        return len(self.starts)

    @property
    def bars_in_session(self) -> np.ndarray:
        return self.ends - self.starts + 1

    def describe(self) -> str:
        """One phrase stating the spacing, e.g. ``"5-minute bars, 78 a session, 126 sessions"``."""
        if not self.intraday:
            return f"daily bars, {self.n_sessions} sessions"
        return (f"{format_interval(self.bar_interval_seconds)} bars, {self.bars_per_session} a session, "
                f"{self.n_sessions} sessions")

    def as_dict(self) -> dict:
        return {
            "intraday": self.intraday,
            "bar_interval_seconds": self.bar_interval_seconds,
            "bars_per_session": self.bars_per_session,
            "sessions": self.n_sessions,
            "session_rule": ("calendar date" if self.session_break_seconds is None
                             else f"gap longer than {format_interval(self.session_break_seconds)}"),
        }


def format_interval(seconds: float) -> str:
    """``300`` -> ``"5-minute"``, ``90`` -> ``"90-second"``, ``3600`` -> ``"60-minute"``, a day -> ``"1-day"``."""
    s = float(seconds)
    if s >= DAY_SECONDS and s % DAY_SECONDS == 0:
        return f"{int(s // DAY_SECONDS)}-day"
    if s >= 60 and s % 60 == 0:
        return f"{int(s // 60)}-minute"
    return f"{s:g}-second"


def parse_session_break(text: str | float | None) -> float | None:
    """A session-break gap such as ``"4h"`` or ``"90min"`` in seconds; ``None`` stays ``None``.

    Raises
    ------
    VolbenchError
        No unit, unreadable, or not positive.
    """
    if text is None:
        return None
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        seconds = float(text)
    else:
        t = str(text).strip()
        if re.fullmatch(r"[+-]?\d+(\.\d*)?", t):
            raise VolbenchError(f"session break {text!r} needs a unit, e.g. 4h or 90min")
        try:
            seconds = pd.Timedelta(t).total_seconds()
        except (ValueError, TypeError):
            raise VolbenchError(f"session break must be a duration such as 4h or 90min, got {text!r}") from None
    if not (np.isfinite(seconds) and seconds > 0):
        raise VolbenchError(f"session break must be a positive duration such as 4h, got {text!r}")
    return seconds


def infer_layout(dates: np.ndarray, session_break: str | float | None = None) -> SessionLayout:
    """Sessions and bar spacing of strictly increasing timestamps.

    Parameters
    ----------
    dates
        ``datetime64`` timestamps, strictly increasing (as in a :class:`PriceHistory`).
    session_break
        ``None``: one session per calendar date. Otherwise a duration (``"4h"``, or seconds): a gap
        between bars longer than this starts a new session.

    Returns
    -------
    SessionLayout

    Raises
    ------
    VolbenchError
        Fewer than one bar, or a session break that splits one calendar date into two sessions.

    Notes
    -----
    The bar interval is the median spacing of consecutive bars within a session, so overnight and
    weekend gaps, a missing bar or a short last session do not move it (common practice, no
    source). The history is intraday when the median session holds two bars or more.
    """
    brk = parse_session_break(session_break)
    d = np.asarray(dates, dtype="datetime64[ns]")
    n = d.shape[0]
    if n == 0:
        raise VolbenchError("no bars to lay out in sessions")
    ns = d.view(np.int64)
    step = np.diff(ns)
    new = np.empty(n, dtype=bool)
    new[0] = True
    if brk is None:
        day = ns // _DAY_NS  # floor division: calendar day number, also before 1970
        np.not_equal(day[1:], day[:-1], out=new[1:])
    else:
        np.greater(step, brk * 1e9, out=new[1:])
    starts = np.flatnonzero(new)
    ends = np.concatenate((starts[1:] - 1, [n - 1]))
    session = np.cumsum(new) - 1
    counts = ends - starts + 1
    per = int(np.median(counts))
    gaps = step[~new[1:]]
    intraday = per >= 2 and gaps.size > 0
    interval = float(np.median(gaps)) / 1e9 if intraday else DAY_SECONDS
    sdates = d[ends].astype("datetime64[D]").astype("datetime64[ns]")
    if sdates.size > 1 and not np.all(np.diff(sdates.astype(np.int64)) > 0):
        i = int(np.flatnonzero(np.diff(sdates.astype(np.int64)) <= 0)[0])
        raise VolbenchError(
            f"the session break splits {pd.Timestamp(sdates[i + 1]).date()} into two sessions (a pause "
            "within the day is longer than the break); choose a longer session break or leave it out "
            "to use calendar dates")
    return SessionLayout(
        intraday=bool(intraday), bar_interval_seconds=interval, session_of_bar=_ro(session),
        starts=_ro(starts), ends=_ro(ends), session_dates=_ro(sdates), bars_per_session=per,
        session_break_seconds=brk,
    )


def daily_bars(history: PriceHistory, layout: SessionLayout | None = None) -> PriceHistory:
    """Daily OHLC bars built from intraday bars; a daily history is returned unchanged.

    Parameters
    ----------
    history
        Price history, already selected for the quality policy (``select(exclude_flagged)`` acts
        on file lines, so apply it to the intraday bars, before aggregating).
    layout
        Sessions of ``history`` (inferred with calendar-date sessions when ``None``).

    Returns
    -------
    PriceHistory
        One row per session dated at midnight of the session's date: open of the first bar, highest
        high, lowest low, close of the last bar, summed volume. Open, high and low are present only
        when the intraday bars have them (a close-only file gives close-only days: the highest of a
        few dozen closes would understate the day's range). ``lines`` holds the file line of each
        session's last bar; findings and provenance are carried over unchanged.

    Notes
    -----
    Common practice, no source: a daily bar is the first open, the maximum high, the minimum low
    and the last close of its session.
    """
    lay = layout if layout is not None else infer_layout(history.dates)
    if not lay.intraday:
        return history
    s, e = lay.starts, lay.ends
    has_range = history.has("open", "high", "low")
    vol = None if history.volume is None else np.add.reduceat(history.volume, s)
    return replace(
        history,
        dates=lay.session_dates,
        close=history.close[e],
        open=history.open[s] if has_range else None,
        high=np.maximum.reduceat(history.high, s) if has_range else None,
        low=np.minimum.reduceat(history.low, s) if has_range else None,
        volume=vol,
        lines=history.lines[e],
    )
