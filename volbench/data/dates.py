"""Date cells to naive ``datetime64[ns]`` labels, vectorised (docs/METHODS.md, Import).

ISO 8601 unless a ``strftime`` format or ``"excel"`` (spreadsheet serial day numbers) is given.
A separate time column is joined to the date first. Offsets from UTC are parsed by converting
every cell to UTC in one call; the bars are then labelled in the file's local time when that is
unambiguous (one offset throughout, or daily bars stamped at local midnight) and in UTC
otherwise, and an ``info`` finding says which.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from volbench.data.history import Finding
from volbench.data.options import EXCEL

_LO = pd.Timestamp.min.ceil("D")  # the range datetime64[ns] can hold (years 1677-2262)
_HI = pd.Timestamp.max.floor("D")
_EXCEL_ORIGIN = pd.Timestamp("1899-12-30")
_OFFSET = r"\d:\d{2}(?::\d{2}(?:[.,]\d+)?)?\s*(Z|[+-]\d{2}(?::?\d{2})?)$"


def parse_dates(text: pd.Series, date_format: str | None = None,
                time: pd.Series | None = None) -> tuple[np.ndarray, Finding | None]:
    """Parse date cells; NaT where unreadable or outside the years 1678-2261.

    Parameters
    ----------
    text
        Date cells (text; numbers for ``"excel"``).
    date_format
        ``strftime`` format, ``"excel"``, or ``None`` for ISO 8601.
    time
        Cells of a separate time column, joined to the date with a space.

    Returns
    -------
    dates, finding
        ``datetime64[ns]`` array and an ``info`` finding about time-zone offsets (or ``None``).
    """
    if date_format == EXCEL:
        return _excel(text), None
    s = text if pd.api.types.is_string_dtype(text) or text.dtype == object else text.astype("Int64").astype(str)
    if time is not None:
        s = s.str.strip() + " " + time.fillna("").astype(str).str.strip()
    fmt = date_format or "ISO8601"
    finding = None
    try:
        parsed = pd.to_datetime(s, format=fmt, errors="coerce", cache=False)  # dates rarely repeat
    except (ValueError, TypeError):  # offsets that differ between cells, or naive cells among them
        parsed = None
    if parsed is None or getattr(parsed.dt, "tz", None) is not None:
        parsed, finding = _with_offsets(s.str.strip(), fmt)
        return _in_range(parsed), finding
    out = _in_range(parsed)
    failed = np.isnat(out)
    if failed.any():
        retry = failed & s.notna().to_numpy()
        if retry.any():  # cells with spaces around the date: only those are stripped
            again = pd.to_datetime(s[retry].str.strip(), format=fmt, errors="coerce", cache=False)
            if getattr(again.dt, "tz", None) is None:
                out[retry] = _in_range(again)
    return out, finding


def _in_range(parsed: pd.Series) -> np.ndarray:
    a = parsed.to_numpy()
    if a.dtype.kind != "M":
        a = a.astype("datetime64[ns]")
    # compared in the array's own unit: years beyond 2262 do not fit in nanoseconds
    bad = (a < _LO.to_datetime64().astype(a.dtype)) | (a > _HI.to_datetime64().astype(a.dtype))
    if bad.any():
        a = a.copy()
        a[bad] = np.datetime64("NaT")
    return a.astype("datetime64[ns]")


def _excel(cells: pd.Series) -> np.ndarray:
    days = pd.to_numeric(cells, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    # serials before 61 fall before 1900-03-01, where spreadsheets count a 29 February 1900
    days = np.where((days >= 61) & (days < 130000), days, np.nan)
    ns = np.round(days * 86_400e9)
    out = np.full(len(days), np.datetime64("NaT"), dtype="datetime64[ns]")
    ok = np.isfinite(ns)
    out[ok] = np.datetime64(_EXCEL_ORIGIN.to_datetime64(), "ns") + ns[ok].astype(np.int64).astype("timedelta64[ns]")
    return out


def _with_offsets(s: pd.Series, fmt: str) -> tuple[pd.Series, Finding]:
    utc = pd.to_datetime(s, format=fmt, errors="coerce", utc=True)
    found = s.str.strip().str.extract(_OFFSET, expand=False)
    minutes = _offset_minutes(found)
    local = utc.dt.tz_localize(None) + pd.to_timedelta(minutes, unit="min")
    distinct = sorted({int(m) for m in np.unique(minutes[utc.notna().to_numpy()])})
    shown = ", ".join(_fmt_offset(m) for m in distinct[:6]) + (", ..." if len(distinct) > 6 else "")
    if len(distinct) <= 1:
        return local, Finding("info", "time_zone", None, None, "date",
                              f"times carry the UTC offset {shown}; bars are labelled in that local time")
    ok = local.notna()
    midnight = bool((local[ok] == local[ok].dt.normalize()).all())
    if midnight:
        return local, Finding("info", "time_zone", None, None, "date",
                              f"dates carry different UTC offsets ({shown}); each daily bar keeps the local "
                              "date written in the file")
    return utc.dt.tz_localize(None), Finding(
        "info", "time_zone", None, None, "date",
        f"times carry different UTC offsets ({shown}); every bar is converted to and labelled in UTC so "
        "that they stay in order")


def _offset_minutes(found: pd.Series) -> np.ndarray:
    f = found.fillna("Z").to_numpy(dtype=object)
    out = np.zeros(len(f), dtype=np.int64)
    has = f != "Z"
    if has.any():
        t = pd.Series(f[has]).str.replace(":", "", regex=False)
        sign = np.where(t.str[0] == "-", -1, 1)
        hours = pd.to_numeric(t.str[1:3], errors="coerce").fillna(0).to_numpy(dtype=np.int64)
        mins = pd.to_numeric(t.str[3:5], errors="coerce").fillna(0).to_numpy(dtype=np.int64)
        out[has] = sign * (hours * 60 + mins)
    return out


def _fmt_offset(minutes: int) -> str:
    sign = "-" if minutes < 0 else "+"
    m = abs(minutes)
    return f"{sign}{m // 60:02d}:{m % 60:02d}"
