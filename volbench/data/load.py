"""Load price CSVs into :class:`PriceHistory` objects with data-quality findings."""

from __future__ import annotations

import hashlib
from collections.abc import Iterable
from pathlib import Path

import numpy as np
import pandas as pd

from volbench.data.history import Finding, PriceHistory, _iso
from volbench.data.quality import QualitySettings, parse_numbers, run_checks
from volbench.data.reader import RawTable, read_table
from volbench.errors import VolbenchError

_PRICE_COLS = ("open", "high", "low", "close")


def load_prices(
    path: str | Path,
    *,
    date_format: str | None = None,
    delimiter: str | None = None,
    use_adjusted: bool = False,
    exclude_flagged: bool = False,
    quality: QualitySettings | None = None,
) -> list[PriceHistory]:
    """Read one CSV file into one price history per series.

    Parameters
    ----------
    path
        CSV file: one series, or several in a long layout with a symbol column.
    date_format
        ``strftime`` format for non-ISO dates (e.g. ``"%d/%m/%Y"``); ISO 8601 when ``None``.
    delimiter
        Force the delimiter; sniffed among comma, semicolon and tab when ``None``.
    use_adjusted
        Use the adjusted close (scaling open/high/low by the same factor) when the file has one.
        A file with only an adjusted close always uses it.
    exclude_flagged
        Remove rows flagged by ``warning`` findings; the choice is recorded on each history.
    quality
        Thresholds for the checks.

    Returns
    -------
    list of PriceHistory
        One per series, in order of first appearance, each carrying its findings.

    Raises
    ------
    VolbenchError
        The file is missing, empty, binary, lacks a date or close column, or no row is usable.
    """
    quality = quality or QualitySettings()
    table = read_table(path, delimiter)
    sha = hashlib.sha256(table.raw).hexdigest()
    n = len(table.lines)
    lines = np.asarray(table.lines, dtype=np.int64)
    if "symbol" in table.columns:
        sym = pd.Series(table.columns["symbol"])
        groups = list(dict.fromkeys(s for s in sym if s))
        if not groups:
            raise VolbenchError(f"{table.path}: column {table.headers['symbol']!r} is empty in every row; "
                                "fill in the series name or remove the column")
    else:
        sym = None
        groups = [table.path.stem]
    parsed, row_findings = _parse_rows(table, date_format, use_adjusted)
    out = []
    for name in groups:
        mask = np.ones(n, dtype=bool) if sym is None else (sym == name).to_numpy()
        findings = [f for f in row_findings if f.line is None or mask[np.searchsorted(lines, f.line)]]
        if sym is not None:
            findings += [
                Finding("error", "missing_value", int(ln), None, "symbol",
                        f"line {ln}: symbol is empty; row left out (fill in the series name)")
                for ln in lines[(sym == "").to_numpy()]
            ] if name == groups[0] else []
        history = _build(table, name, parsed, mask, findings, quality, sha)
        out.append(history.select(True) if exclude_flagged else history)
    return out


def load_many(paths: Iterable[str | Path], **kwargs) -> list[PriceHistory]:
    """:func:`load_prices` over several files, series names made unique by file stem."""
    out: list[PriceHistory] = []
    seen: set[str] = set()
    for p in paths:
        for h in load_prices(p, **kwargs):
            if h.name in seen:
                from dataclasses import replace
                h = replace(h, name=f"{h.name} ({Path(p).stem})")
            seen.add(h.name)
            out.append(h)
    return out


def _parse_rows(table: RawTable, date_format: str | None, use_adjusted: bool):
    """Parse dates and prices for every row; report unusable cells as error findings."""
    path, lines = table.path, table.lines
    n = len(lines)
    dates = parse_dates(pd.Series(table.columns["date"], dtype=object), date_format)
    bad_date = dates.isna().to_numpy()
    if bad_date.all() or bad_date.sum() > max(2, n // 2):
        example = next(t for t, b in zip(table.columns["date"], bad_date) if b)
        hint = (f"the date format {date_format!r} does not match" if date_format
                else "dates are not ISO (YYYY-MM-DD); pass the format, e.g. --date-format %d/%m/%Y")
        raise VolbenchError(f"{path}: line {lines[int(np.argmax(bad_date))]}, column "
                            f"{table.headers['date']!r}: cannot read date {example!r}; {hint}")
    findings: list[Finding] = []
    for i in np.flatnonzero(bad_date):
        txt = table.columns["date"][i]
        findings.append(Finding("error", "bad_date" if txt else "missing_value", lines[i], None, "date",
                                f"line {lines[i]}: date {txt!r} cannot be read; row left out"
                                if txt else f"line {lines[i]}: date is empty; row left out", (lines[i],)))
    date_iso = [None if b else _iso(d) for d, b in zip(dates.to_numpy(), bad_date)]

    close_key = "close"
    if "adj_close" in table.columns and (use_adjusted or "close" not in table.columns):
        close_key = "adj_close"
    present = [c for c in ("open", "high", "low") if c in table.columns] + [close_key]
    decimal_comma = table.delimiter != "," and _looks_decimal_comma(table, present)
    values: dict[str, np.ndarray] = {}
    unusable = bad_date.copy()
    for col in present:
        text = pd.Series(table.columns[col], dtype=object)
        num = parse_numbers(text, decimal_comma).to_numpy(dtype=float)
        empty = (text == "").to_numpy()
        nonnum = ~np.isfinite(num) & ~empty  # "inf", "1e999" and "nan" are not usable prices
        nonpos = np.isfinite(num) & ~(num > 0)
        canon = "close" if col == "adj_close" else col
        header = table.headers[col]
        for i in np.flatnonzero(empty):
            findings.append(Finding("error", "missing_value", lines[i], date_iso[i], canon,
                                    f"line {lines[i]}, column {header!r}: value is empty; row left out "
                                    "(fill it in or delete the row)", (lines[i],)))
        for i in np.flatnonzero(nonnum):
            findings.append(Finding("error", "non_numeric", lines[i], date_iso[i], canon,
                                    f"line {lines[i]}, column {header!r}: {table.columns[col][i]!r} is not a "
                                    "number; row left out (correct the cell)", (lines[i],)))
        for i in np.flatnonzero(nonpos):
            findings.append(Finding("error", "non_positive", lines[i], date_iso[i], canon,
                                    f"line {lines[i]}, column {header!r}: price {num[i]:g} is not positive; "
                                    "row left out (log returns need positive prices)", (lines[i],)))
        unusable |= empty | nonnum | nonpos
        values[canon] = num
    if close_key == "adj_close" and "close" in table.columns:
        raw_close = parse_numbers(pd.Series(table.columns["close"], dtype=object), decimal_comma).to_numpy(float)
        with np.errstate(divide="ignore", over="ignore", invalid="ignore"):  # judged just below
            factor = values["close"] / raw_close
            scaled = {c: values[c] * factor for c in ("open", "high", "low") if c in values}
        bad_factor = ~(factor > 0) | ~np.isfinite(factor)
        for i in np.flatnonzero(bad_factor & ~unusable):
            findings.append(Finding("error", "non_positive", lines[i], date_iso[i], "close",
                                    f"line {lines[i]}: close is missing or not positive, so the adjustment "
                                    "factor cannot be applied to open/high/low; row left out", (lines[i],)))
        unusable |= bad_factor
        for c, v in scaled.items():
            out_of_range = ~unusable & ~(np.isfinite(v) & (v > 0))
            for i in np.flatnonzero(out_of_range):
                findings.append(Finding("error", "non_numeric", lines[i], date_iso[i], c,
                                        f"line {lines[i]}: adjusted {c} is out of the range of numbers "
                                        "(factor adjusted/raw close too extreme); row left out", (lines[i],)))
            unusable |= out_of_range
            values[c] = v
    volume = None
    if "volume" in table.columns:
        volume = parse_numbers(pd.Series(table.columns["volume"], dtype=object), decimal_comma).to_numpy(float)
    parsed = {
        "dates": dates.to_numpy(dtype="datetime64[ns]"),
        "values": values,
        "volume": volume,
        "unusable": unusable,
        "basis": "adjusted close" if close_key == "adj_close" else "close",
    }
    return parsed, findings


def parse_dates(text: pd.Series, date_format: str | None) -> pd.Series:
    """Date cells to naive ``datetime64[ns]`` (NaT where unreadable).

    ISO 8601 unless ``date_format`` is given. A time-zone offset is dropped and the local wall-clock
    time kept, so a daily bar stamped ``2020-01-02T00:00+01:00`` stays on 2020-01-02. Mixed offsets
    are parsed cell by cell. Dates outside the range ``datetime64[ns]`` can hold (years 1678-2261)
    become NaT rather than wrapping around.
    """
    fmt = date_format or "ISO8601"
    try:
        dates = pd.to_datetime(text, format=fmt, errors="coerce")
    except (ValueError, TypeError):  # mixed offsets, or offsets with naive cells
        dates = pd.Series([_parse_one_date(t, fmt) for t in text], dtype=object)
        dates = pd.to_datetime(dates, errors="coerce")
    if getattr(dates.dt, "tz", None) is not None:
        dates = dates.dt.tz_localize(None)
    lo, hi = pd.Timestamp.min.ceil("D"), pd.Timestamp.max.floor("D")
    dates = dates.where((dates >= lo) & (dates <= hi))
    return dates.astype("datetime64[ns]")


def _parse_one_date(text: str, fmt: str):
    try:
        ts = pd.to_datetime(text, format=fmt)
    except (ValueError, TypeError, OverflowError):
        return pd.NaT
    if ts is pd.NaT:
        return ts
    ts = ts.tz_localize(None) if ts.tzinfo is not None else ts
    return ts if pd.Timestamp.min.ceil("D") <= ts <= pd.Timestamp.max.floor("D") else pd.NaT


def _looks_decimal_comma(table: RawTable, cols: list[str]) -> bool:
    """True when price cells use a comma as the decimal mark (common with ';' files)."""
    sample = [v for c in cols for v in table.columns[c][:50] if v]
    # the last separator in a number is its decimal mark: "1.010,5" decimal comma, "1,234.5" dot
    comma_last = sum(1 for v in sample if "," in v and v.rfind(",") > v.rfind("."))
    dot_last = sum(1 for v in sample if "." in v and v.rfind(".") > v.rfind(","))
    return comma_last > 0 and comma_last >= dot_last


def _build(table: RawTable, name: str, parsed: dict, mask: np.ndarray, findings: list[Finding],
           quality: QualitySettings, sha: str) -> PriceHistory:
    lines = np.asarray(table.lines, dtype=np.int64)
    use = mask & ~parsed["unusable"]
    if not use.any():
        raise VolbenchError(f"{table.path}: series {name!r} has no usable rows "
                            f"({int(mask.sum())} rows, all with missing, non-numeric or non-positive prices)")
    dates = parsed["dates"][use]
    ln = lines[use]
    vals = {k: v[use] for k, v in parsed["values"].items()}
    vol = parsed["volume"][use] if parsed["volume"] is not None else None
    findings = list(findings)
    # ascending order (stable, so for equal dates the file order is kept)
    order = np.argsort(dates, kind="stable")
    if not np.array_equal(order, np.arange(len(order))):
        descending = len(dates) > 1 and np.all(np.diff(dates.astype(np.int64)) <= 0)
        findings.append(Finding("info", "sorted", None, None, "date",
                                "rows were in descending date order; sorted ascending" if descending
                                else "rows were not in date order; sorted ascending"))
        dates, ln = dates[order], ln[order]
        vals = {k: v[order] for k, v in vals.items()}
        vol = vol[order] if vol is not None else None
    # duplicate dates: keep the last row in file order for each date
    d64 = dates.astype(np.int64)
    dup = np.concatenate([d64[1:] == d64[:-1], [False]])  # True where the next row has the same date
    if dup.any():
        for i in np.flatnonzero(dup):
            j = i + 1
            while j + 1 < len(d64) and d64[j + 1] == d64[i]:
                j += 1
            keep_line = int(ln[j])
            findings.append(Finding("warning", "duplicate_date", int(ln[i]), _iso(dates[i]), "date",
                                    f"date {_iso(dates[i])} repeats on line {keep_line}; line {int(ln[i])} "
                                    f"left out, line {keep_line} kept (the later one in the file)"))
        keep = ~dup
        dates, ln = dates[keep], ln[keep]
        vals = {k: v[keep] for k, v in vals.items()}
        vol = vol[keep] if vol is not None else None
    findings += run_checks(dates, vals.get("open"), vals.get("high"), vals.get("low"), vals["close"], ln, quality)
    findings.sort(key=lambda f: (f.line if f.line is not None else 0, f.kind))
    return PriceHistory(
        name=name, source=table.path, dates=dates, close=vals["close"], open=vals.get("open"),
        high=vals.get("high"), low=vals.get("low"), volume=vol, lines=ln, findings=tuple(findings),
        price_basis=parsed["basis"], _sha256=sha,
    )
