"""The immutable price-history object every estimator, check and pane works on."""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from functools import cached_property
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from volbench import validate
from volbench.data.logs import LogPrices
from volbench.errors import VolbenchError
from volbench.types import Column, Severity

if TYPE_CHECKING:
    from volbench.intraday.days import IntradayBars

DAY_SECONDS = 86400.0
"""The bar interval stated for a history of one bar a session."""


@dataclass(frozen=True)
class Finding:
    """One data-quality finding.

    Attributes
    ----------
    severity
        ``"error"``: the row is unusable (missing, non-numeric or non-positive price) and is always
        left out, which the finding says. ``"warning"``: suspicious but computable; the row is kept
        unless the caller excludes flagged rows. ``"info"``: context only (e.g. a calendar gap).
    kind
        Machine-readable kind, one of :data:`FINDING_KINDS`.
    line
        1-based line number in the source file (the header is line 1), or ``None``.
    date
        ISO date of the row concerned, or ``None`` when the date itself is unreadable.
    column
        Column concerned (canonical name such as ``"close"``), or ``None``.
    message
        One plain sentence: what was found and what it means / what to do.
    lines
        Every file line this finding flags (for row exclusion); usually ``(line,)``.
    """

    severity: Severity
    kind: str
    line: int | None
    date: str | None
    column: str | None
    message: str
    lines: tuple[int, ...] = ()

    def as_dict(self) -> dict:
        return {
            "severity": self.severity,
            "kind": self.kind,
            "line": self.line,
            "date": self.date,
            "column": self.column,
            "message": self.message,
        }


FINDING_KINDS = (
    "missing_value",
    "non_numeric",
    "non_positive",
    "bad_date",
    "high_below_low",
    "outside_range",
    "duplicate_date",
    "gap",
    "stale_run",
    "jump",
    "sorted",
    "large_move",
    "stale_open",
    "field_count",
    "quote_span",
    "preamble",
    "separators",
    "time_zone",
    "split_adjusted",
    "excluded_gap",
)

LEFT_OUT_KINDS = frozenset({"duplicate_date"})
"""Warning kinds whose row is always left out (the other row with that date is kept)."""


@dataclass(frozen=True)
class Adjustment:
    """One split applied by ``adjust_splits``: prices before ``date`` were divided by ``ratio``
    (2.0 for a 2:1 split; volume multiplied by it). ``line`` is the first bar at the new level."""

    date: str
    ratio: float
    line: int
    label: str

    def as_dict(self) -> dict:
        return {"date": self.date, "ratio": self.ratio, "line": self.line, "label": self.label}


def _ro(a: np.ndarray | None, dtype) -> np.ndarray | None:
    if a is None:
        return None
    if isinstance(a, np.ndarray) and a.dtype == dtype and not a.flags.writeable and a.base is None:
        return a  # already a read-only array that owns its memory (made by the loader): no copy
    out = np.array(a, dtype=dtype, copy=True)
    out.setflags(write=False)
    return out


@dataclass(frozen=True, eq=False)
class PriceHistory:
    """One price series: dates and OHLC arrays, ascending, all values finite and positive.

    Rows with unusable values never reach this object (they are reported as ``error`` findings).
    Rows with ``warning`` findings are present unless :meth:`select` was called with
    ``exclude_flagged=True``; the choice and the excluded lines are recorded here so results can
    carry them.

    Attributes
    ----------
    name, source
        Series name (symbol, or file stem) and the file it came from.
    dates
        ``datetime64[ns]`` array, strictly increasing.
    open, high, low, close, volume
        float64 arrays aligned with ``dates``; ``None`` where the file has no such column.
    lines
        File line number of each row.
    findings
        Every data-quality finding for this series.
    exclude_flagged
        Whether rows flagged by ``warning`` findings have been removed.
    excluded_lines
        File lines removed by that choice (empty when flagged rows are kept).
    price_basis
        ``"close"`` or ``"adjusted close"``: which close column the prices come from.
    adjustments
        Splits applied at import (see :class:`Adjustment`); empty unless asked for.
    intraday
        For daily bars built from an intraday file (:func:`volbench.intraday.days.by_days`): the
        intraday bars and their sessions; ``None`` for a file of daily bars.
    """

    name: str
    source: Path | None
    dates: np.ndarray
    close: np.ndarray
    open: np.ndarray | None = None
    high: np.ndarray | None = None
    low: np.ndarray | None = None
    volume: np.ndarray | None = None
    lines: np.ndarray | None = None
    findings: tuple[Finding, ...] = ()
    exclude_flagged: bool = False
    excluded_lines: tuple[int, ...] = ()
    price_basis: str = "close"
    adjustments: tuple[Adjustment, ...] = ()
    _sha256: str | None = field(default=None, repr=False)
    _size: int | None = field(default=None, repr=False)
    intraday: IntradayBars | None = field(default=None, repr=False)

    def __post_init__(self) -> None:
        n = len(self.close)
        set_ = object.__setattr__
        set_(self, "dates", _ro(np.asarray(self.dates, dtype="datetime64[ns]"), "datetime64[ns]"))
        for col in ("open", "high", "low", "close", "volume"):
            arr = getattr(self, col)
            if arr is not None:
                if len(arr) != n:
                    raise VolbenchError(f"{self.name}: column {col} has {len(arr)} values, close has {n}")
                set_(self, col, _ro(arr, np.float64))
        if len(self.dates) != n:
            raise VolbenchError(f"{self.name}: {len(self.dates)} dates but {n} closes")
        lines = np.arange(2, n + 2) if self.lines is None else self.lines
        set_(self, "lines", _ro(lines, np.int64))
        set_(self, "findings", tuple(self.findings))
        set_(self, "adjustments", tuple(self.adjustments))
        set_(self, "excluded_lines", tuple(int(x) for x in self.excluded_lines))
        if n > 1 and not np.all(self.dates[1:] > self.dates[:-1]):
            raise VolbenchError(f"{self.name}: dates must be strictly increasing")

    # ------------------------------------------------------------------ basic facts
    def __len__(self) -> int:
        return len(self.close)

    @property
    def n(self) -> int:
        return len(self.close)

    @property
    def columns(self) -> frozenset[Column]:
        """Canonical columns present (always includes ``"close"``)."""
        return frozenset(
            c for c in ("open", "high", "low", "close", "volume") if getattr(self, c) is not None
        )

    def has(self, *cols: str) -> bool:
        return all(getattr(self, c, None) is not None for c in cols)

    @cached_property
    def first_date(self) -> str | None:
        return _iso(self.dates[0]) if self.n else None

    @cached_property
    def last_date(self) -> str | None:
        return _iso(self.dates[-1]) if self.n else None

    @cached_property
    def bar_interval_seconds(self) -> float:
        """Spacing of the bars of the file: the intraday bar interval behind daily bars built from
        them, the median spacing within a session of an intraday history, else :data:`DAY_SECONDS`."""
        if self.intraday is not None:
            return self.intraday.bar_interval_seconds
        from volbench.intraday.sessions import infer_layout

        return infer_layout(self.dates).bar_interval_seconds if self.n else DAY_SECONDS

    @cached_property
    def index(self) -> pd.DatetimeIndex:
        """The dates as a (immutable) ``DatetimeIndex`` named ``date``, built once per history."""
        return pd.DatetimeIndex(self.dates, name="date")

    @property
    def flagged_lines(self) -> frozenset[int]:
        """File lines flagged by ``warning`` findings (the rows the caller may exclude)."""
        out: set[int] = set()
        for f in self.findings:
            if f.severity == "warning":
                out.update(f.lines)
        return frozenset(out)

    @property
    def left_out_lines(self) -> frozenset[int]:
        """File lines named by findings whose rows were left out at import (errors, duplicates)."""
        out: set[int] = set()
        for f in self.findings:
            if f.severity == "error" or f.kind in LEFT_OUT_KINDS:
                out.update(f.lines or ((f.line,) if f.line is not None else ()))
        return frozenset(out)

    @property
    def sha256(self) -> str | None:
        """SHA-256 of the source file's bytes at load time (provenance)."""
        return self._sha256

    @property
    def source_size(self) -> int | None:
        """Size in bytes of the source file at load time (with :attr:`sha256`, tells a changed file)."""
        return self._size

    @cached_property
    def logs(self) -> LogPrices:
        """Logs of the prices and shared per-bar terms, computed once per history (read-only arrays).

        See :class:`volbench.data.logs.LogPrices`; derived histories (:meth:`take`, :meth:`select`,
        :meth:`up_to`) are new objects and compute their own.
        """
        return LogPrices.of(self.close, self.open, self.high, self.low)

    def log_returns(self) -> np.ndarray:
        """Close-to-close log returns r_t = ln(C_t / C_{t-1}), length n - 1 (a new, writable array)."""
        return self.logs.returns.copy()

    def to_frame(self) -> pd.DataFrame:
        data = {c: getattr(self, c) for c in ("open", "high", "low", "close", "volume") if getattr(self, c) is not None}
        return pd.DataFrame(data, index=self.index)

    # ------------------------------------------------------------------ derived histories
    def select(self, exclude_flagged: bool) -> PriceHistory:
        """The same series with rows flagged by warnings removed (or restored).

        Always derived from the rows as loaded: calling ``select(False)`` on an excluded history
        is not possible (the rows are gone), so keep the loaded object and select from it.
        """
        if exclude_flagged == self.exclude_flagged:
            return self
        if self.intraday is not None:  # the flags name intraday bars: select them, then rebuild the days
            return self.intraday.select(exclude_flagged)
        if not exclude_flagged:
            raise VolbenchError(
                f"{self.name}: flagged rows were already excluded; select from the history as loaded"
            )
        flagged = self.flagged_lines
        keep = ~np.isin(self.lines, np.fromiter(flagged, dtype=np.int64, count=len(flagged)))
        if not keep.any():
            raise VolbenchError(
                f"{self.name}: every one of its {self.n} rows is flagged by a data-quality warning, so "
                "leaving flagged rows out leaves nothing; keep flagged rows or correct the file"
            )
        notes = _gap_notes(self, keep)
        return self.take(keep, exclude_flagged=True, excluded_lines=tuple(sorted(int(x) for x in self.lines[~keep])),
                         findings=tuple(sorted(self.findings + notes, key=_finding_order)))

    def take(self, mask: np.ndarray, **changes) -> PriceHistory:
        """A copy keeping the rows where ``mask`` is true, or the rows of a ``slice`` (findings and
        provenance carried over)."""
        if isinstance(mask, slice) and mask.step in (None, 1) and not changes:
            return self._rows(mask)
        cols = {c: (None if getattr(self, c) is None else getattr(self, c)[mask]) for c in ("open", "high", "low", "close", "volume")}
        return replace(self, dates=self.dates[mask], lines=self.lines[mask], **cols, **changes)

    def _rows(self, rows: slice) -> PriceHistory:
        """Consecutive rows as a history viewing this one's read-only arrays: no copy and no second
        validation (a run of rows of a valid history is valid), so an estimate over the last
        window of a long history costs O(window)."""
        out = object.__new__(PriceHistory)
        fields = {f: self.__dict__[f] for f in self.__dataclass_fields__}
        for c in ("dates", "open", "high", "low", "close", "volume", "lines"):
            if fields[c] is not None:
                fields[c] = fields[c][rows]
        out.__dict__.update(fields)
        return out

    def up_to(self, as_of: str | np.datetime64 | pd.Timestamp | None) -> PriceHistory:
        """Rows dated on or before ``as_of`` (inclusive); the whole history when ``None``.

        A plain date includes every row stamped during that day; a date with a time of day
        includes rows up to that instant.
        """
        k = self.end_index(as_of)
        return self if k == self.n else self.take(slice(0, k))

    def end_index(self, as_of: str | np.datetime64 | pd.Timestamp | None) -> int:
        """How many rows :meth:`up_to` keeps for ``as_of`` (same rules, same errors), found by
        binary search so that a caller needing only the last rows before ``as_of`` copies nothing else."""
        if as_of is None:
            return self.n
        ts = parse_as_of(as_of)
        end = np.datetime64(ts.to_datetime64(), "ns")
        if ts == ts.normalize():
            end = end + np.timedelta64(1, "D") - np.timedelta64(1, "ns")
        k = int(np.searchsorted(self.dates, end, side="right"))
        if k == 0:
            raise VolbenchError(
                f"{self.name}: as-of date {ts.date()} is before the first row ({self.first_date}); "
                f"choose a date between {self.first_date} and {self.last_date}"
            )
        return k

    def provenance(self) -> dict:
        return {
            "series": self.name,
            "source": str(self.source) if self.source else None,
            "source_file": self.source.name if self.source else None,
            "sha256": self.sha256,
            "rows": self.n,
            "first_date": self.first_date,
            "last_date": self.last_date,
            "price_basis": self.price_basis,
            "flagged_rows": "excluded" if self.exclude_flagged else "kept",
            "excluded_lines": list(self.excluded_lines),
            "adjustments": [a.as_dict() for a in self.adjustments],
            "bar_interval_seconds": self.bar_interval_seconds,
            **({"intraday": self.intraday.as_dict()} if self.intraday is not None else {}),
        }


def _finding_order(f: Finding):
    return (f.line if f.line is not None else 0, f.kind)


def _gap_notes(h: PriceHistory, keep: np.ndarray) -> tuple[Finding, ...]:
    """One ``info`` finding per run of left-out rows between two kept rows: the return across
    the gap spans several bars."""
    idx = np.flatnonzero(keep)
    if len(idx) < 2:
        return ()
    span = np.diff(idx)
    out = []
    for j in np.flatnonzero(span > 1):
        a, b = idx[j], idx[j + 1]
        gone = [int(x) for x in h.lines[a + 1:b]]
        what = f"line {gone[0]}" if len(gone) == 1 else f"lines {', '.join(map(str, gone[:5]))}" + (
            ", ..." if len(gone) > 5 else "")
        out.append(Finding("info", "excluded_gap", int(h.lines[b]), _iso(h.dates[b]), "close",
                           f"{what} left out as flagged: the return from {_iso(h.dates[a])} to {_iso(h.dates[b])} "
                           f"spans {b - a} bars"))
    return tuple(out)


def _iso(d: np.datetime64) -> str:
    """YYYY-MM-DD for a midnight stamp, else the ISO date and time (pandas' isoformat)."""
    if isinstance(d, np.datetime64):  # the usual case, an element of a dates array: no Timestamp
        day = d.astype("datetime64[D]")
        if day == d:
            return str(day)
    ts = pd.Timestamp(d)
    return ts.strftime("%Y-%m-%d") if ts == ts.normalize() else ts.isoformat()


def parse_as_of(as_of) -> pd.Timestamp:
    """An as-of date; text must be ISO YYYY-MM-DD (one rule everywhere: volbench.validate.date)."""
    return validate.date(as_of, "as-of date", time_of_day=True)
