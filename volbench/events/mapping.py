"""Place events on the bars of a price history, and build the history with event days left out.

Which bar carries an event is decided by its timing (see :mod:`volbench.events.calendar`): the
event's move is in the close-to-close return of that bar, r_t = ln(C_t / C_{t-1}), and, for the
range estimators, in that bar's overnight gap o_t = ln(O_t / C_{t-1}).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from volbench.data.history import Finding, PriceHistory, _iso
from volbench.errors import VolbenchError
from volbench.events.calendar import Event, EventCalendar


@dataclass(frozen=True, eq=False)
class EventMap:
    """Events of a calendar placed on the bars of one history.

    Attributes
    ----------
    name
        Series name.
    bars
        Sorted, distinct bar positions (>= 1) whose return carries at least one event.
    observed
        Events placed on a bar of the history, in calendar order, with ``bar_of`` their bar.
    bar_of
        Bar position of each event in ``observed``.
    future
        Events whose bar lies after the last bar (they count towards an option's life).
    before
        Events dated on or before the first bar, whose return the history cannot show.
    findings
        Info findings: events before the history, several events on one bar.
    n
        Bars in the history.
    """

    name: str
    bars: np.ndarray
    observed: tuple[Event, ...]
    bar_of: np.ndarray
    future: tuple[Event, ...]
    before: tuple[Event, ...]
    findings: tuple[Finding, ...]
    n: int

    @property
    def mask(self) -> np.ndarray:
        """Boolean array over bars, True on event bars."""
        m = np.zeros(self.n, dtype=bool)
        m[self.bars] = True
        return m

    @property
    def count(self) -> int:
        """Event bars in the history (events sharing a bar count once)."""
        return int(self.bars.size)


def event_positions(days: np.ndarray, event_dates: np.ndarray, timings) -> np.ndarray:
    """Position in ``days`` of the bar whose return carries each event (``len(days)`` when after the last).

    Parameters
    ----------
    days
        Bar dates as ``datetime64[D]``, non-decreasing (several intraday bars may share a day).
    event_dates
        Event dates, ``datetime64[D]``.
    timings
        ``"before_open"``, ``"during"`` or ``"after_close"`` per event.

    Notes
    -----
    before_open / during on day d: the first bar dated d or later; after_close on day d: the first
    bar dated after d. An event on a day the market is shut thus moves the next bar.
    """
    ev = np.asarray(event_dates, dtype="datetime64[D]")
    after = np.array([t == "after_close" for t in timings], dtype=bool)
    left = np.searchsorted(days, ev, side="left")
    right = np.searchsorted(days, ev, side="right")
    return np.where(after, right, left)


def map_events(history: PriceHistory, calendar: EventCalendar) -> EventMap:
    """Place ``calendar``'s events on ``history``'s bars.

    An event whose bar would be the first bar (no previous close, so no return) is listed in
    ``before`` with an info finding; one whose bar lies beyond the last bar is in ``future``.
    """
    days = history.dates.astype("datetime64[D]")
    pos = event_positions(days, calendar.dates, calendar.timings)
    findings: list[Finding] = []
    observed, bar_of, future, before = [], [], [], []
    for e, p in zip(calendar.events, pos):
        if p >= history.n:
            future.append(e)
        elif p == 0:
            before.append(e)
            findings.append(Finding("info", "event_before_history", e.line, e.date, "date",
                                    f"event on {e.date} falls on or before the first bar ({history.first_date}); "
                                    "its move is not in the history and it is not used"))
        else:
            observed.append(e)
            bar_of.append(int(p))
    bars, counts = np.unique(np.asarray(bar_of, dtype=np.int64), return_counts=True)
    for b in bars[counts > 1]:
        dates = ", ".join(f"{e.date} ({e.timing.replace('_', ' ')})" for e, p in zip(observed, bar_of) if p == b)
        findings.append(Finding("info", "events_share_a_bar", None, _iso(history.dates[b]), "date",
                                f"events {dates} all move the bar of {_iso(history.dates[b])}; "
                                "that bar counts as one event"))
    return EventMap(history.name, bars, tuple(observed), np.asarray(bar_of, dtype=np.int64), tuple(future),
                    tuple(before), tuple(findings), history.n)


def ex_event_history(history: PriceHistory, event_bars: np.ndarray) -> PriceHistory:
    """The history with the event bars left out and the remaining bars spliced together.

    Every kept bar keeps its own close-to-close return r_t, overnight gap o_t and intraday
    shape (u_t, d_t, c_t); an event bar's return and its range are dropped. So the return
    after a removed day is the next bar's own return ln(C_{t+1} / C_t), measured from the event
    day's close, never a two-day return spanning the event.

    Parameters
    ----------
    history
        Price history.
    event_bars
        Bar positions to leave out (>= 1; the first bar has no return to drop).

    Returns
    -------
    PriceHistory
        Same name, provenance and findings; dates and file lines of the kept bars; prices
        rebuilt by chaining the kept returns from the first close (levels differ from the file
        after the first event, log-differences within and between kept bars do not).

    Notes
    -----
    log C'_j = log C'_{j-1} + r_{k_j} over the kept bars k_0 < k_1 < ..., with C'_0 = C_{k_0};
    open, high and low keep their log distance to the bar's own close.
    """
    bars = np.unique(np.asarray(event_bars, dtype=np.int64))
    if bars.size == 0:
        return history
    if bars[0] < 1 or bars[-1] >= history.n:
        raise VolbenchError(f"{history.name}: event bars must lie between 1 and {history.n - 1}, "
                            f"got {bars[0] if bars[0] < 1 else bars[-1]}")
    keep = np.ones(history.n, dtype=bool)
    keep[bars] = False
    kept = np.flatnonzero(keep)
    lc = np.log(history.close)
    r = np.diff(lc)
    steps = r[kept[1:] - 1]  # the kept bars' own returns (bar 0 is always kept)
    new_lc = lc[kept[0]] + np.concatenate(([0.0], np.cumsum(steps)))
    shift = new_lc - lc[kept]
    cols = {}
    for c in ("open", "high", "low"):
        a = getattr(history, c)
        cols[c] = None if a is None else np.exp(np.log(a[kept]) + shift)
    vol = None if history.volume is None else history.volume[kept]
    return replace(history, dates=history.dates[kept], lines=history.lines[kept], close=np.exp(new_lc),
                   volume=vol, **cols)
