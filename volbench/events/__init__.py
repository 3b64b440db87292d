"""Scheduled events (results, reports): read them, place them on bars, and price them.

Core only (no Qt). :func:`read_events` reads an events CSV; :func:`map_events` finds the bar
whose return carries each event; :func:`event_study` gives the ex-event estimates, the event move
and the event-aware vol over an option's life. Estimates are statistical, carry model risk and
are not advice.
"""

from volbench.events.calendar import (
    EVENT_FINDING_KINDS,
    TIMINGS,
    Event,
    EventCalendar,
    make_calendar,
    read_events,
)
from volbench.events.mapping import EventMap, event_positions, ex_event_history, map_events
from volbench.events.study import (
    MIN_EVENTS,
    EventGarch,
    EventMove,
    EventReport,
    event_aware_variance,
    event_aware_vol,
    event_move,
    event_study,
    events_in_life,
)

__all__ = [
    "EVENT_FINDING_KINDS",
    "MIN_EVENTS",
    "TIMINGS",
    "Event",
    "EventCalendar",
    "EventGarch",
    "EventMap",
    "EventMove",
    "EventReport",
    "event_aware_variance",
    "event_aware_vol",
    "event_move",
    "event_positions",
    "event_study",
    "events_in_life",
    "ex_event_history",
    "make_calendar",
    "map_events",
    "read_events",
]
