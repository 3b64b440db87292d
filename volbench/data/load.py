"""Load price files into :class:`PriceHistory` objects with data-quality findings.

Every data row of a file ends up either in a history or named by a finding that says it was
left out (see :func:`accounting`); docs/METHODS.md, Import, describes each rule.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np
import pandas as pd

from volbench import errors
from volbench.data.dates import parse_dates
from volbench.data.history import Adjustment, Finding, PriceHistory, _finding_order, _iso
from volbench.data.numbers import decide_separators, to_numbers
from volbench.data.options import EXCEL, ImportOptions
from volbench.data.quality import QualitySettings, Split, run_checks
from volbench.data.reader import RawTable, clip, read_table
from volbench.errors import VolbenchError

_PRICE_COLS = ("open", "high", "low", "close")
Progress = Callable[[int, int, str], None]


class Cancelled(errors.Cancelled):
    """Raised by :func:`load_prices` when its ``cancel`` callable returns True."""


def _options(options: ImportOptions | None, overrides: dict) -> ImportOptions:
    base = options or ImportOptions()
    return base.with_changes(**overrides) if overrides else base


def load_prices(
    path: str | Path,
    options: ImportOptions | None = None,
    *,
    progress: Progress | None = None,
    cancel: Callable[[], bool] | None = None,
    **overrides,
) -> list[PriceHistory]:
    """Read one price file into one price history per series.

    Parameters
    ----------
    path
        CSV or tab/semicolon separated file: one series, or several in a long layout with a
        symbol column.
    options
        How to read it (:class:`~volbench.data.options.ImportOptions`); defaults infer the
        delimiter, decimal mark and thousands separator and read ISO dates.
    progress, cancel
        ``progress(done, total, text)`` is told each stage; when ``cancel()`` returns True the
        load stops between stages with :class:`Cancelled`.
    **overrides
        Fields of :class:`ImportOptions` to change (``date_format=..., exclude_flagged=True``).

    Returns
    -------
    list of PriceHistory
        One per series, in order of first appearance, each carrying its findings (and the splits
        applied, with ``adjust_splits``).

    Raises
    ------
    VolbenchError
        The file is missing, empty, binary, lacks a date or close column, holds numbers whose
        reading it does not settle, or no row is usable.
    """
    opts = _options(options, overrides)
    name = Path(path).name

    def stage(k: int, text: str) -> None:
        if cancel is not None and cancel():
            raise Cancelled()
        if progress is not None:
            progress(k, 4, f"{name}: {text}")

    stage(0, "reading")
    table = read_table(path, opts.delimiter)
    stage(1, "reading numbers and dates")
    parsed, row_findings = _parse_rows(table, opts)
    stage(2, "checking")
    out = []
    lines = table.lines
    if "symbol" in table.frame:
        sym = table.frame["symbol"].fillna("").astype(str).str.strip()
        codes, names = pd.factorize(sym, sort=False)
        named = [k for k, s in enumerate(names) if s]
        if not named:
            raise VolbenchError(f"{table.path}: column {table.headers['symbol']!r} is empty in every row; "
                                "fill in the series name or remove the column")
        empty_code = next((k for k, s in enumerate(names) if not s), None)
        groups = [(str(names[k]), codes == k) for k in named]
        no_symbol = [] if empty_code is None else [
            Finding("error", "missing_value", int(ln), None, "symbol",
                    f"line {ln}: symbol is empty; row left out (fill in the series name)", (int(ln),))
            for ln in lines[codes == empty_code]]
        line_group = np.full(len(lines), -1)
        for g, (_, mask) in enumerate(groups):
            line_group[mask] = g
    else:
        groups = [(table.path.stem, np.ones(len(lines), dtype=bool))]
        no_symbol = []
        line_group = np.zeros(len(lines), dtype=np.int64)
    # findings about one row go to that row's series; the others to the first series
    owner = {}
    for f in row_findings:
        g = 0
        if f.line is not None and len(lines):
            k = int(np.searchsorted(lines, f.line))
            if k < len(lines) and lines[k] == f.line and line_group[k] >= 0:
                g = int(line_group[k])
        owner.setdefault(g, []).append(f)
    file_level = list(table.findings) + no_symbol
    for g, (series, mask) in enumerate(groups):
        findings = owner.get(g, []) + (file_level if g == 0 else [])
        history = _build(table, series, parsed, mask, findings, opts)
        out.append(history.select(True) if opts.exclude_flagged else history)
    _check_accounting(table, out)
    stage(3, "done")
    return out


def _check_accounting(table: RawTable, histories: list[PriceHistory]) -> None:
    """Data rows in the file = rows used + rows named by findings as left out (docs/METHODS.md,
    Import); a mismatch is a bug in volbench, never a silent loss of rows."""
    used, out = sum(h.n for h in histories), set()
    for h in histories:
        out |= h.left_out_lines
        out.update(h.excluded_lines)
    if used + len(out) != table.data_rows:
        raise RuntimeError(f"{table.path}: {table.data_rows} data rows but {used} used and {len(out)} "
                           "reported left out; please report this file")


def load_many(paths: Iterable[str | Path], options: ImportOptions | None = None, *,
              progress: Progress | None = None, cancel: Callable[[], bool] | None = None,
              **overrides) -> list[PriceHistory]:
    """:func:`load_prices` over several files, series names made unique by file stem."""
    opts = _options(options, overrides)
    out: list[PriceHistory] = []
    seen: set[str] = set()
    paths = list(paths)
    for i, p in enumerate(paths):
        if cancel is not None and cancel():
            raise Cancelled()
        if progress is not None:
            progress(i, len(paths), f"reading {Path(p).name}")
        for h in load_prices(p, opts, cancel=cancel):
            if h.name in seen:
                h = replace(h, name=f"{h.name} ({Path(p).stem})")
            seen.add(h.name)
            out.append(h)
    return out


@dataclass(frozen=True)
class Loaded:
    """What :func:`load_each` read: the histories, the files they came from, and one message per
    file that could not be read."""

    histories: tuple[PriceHistory, ...]
    files: tuple[str, ...]
    errors: tuple[str, ...]


def load_each(paths: Iterable[str | Path], options: ImportOptions | None = None, *, taken: Iterable[str] = (),
              progress: Progress | None = None, cancel: Callable[[], bool] | None = None) -> Loaded:
    """:func:`load_prices` per file, going on past a file that cannot be read (its message is kept).

    Series names are made unique by file stem as :func:`load_many` does, also against the names in
    ``taken`` (series already loaded). ``progress(done, total, text)`` counts every file's stages;
    :class:`Cancelled` propagates when ``cancel()`` turns true. This is what a window that loads
    several files at once needs; :func:`load_many` stops at the first bad file instead.
    """
    opts = options or ImportOptions()
    histories: list[PriceHistory] = []
    files: list[str] = []
    errors: list[str] = []
    seen: set[str] = set(taken)
    unique = list(dict.fromkeys(str(p) for p in paths))
    n = len(unique)
    for i, p in enumerate(unique):
        def step(done: int, total: int, text: str, i=i) -> None:
            if progress is not None:
                progress(i * total + done, n * total, text)

        try:
            loaded = load_prices(p, opts, progress=step, cancel=cancel)
        except VolbenchError as exc:
            errors.append(str(exc))
            continue
        except OSError as exc:
            errors.append(f"{p}: cannot be read ({exc.strerror or exc}); check the path and permissions")
            continue
        files.append(p)
        for h in loaded:
            if h.name in seen:
                h = replace(h, name=f"{h.name} ({Path(p).stem})")
            seen.add(h.name)
            histories.append(h)
    return Loaded(tuple(histories), tuple(files), tuple(errors))


def accounting(histories: Iterable[PriceHistory]) -> tuple[frozenset[int], frozenset[int]]:
    """(lines used, lines left out or excluded and named by a finding) over the histories of a file.

    Every data row of the file is in exactly one of the two sets (docs/METHODS.md, Import).
    """
    used: set[int] = set()
    out: set[int] = set()
    for h in histories:
        used.update(int(x) for x in h.lines)
        out.update(h.left_out_lines)
        out.update(h.excluded_lines)
    return frozenset(used), frozenset(out)


# ------------------------------------------------------------------------------------ rows
def _row_finding(severity: str, kind: str, line: int, date, column, message: str) -> Finding:
    return Finding(severity, kind, int(line), date, column, message, (int(line),))


def _parse_rows(table: RawTable, opts: ImportOptions):
    """Parse dates and prices for every row; report unusable cells as error findings."""
    path, lines, frame = table.path, table.lines, table.frame
    n = len(lines)
    findings: list[Finding] = []
    date_col = frame["date"]
    if opts.date_format != EXCEL and not (pd.api.types.is_string_dtype(date_col) or date_col.dtype == object):
        date_col = table.texts(["date"])["date"]
    dates, tz_note = parse_dates(date_col, opts.date_format, frame.get("time"))
    if tz_note is not None:
        findings.append(tz_note)
    bad_date = np.isnat(dates)
    if n and (bad_date.all() or bad_date.sum() > max(2, n // 2)):
        i = int(np.argmax(bad_date))
        example = date_col.iloc[i]
        if opts.date_format == EXCEL:
            hint = "'excel' dates must be serial day numbers such as 44197"
        elif opts.date_format:
            hint = f"the date format {opts.date_format!r} does not match"
        else:
            hint = ("dates are not ISO (YYYY-MM-DD); pass the format, e.g. --date-format %d/%m/%Y "
                    "(or --date-format excel for spreadsheet day numbers)")
        raise VolbenchError(f"{path}: line {lines[i]}, column {table.headers['date']!r}: cannot read date "
                            f"{clip('' if pd.isna(example) else example)}; {hint}")
    texts_of_dates = None
    for i in np.flatnonzero(bad_date):
        if texts_of_dates is None:
            texts_of_dates = date_col
        txt = texts_of_dates.iloc[i]
        txt = "" if pd.isna(txt) else str(txt).strip()
        findings.append(_row_finding("error", "bad_date" if txt else "missing_value", lines[i], None, "date",
                                     f"line {lines[i]}: date {clip(txt)} cannot be read; row left out"
                                     if txt else f"line {lines[i]}: date is empty; row left out"))

    def iso(i: int) -> str | None:
        return None if bad_date[i] else _iso(dates[i])

    close_key = "close"
    if "adj_close" in frame and (opts.use_adjusted or "close" not in frame):
        close_key = "adj_close"
    present = [c for c in ("open", "high", "low") if c in frame] + [close_key]
    numeric = present + [c for c in ("close", "volume") if c in frame and c not in present]
    seps, texts = decide_separators(table, numeric, opts)
    if seps.finding is not None:
        findings.append(seps.finding)
    values: dict[str, np.ndarray] = {}
    unusable = bad_date.copy()
    for col in present:
        num, empty = to_numbers(frame[col], texts.get(col), seps)
        nonnum = ~np.isfinite(num) & ~empty  # "inf", "1e999" and "nan" are not usable prices
        nonpos = np.isfinite(num) & ~(num > 0)
        canon = "close" if col == "adj_close" else col
        header = table.headers[col]
        for i in np.flatnonzero(empty):
            findings.append(_row_finding("error", "missing_value", lines[i], iso(i), canon,
                                         f"line {lines[i]}, column {header!r}: value is empty; row left out "
                                         "(fill it in or delete the row)"))
        if nonnum.any():
            cells = texts[col] if col in texts else table.texts([col])[col]
            for i in np.flatnonzero(nonnum):
                findings.append(_row_finding("error", "non_numeric", lines[i], iso(i), canon,
                                             f"line {lines[i]}, column {header!r}: {clip(str(cells.iloc[i]).strip())} "
                                             "is not a number; row left out (correct the cell)"))
        for i in np.flatnonzero(nonpos):
            findings.append(_row_finding("error", "non_positive", lines[i], iso(i), canon,
                                         f"line {lines[i]}, column {header!r}: price {num[i]:g} is not positive; "
                                         "row left out (log returns need positive prices)"))
        unusable |= empty | nonnum | nonpos
        values[canon] = num
    if close_key == "adj_close" and "close" in frame:
        raw_close, _ = to_numbers(frame["close"], texts.get("close"), seps)
        with np.errstate(divide="ignore", over="ignore", invalid="ignore"):  # judged just below
            factor = values["close"] / raw_close
            scaled = {c: values[c] * factor for c in ("open", "high", "low") if c in values}
        bad_factor = ~(factor > 0) | ~np.isfinite(factor)
        for i in np.flatnonzero(bad_factor & ~unusable):
            findings.append(_row_finding("error", "non_positive", lines[i], iso(i), "close",
                                         f"line {lines[i]}: close is missing or not positive, so the adjustment "
                                         "factor cannot be applied to open/high/low; row left out"))
        unusable |= bad_factor
        for c, v in scaled.items():
            out_of_range = ~unusable & ~(np.isfinite(v) & (v > 0))
            for i in np.flatnonzero(out_of_range):
                findings.append(_row_finding("error", "non_numeric", lines[i], iso(i), c,
                                             f"line {lines[i]}: adjusted {c} is out of the range of numbers "
                                             "(factor adjusted/raw close too extreme); row left out"))
            unusable |= out_of_range
            values[c] = v
    volume = None
    if "volume" in frame:
        volume, _ = to_numbers(frame["volume"], texts.get("volume"), seps)
    parsed = {
        "dates": dates,
        "values": values,
        "volume": volume,
        "unusable": unusable,
        "basis": "adjusted close" if close_key == "adj_close" else "close",
    }
    return parsed, findings


def _build(table: RawTable, name: str, parsed: dict, mask: np.ndarray, findings: list[Finding],
           opts: ImportOptions) -> PriceHistory:
    use = mask & ~parsed["unusable"]
    if not use.any():
        raise VolbenchError(f"{table.path}: series {name!r} has no usable rows "
                            f"({int(mask.sum())} rows, all with missing, non-numeric or non-positive prices)")
    if use.all():  # the usual clean file: no copies
        dates, ln, vals, vol = parsed["dates"], table.lines, dict(parsed["values"]), parsed["volume"]
    else:
        dates = parsed["dates"][use]
        ln = table.lines[use]
        vals = {k: v[use] for k, v in parsed["values"].items()}
        vol = parsed["volume"][use] if parsed["volume"] is not None else None
    findings = list(findings)
    # ascending order (stable, so for equal dates the file order is kept)
    if len(dates) > 1 and not np.all(dates[1:] > dates[:-1]):
        order = np.argsort(dates, kind="stable")
        if not np.array_equal(order, np.arange(len(order))):
            descending = bool(np.all(dates[1:] <= dates[:-1]))
            findings.append(Finding("info", "sorted", None, None, "date",
                                    "rows were in descending date order; sorted ascending" if descending
                                    else "rows were not in date order; sorted ascending"))
            dates, ln = dates[order], ln[order]
            vals = {k: v[order] for k, v in vals.items()}
            vol = vol[order] if vol is not None else None
        # duplicate dates: keep the last row in file order for each date
        d64 = dates.view(np.int64)
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
    checks, splits = run_checks(dates, vals.get("open"), vals.get("high"), vals.get("low"), vals["close"], ln,
                                opts.quality, vol)
    adjustments: tuple[Adjustment, ...] = ()
    if opts.adjust_splits and splits:
        vals, vol, adjustments = _apply_splits(vals, vol, splits, dates, ln)
        applied = {a.line for a in adjustments}
        checks = [f for f in checks if not (f.kind == "jump" and f.line in applied)]
        checks += [Finding("info", "split_adjusted", a.line, a.date, "close",
                           f"{a.label} applied: open, high, low and close before {a.date} divided by "
                           f"{a.ratio:g}, volume multiplied by {a.ratio:g}") for a in adjustments]
        # the checks are judged again on the adjusted prices, without the split's own return
        again, _ = run_checks(dates, vals.get("open"), vals.get("high"), vals.get("low"), vals["close"], ln,
                              opts.quality, vol)
        checks = [f for f in checks if f.kind not in ("jump", "large_move")] + [
            f for f in again if f.kind in ("jump", "large_move")]
    findings += checks
    findings.sort(key=_finding_order)
    for a in (dates, ln, vol, *vals.values()):
        if a is not None and a.base is None:
            a.setflags(write=False)  # owned by this history from here on: PriceHistory keeps it as is
    return PriceHistory(
        name=name, source=table.path, dates=dates, close=vals["close"], open=vals.get("open"),
        high=vals.get("high"), low=vals.get("low"), volume=vol, lines=ln, findings=tuple(findings),
        price_basis=parsed["basis"], adjustments=adjustments, _sha256=table.sha256, _size=table.size,
    )


def _apply_splits(vals: dict, vol, splits: list[Split], dates, ln):
    """Back-adjust: every bar before a split has its prices multiplied by the split's price
    factor (0.5 for 2:1) and its volume divided by it."""
    n = len(vals["close"])
    factor = np.ones(n)
    adjustments = []
    for s in splits:
        factor[:s.index] *= s.factor
        adjustments.append(Adjustment(_iso(dates[s.index]), float(round(1 / s.factor, 10)), int(ln[s.index]), s.label))
    out = {k: v * factor for k, v in vals.items()}
    return out, (None if vol is None else vol / factor), tuple(adjustments)


__all__ = ["Cancelled", "QualitySettings", "accounting", "load_many", "load_prices"]
