"""The option's life in days: calendar days and years (ACT/365) and trading days.

An option's life is given either as an expiry date (from an as-of date) or as a number of days on a
stated basis: calendar days, or trading days on a weekday calendar less optional holidays. Either
way :func:`option_life` returns the same :class:`OptionLife`, which carries both counts:

* ``years = calendar_days / 365`` (ACT/365) is the Black-Scholes-Merton time and the discounting
  time;
* ``trading_days`` (business days after the as-of date up to and including the expiry) is the
  variance horizon for the estimators, the cone, the GARCH term structure and the scaling horizon.

See docs/METHODS.md, "Day counts and the option's life".
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

import numpy as np
import pandas as pd

from volbench.data.history import Finding
from volbench.data.reader import read_text
from volbench.errors import VolbenchError

DayBasis = Literal["trading", "calendar"]
DAY_BASES: tuple[DayBasis, ...] = ("trading", "calendar")
DEFAULT_DAY_BASIS: DayBasis = "trading"
"""``--days N`` counts trading days unless told otherwise (what ``--days`` has always meant)."""

DAYS_PER_YEAR = 365.0
"""ACT/365: years = calendar days / 365 (common practice, no source)."""

MAX_CALENDAR_DAYS = 36_500
"""Longest life accepted (a hundred years); anything longer is a typing error."""

CONVENTION = ("years = calendar days / 365 (ACT/365) for the Black-Scholes-Merton time and discounting; "
              "trading days = weekdays after the as-of date up to and including the expiry, less holidays, "
              "for the variance horizon")

_HEADER_NAMES = ("date", "dates", "day", "holiday", "holidays", "holiday date", "closed", "closure", "closures")
_WEEKDAYS = ("Monday", "Tuesday", "Wednesday", "Thursday", "Friday", "Saturday", "Sunday")


# ---------------------------------------------------------------------------- holidays
@dataclass(frozen=True)
class Holidays:
    """Exchange holidays read from a file (or given directly).

    Attributes
    ----------
    dates
        Sorted unique ``datetime64[D]`` dates that fall on weekdays (weekend dates change nothing
        and are reported, not kept).
    findings
        One per line that could not be used (unreadable date) or is worth knowing about
        (duplicate, weekend date), with its file line.
    source
        The file read, or ``None``.
    """

    dates: np.ndarray
    findings: tuple[Finding, ...] = ()
    source: Path | None = None

    def __post_init__(self) -> None:
        d = np.unique(np.asarray(self.dates, dtype="datetime64[D]"))
        d.setflags(write=False)
        object.__setattr__(self, "dates", d)

    def __len__(self) -> int:
        return int(self.dates.size)

    def as_dict(self) -> dict:
        return {"source": str(self.source) if self.source else None,
                "dates": [str(d) for d in self.dates],
                "findings": [f.as_dict() for f in self.findings]}


NO_HOLIDAYS = Holidays(np.array([], dtype="datetime64[D]"))


def read_holidays(path: str | Path) -> Holidays:
    """Read a holidays file: one date (YYYY-MM-DD) per line, first cell of each line.

    A header line (the first line with content, when its first cell is Date, Day, Holiday or
    Closed), blank lines and lines starting with ``#`` are skipped; text after the date (``2024-12-25,Harbour Day``) is ignored.

    Returns
    -------
    Holidays
        The weekday dates, with a finding per unusable line (``error``, left out), per repeated
        date (``info``) and per date on a weekend (``info``: it changes no count).

    Raises
    ------
    VolbenchError
        The file is missing, empty or binary, or holds no readable date at all.
    """
    path = Path(path)
    text, _ = read_text(path)
    lines, cells = [], []
    for number, raw in enumerate(text.splitlines(), start=1):
        s = raw.strip()
        if not s or s.startswith("#"):
            continue
        first = s.replace(";", ",").replace("\t", ",").split(",")[0].strip().strip('"').strip("'")
        lines.append(number)
        cells.append(first)
    if not cells:
        raise VolbenchError(f"{path}: holds no dates; write one date (YYYY-MM-DD) per line")
    parsed = pd.to_datetime(pd.Series(cells, dtype=object), format="ISO8601", errors="coerce")
    bad = parsed.isna().to_numpy()
    if bad[0] and len(cells) > 1 and cells[0].strip().lower() in _HEADER_NAMES:
        lines, cells, parsed, bad = lines[1:], cells[1:], parsed.iloc[1:], bad[1:]
    if bad.all():
        raise VolbenchError(f"{path}: line {lines[0]}: {cells[0]!r} is not a date; write one date "
                            "(YYYY-MM-DD) per line")
    findings: list[Finding] = []
    days = parsed.to_numpy(dtype="datetime64[ns]").astype("datetime64[D]")
    for i in np.flatnonzero(bad):
        findings.append(Finding("error", "bad_date", lines[i], None, "date",
                                f"{path.name}: line {lines[i]}: {cells[i]!r} is not a date (YYYY-MM-DD); "
                                "line left out, so that day counts as a trading day: correct the line"))
    good = np.flatnonzero(~bad)
    seen: dict[np.datetime64, int] = {}
    keep = []
    for i in good:
        d = days[i]
        if d in seen:
            findings.append(Finding("info", "duplicate_date", lines[i], str(d), "date",
                                    f"{path.name}: line {lines[i]}: {d} is already listed on line {seen[d]}"))
            continue
        seen[d] = lines[i]
        if not np.is_busday(d):
            weekday = _WEEKDAYS[pd.Timestamp(d).weekday()]
            findings.append(Finding("info", "weekend_date", lines[i], str(d), "date",
                                    f"{path.name}: line {lines[i]}: {d} is a {weekday}, not a weekday; "
                                    "it changes no trading-day count"))
            continue
        keep.append(d)
    return Holidays(np.array(keep, dtype="datetime64[D]"), tuple(findings), path)


def _holidays(holidays) -> Holidays:
    if holidays is None:
        return NO_HOLIDAYS
    if isinstance(holidays, Holidays):
        return holidays
    try:
        dates = [_date(d, "holiday") for d in holidays]
    except TypeError:
        raise VolbenchError(f"holidays must be a list of dates, got {holidays!r}") from None
    return Holidays(np.array([d for d in dates if np.is_busday(d)], dtype="datetime64[D]"))


# ---------------------------------------------------------------------------- the option's life
@dataclass(frozen=True)
class OptionLife:
    """An option's life from an as-of date to its expiry, counted both ways.

    Attributes
    ----------
    as_of, expiry
        ISO dates. The as-of day itself is not part of the life; the expiry day is.
    calendar_days
        Expiry minus as-of, in days (>= 1).
    years
        ``calendar_days / 365`` (ACT/365): the Black-Scholes-Merton time and discounting time.
    trading_days
        Weekdays after ``as_of`` up to and including ``expiry``, less holidays: the variance
        horizon in bars. Can be 0 (an expiry over a weekend), which :attr:`notes` says.
    given_as
        How the life was given: ``"expiry"``, ``"calendar days"`` or ``"trading days"``.
    holidays_in_life
        Holidays (weekdays) inside the life, excluded from ``trading_days``.
    notes
        Plain sentences a reader needs (expiry on a non-trading day, no trading day in the life).
    convention
        The counting convention, in words.
    """

    as_of: str
    expiry: str
    calendar_days: int
    trading_days: int
    years: float
    given_as: str
    holidays_in_life: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()
    convention: str = CONVENTION

    def variance_years(self, annualization: float) -> float:
        """The life as a share of a trading year: ``trading_days / annualization``."""
        return self.trading_days / float(annualization)

    def pricing_basis_factor(self, annualization: float) -> float:
        """Factor turning a vol annualized over trading bars into a vol over ACT/365 years.

        Notes
        -----
        The variance the option sees is sigma_h^2 x trading_days / A (sigma_h annualized with A
        bars a year); the Black-Scholes-Merton time is ``years``. The vol that gives the same total
        variance over ``years`` is sigma_h x sqrt((trading_days / A) / years)
        (docs/METHODS.md, "Day counts and the option's life"; common practice, no source).

        Raises
        ------
        VolbenchError
            No trading day in the life (the variance horizon is zero).
        """
        if self.trading_days < 1:
            raise VolbenchError(f"no trading day between {self.as_of} and the expiry {self.expiry}: "
                                "the option sees no more price moves, so no historical vol applies")
        return math.sqrt(self.variance_years(annualization) / self.years)

    def as_dict(self) -> dict:
        return {"as_of": self.as_of, "expiry": self.expiry, "calendar_days": self.calendar_days,
                "trading_days": self.trading_days, "years": self.years, "given_as": self.given_as,
                "holidays_in_life": list(self.holidays_in_life), "notes": list(self.notes),
                "convention": self.convention}


def check_day_basis(basis) -> DayBasis:
    """``"trading"`` or ``"calendar"`` (case-insensitive); a clear error otherwise."""
    b = basis.strip().lower() if isinstance(basis, str) else basis
    if b not in DAY_BASES:
        raise VolbenchError(f"day basis must be 'trading' or 'calendar', got {basis!r}")
    return b


def _date(value, what: str) -> np.datetime64:
    try:
        ts = pd.Timestamp(value)
    except (TypeError, ValueError):
        ts = pd.NaT
    if ts is pd.NaT:
        raise VolbenchError(f"{what} date must look like YYYY-MM-DD, got {value!r}")
    if ts.tzinfo is not None:
        ts = ts.tz_localize(None)
    return np.datetime64(ts.date(), "D")


def _whole_days(days) -> int:
    if isinstance(days, bool):
        raise VolbenchError(f"days must be a whole number >= 1, got {days!r}")
    try:
        d = float(days)
    except (TypeError, ValueError):
        raise VolbenchError(f"days must be a whole number >= 1, got {days!r}") from None
    if not (math.isfinite(d) and d == int(d) and d >= 1):
        raise VolbenchError(f"days must be a whole number >= 1, got {days!r}")
    if d > MAX_CALENDAR_DAYS:
        raise VolbenchError(f"days must be at most {MAX_CALENDAR_DAYS:,} (a hundred years), got {days!r}")
    return int(d)


def count_trading_days(as_of, expiry, holidays=None) -> int:
    """Weekdays after ``as_of`` up to and including ``expiry``, less ``holidays``.

    ``numpy.busday_count(as_of + 1, expiry + 1)`` on a Monday-Friday calendar (numpy counts the
    half-open range [begin, end)).
    """
    a, e = _date(as_of, "as-of"), _date(expiry, "expiry")
    hol = _holidays(holidays)
    one = np.timedelta64(1, "D")
    return int(np.busday_count(a + one, e + one, holidays=hol.dates))


def option_life(as_of, *, expiry=None, days=None, basis: DayBasis = DEFAULT_DAY_BASIS,
                holidays=None) -> OptionLife:
    """The option's life from ``as_of`` to an expiry date, or to ``days`` days on ``basis``.

    Parameters
    ----------
    as_of
        The valuation date (YYYY-MM-DD); a time of day is ignored.
    expiry
        The expiry date. Give either ``expiry`` or ``days``.
    days
        Whole number of days (>= 1) on ``basis``: ``"calendar"`` puts the expiry ``days``
        calendar days after ``as_of``; ``"trading"`` on the ``days``-th trading day after it.
    basis
        ``"trading"`` (default) or ``"calendar"``; used with ``days`` only.
    holidays
        :class:`Holidays` (e.g. from :func:`read_holidays`) or a list of dates; weekdays listed
        are not trading days.

    Returns
    -------
    OptionLife
        The same numbers whichever way the same expiry is given.

    Raises
    ------
    VolbenchError
        Both or neither of ``expiry`` and ``days``; an expiry on or before ``as_of``; bad dates,
        days or basis; a life longer than :data:`MAX_CALENDAR_DAYS`.

    Notes
    -----
    years = calendar days / 365 (ACT/365); trading days = business days in (as_of, expiry] on a
    Monday-Friday calendar less holidays (docs/METHODS.md, "Day counts and the option's life";
    common practice, no source).
    """
    if (expiry is None) == (days is None):
        raise VolbenchError("give the option's life either as an expiry date or as a number of days, not "
                            + ("both" if expiry is not None else "neither"))
    a = _date(as_of, "as-of")
    hol = _holidays(holidays)
    if expiry is not None:
        e = _date(expiry, "expiry")
        given = "expiry"
        if e <= a:
            raise VolbenchError(f"expiry {e} must be after the as-of date {a}; the option has expired or "
                                "the dates are swapped")
    else:
        n = _whole_days(days)
        b = check_day_basis(basis)
        given = f"{b} days"
        if b == "calendar":
            e = a + np.timedelta64(n, "D")
        else:  # the n-th trading day after as_of (a non-trading as-of rolls back to the last trading day)
            e = np.busday_offset(a, n, roll="backward", holidays=hol.dates)
    calendar_days = int((e - a) / np.timedelta64(1, "D"))
    if calendar_days > MAX_CALENDAR_DAYS:
        raise VolbenchError(f"the life from {a} to {e} is {calendar_days:,} calendar days, more than "
                            f"{MAX_CALENDAR_DAYS:,}; check the dates")
    one = np.timedelta64(1, "D")
    trading = int(np.busday_count(a + one, e + one, holidays=hol.dates))
    inside = tuple(str(d) for d in hol.dates if a < d <= e)
    notes = []
    if not np.is_busday(e, holidays=hol.dates):
        why = "a holiday" if str(e) in inside else f"a {_WEEKDAYS[pd.Timestamp(e).weekday()]}"
        notes.append(f"expiry {e} is {why}, not a trading day; trading days are counted up to it anyway")
    if trading == 0:
        notes.append(f"no trading day between {a} and {e}: the option sees no more price moves")
    return OptionLife(as_of=str(a), expiry=str(e), calendar_days=calendar_days, trading_days=trading,
                      years=calendar_days / DAYS_PER_YEAR, given_as=given, holidays_in_life=inside,
                      notes=tuple(notes))
