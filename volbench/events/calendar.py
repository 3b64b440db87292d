"""Read an events file: the dates of scheduled events (results, reports, votes) of one instrument.

The file is a small CSV, ``date[,label][,timing]``, with or without a header row. ``timing`` says
when the news reaches the market and so which bar's close-to-close return carries the move:

- ``before_open``: announced before the session of ``date`` opens; the bar dated ``date`` (or the
  first bar after it when the market is shut that day) carries it;
- ``after_close``: announced after the close of ``date``; the next bar carries it;
- empty or ``during``: during the session of ``date``; treated like ``before_open``.

Every row that cannot be used is a :class:`~volbench.data.history.Finding` naming its line; a
file with no usable row is refused.
"""

from __future__ import annotations

import csv
import hashlib
import io
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

import numpy as np
import pandas as pd

from volbench.data.history import Finding
from volbench.errors import VolbenchError

Timing = Literal["before_open", "after_close", "during"]
TIMINGS: tuple[str, ...] = ("before_open", "after_close", "during")
EVENT_FINDING_KINDS = ("bad_date", "bad_timing", "duplicate_event", "ignored_column", "missing_value",
                       "event_before_history", "events_share_a_bar")
"""Kinds of the findings about events: from reading the file, and from placing events on bars."""

_HEADER_NAMES = {
    "date": ("date", "day", "event date", "announcement date"),
    "label": ("label", "event", "name", "description", "what"),
    "timing": ("timing", "time", "when", "session"),
}
_TIMING_SPELLINGS = {
    "before open": "before_open", "before the open": "before_open", "pre open": "before_open",
    "after close": "after_close", "after the close": "after_close", "post close": "after_close",
    "during": "during", "during session": "during", "intraday": "during", "": "during",
}


def _norm(text: str) -> str:
    return re.sub(r"[\s_\-./]+", " ", text.strip().strip('"').lower()).strip()


def check_timing(value: str) -> str | None:
    """The canonical timing for a cell (``None`` when it is not one of the accepted spellings)."""
    return _TIMING_SPELLINGS.get(_norm(value or ""))


@dataclass(frozen=True)
class Event:
    """One scheduled event: ISO ``date``, free ``label``, ``timing`` and the file ``line`` it came from."""

    date: str
    label: str
    timing: str
    line: int | None = None

    def as_dict(self) -> dict:
        return {"date": self.date, "label": self.label, "timing": self.timing, "line": self.line}


@dataclass(frozen=True)
class EventCalendar:
    """The events of one instrument, sorted by date, with the findings of the file they came from.

    Attributes
    ----------
    events
        Usable events, sorted by (date, timing); exact repeats of a (date, timing) are kept once.
    findings
        One per unusable or repeated row (``line`` set), or per ignored column.
    source, sha256
        The file and the SHA-256 of its bytes (``None`` for a calendar built in code).
    """

    events: tuple[Event, ...]
    findings: tuple[Finding, ...] = ()
    source: Path | None = None
    sha256: str | None = None

    def __len__(self) -> int:
        return len(self.events)

    @property
    def dates(self) -> np.ndarray:
        """Event dates as ``datetime64[D]``."""
        return np.array([e.date for e in self.events], dtype="datetime64[D]")

    @property
    def timings(self) -> tuple[str, ...]:
        return tuple(e.timing for e in self.events)

    def as_dict(self) -> dict:
        return {"source": str(self.source) if self.source else None, "sha256": self.sha256,
                "events": [e.as_dict() for e in self.events], "findings": [f.as_dict() for f in self.findings]}


def make_calendar(dates, timings=None, labels=None) -> EventCalendar:
    """A calendar built in code from dates (and optional timings and labels).

    Raises
    ------
    VolbenchError
        A date that is not a date, a timing not in :data:`TIMINGS`, or lists of unequal length.
    """
    dates = list(dates)
    n = len(dates)
    timings = ["during"] * n if timings is None else list(timings)
    labels = [""] * n if labels is None else [str(x) for x in labels]
    if len(timings) != n or len(labels) != n:
        raise VolbenchError(f"events: {n} dates but {len(timings)} timings and {len(labels)} labels; "
                            "give one of each per event")
    events = []
    for d, t, lab in zip(dates, timings, labels):
        ts = pd.Timestamp(d) if not isinstance(d, str) else pd.to_datetime(d, format="ISO8601", errors="coerce")
        if ts is pd.NaT or ts is None:
            raise VolbenchError(f"events: {d!r} is not a date; use YYYY-MM-DD")
        tm = check_timing(str(t))
        if tm is None:
            raise VolbenchError(f"events: timing {t!r} is not one of: {', '.join(TIMINGS)}")
        events.append(Event(ts.strftime("%Y-%m-%d"), lab, tm, None))
    return EventCalendar(_dedupe(events, [])[0])


def _dedupe(events: list[Event], findings: list[Finding]) -> tuple[tuple[Event, ...], list[Finding]]:
    order = sorted(range(len(events)), key=lambda i: (events[i].date, TIMINGS.index(events[i].timing),
                                                      events[i].line or 0))
    kept: dict[tuple[str, str], Event] = {}
    for i in order:
        e = events[i]
        key = (e.date, e.timing)
        if key in kept:
            first = kept[key]
            findings.append(Finding("warning", "duplicate_event", e.line, e.date, "date",
                                    f"line {e.line}: event on {e.date} ({e.timing.replace('_', ' ')}) repeats "
                                    f"line {first.line}; counted once", (e.line,) if e.line else ()))
            continue
        kept[key] = e
    return tuple(kept.values()), findings


def _header(row: list[str], date_format: str | None) -> dict[str, int] | None:
    """Column positions when ``row`` is a header, else ``None`` (a data row).

    A header names at least one known column, or has a first cell that is neither a date nor
    holds a digit (a data row with a mistyped date, such as 2023-13-40, stays a data row and
    becomes a finding).
    """
    lookup = {alias: canon for canon, names in _HEADER_NAMES.items() for alias in names}
    found: dict[str, int] = {}
    for i, cell in enumerate(row):
        canon = lookup.get(_norm(cell))
        if canon and canon not in found:
            found[canon] = i
    if found:
        return found
    first = row[0].strip() if row else ""
    if any(ch.isdigit() for ch in first):
        return None
    return found


def read_events(path: str | Path, *, date_format: str | None = None) -> EventCalendar:
    """Read an events CSV into an :class:`EventCalendar`.

    Parameters
    ----------
    path
        CSV with columns ``date[,label][,timing]`` (comma, semicolon or tab). A header row is
        optional; with one, columns are found by name (date; label/event/name; timing/when), in
        any order; without one, they are taken in that order.
    date_format
        ``strftime`` format of the dates; ISO 8601 (YYYY-MM-DD) when ``None``.

    Returns
    -------
    EventCalendar
        Usable events, and one finding per unusable row naming its line: an empty or unreadable
        date (left out), an unknown timing (left out) or a repeat of an earlier row (counted once).

    Raises
    ------
    VolbenchError
        The file is missing, unreadable, empty, has a header without a date column, or holds no
        usable event row.
    """
    path = Path(path)
    if not path.exists():
        raise VolbenchError(f"{path}: events file not found; check the path")
    if path.is_dir():
        raise VolbenchError(f"{path}: is a folder; give the path of an events CSV (date,label,timing)")
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise VolbenchError(f"{path}: cannot be read ({exc.strerror}); check permissions") from None
    if b"\x00" in raw[:4096]:
        raise VolbenchError(f"{path}: looks like a binary file; save the events as a CSV (date,label,timing)")
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        text = raw.decode("cp1252", errors="replace")
    rows = list(csv.reader(io.StringIO(text, newline=""), delimiter=_delimiter(text)))
    numbered = [(i + 1, r) for i, r in enumerate(rows) if any(c.strip() for c in r)]
    if not numbered:
        raise VolbenchError(f"{path}: events file is empty; write one event a line: date,label,timing")
    findings: list[Finding] = []
    cols = _header(numbered[0][1], date_format)
    if cols is None:
        cols = {"date": 0, "label": 1, "timing": 2}
    else:
        if "date" not in cols:
            shown = ", ".join(repr(c) for c in numbered[0][1])
            raise VolbenchError(f"{path}: line {numbered[0][0]}: no date column among headers {shown}; "
                                "name the first column 'date' or leave the header out (date,label,timing)")
        for i, cell in enumerate(numbered[0][1]):
            if i not in cols.values() and cell.strip():
                findings.append(Finding("info", "ignored_column", numbered[0][0], None, cell.strip(),
                                        f"line {numbered[0][0]}: column {cell.strip()!r} is not used "
                                        "(events read date, label and timing)"))
        numbered = numbered[1:]
    if not numbered:
        raise VolbenchError(f"{path}: header found but no event rows; add one event a line")

    def cell(r: list[str], key: str) -> str:
        i = cols.get(key)
        return r[i].strip() if i is not None and i < len(r) else ""

    lines = [ln for ln, _ in numbered]
    date_text = pd.Series([cell(r, "date") for _, r in numbered], dtype=object)
    parsed = pd.to_datetime(date_text, format=date_format or "ISO8601", errors="coerce")
    events: list[Event] = []
    for ln, (_, r), d_text, ts in zip(lines, numbered, date_text, parsed):
        if not d_text:
            findings.append(Finding("error", "missing_value", ln, None, "date",
                                    f"line {ln}: the date is empty; row left out (fill in YYYY-MM-DD)", (ln,)))
            continue
        if ts is pd.NaT:
            want = f"the format {date_format!r}" if date_format else "YYYY-MM-DD"
            findings.append(Finding("error", "bad_date", ln, None, "date",
                                    f"line {ln}: {d_text!r} is not a date; row left out (write it as {want})", (ln,)))
            continue
        iso = ts.strftime("%Y-%m-%d")
        t_text = cell(r, "timing")
        timing = check_timing(t_text)
        if timing is None:
            findings.append(Finding("error", "bad_timing", ln, iso, "timing",
                                    f"line {ln}: timing {t_text!r} is not one of before_open, after_close, "
                                    "during (or empty); row left out", (ln,)))
            continue
        events.append(Event(iso, cell(r, "label"), timing, ln))
    if not events:
        first = findings[0].message if findings else "no rows"
        raise VolbenchError(f"{path}: no usable event row ({first})")
    kept, findings = _dedupe(events, findings)
    findings.sort(key=lambda f: (f.line or 0))
    return EventCalendar(kept, tuple(findings), path, hashlib.sha256(raw).hexdigest())


def _delimiter(text: str) -> str:
    """Comma, semicolon or tab: the one the first non-empty line uses most (comma when none)."""
    first = next((ln for ln in text.splitlines() if ln.strip()), "")
    counts = {d: first.count(d) for d in (",", ";", "\t")}
    best = max(counts, key=counts.get)
    return best if counts[best] else ","
