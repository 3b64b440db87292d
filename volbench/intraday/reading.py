"""Load bars for the intraday analysis, including files with separate Date and Time columns.

Files with one timestamp column (``2024-01-02 09:35``) load with the ordinary loader,
:func:`volbench.data.load_prices`, findings and all. The loader does not yet combine a separate
Time column with the Date column (it reads the dates alone, so every bar of a day shares one
date). Until it does (it can call :func:`volbench.intraday.sessions.combine_date_time`), this
module reads such files itself, strictly: one series a file, and any unreadable, non-positive,
repeated or out-of-order row stops the load with a message naming the line, instead of being
reported as a finding and left out.
"""

from __future__ import annotations

import csv
import hashlib
import io
from pathlib import Path

import numpy as np
import pandas as pd

from volbench.data import load_prices
from volbench.data.history import PriceHistory
from volbench.data.reader import ALIASES, normalise_header, read_text, sniff_delimiter
from volbench.errors import VolbenchError
from volbench.intraday.sessions import combine_date_time

_DATE_ONLY = {"date", "day", "trade date"}
_TIME_ONLY = {"time", "time of day", "bar time"}
_PRICES = ("open", "high", "low", "close", "volume")


def date_time_columns(header: list[str]) -> tuple[int, int] | None:
    """Positions of a date column and a separate time column, or ``None`` when there is no such pair."""
    norm = [normalise_header(h) for h in header]
    d = next((i for i, h in enumerate(norm) if h in _DATE_ONLY), None)
    t = next((i for i, h in enumerate(norm) if h in _TIME_ONLY), None)
    return (d, t) if d is not None and t is not None else None


def load_bars(
    path: str | Path,
    *,
    date_format: str | None = None,
    time_format: str | None = None,
    **load_options,
) -> list[PriceHistory]:
    """One price history per series in ``path``, intraday or daily.

    Parameters
    ----------
    path
        CSV file.
    date_format, time_format
        ``strftime`` formats of the date (and time) cells; ISO 8601 / ``H:MM[:SS]`` when ``None``.
    **load_options
        Passed to :func:`volbench.data.load_prices` (``exclude_flagged``, ``use_adjusted``,
        ``quality``, ``delimiter``) for files with one timestamp column.

    Raises
    ------
    VolbenchError
        As :func:`volbench.data.load_prices`; for separate date and time columns also any row that
        cannot be used (line and column named).
    """
    p = Path(path)
    text, raw = read_text(p)
    delim = load_options.get("delimiter") or sniff_delimiter(text)
    rows = csv.reader(io.StringIO(text, newline=""), delimiter=delim)
    header = next((r for r in rows if any(c.strip() for c in r)), None)
    pair = date_time_columns(header) if header else None
    if pair is None:
        return load_prices(p, date_format=date_format, **load_options)
    return [_read_date_time(p, text, raw, delim, pair, date_format, time_format)]


def _read_date_time(path: Path, text: str, raw: bytes, delim: str, pair: tuple[int, int],
                    date_format: str | None, time_format: str | None) -> PriceHistory:
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delim)
    header: list[str] = []
    for row in reader:
        if any(c.strip() for c in row):
            header = row
            break
    norm = [normalise_header(h) for h in header]
    pos: dict[str, int] = {}
    for canon in _PRICES + ("symbol",):
        i = next((j for j, h in enumerate(norm) if h in ALIASES[canon] and j not in pair), None)
        if i is not None:
            pos[canon] = i
    if "symbol" in pos:
        raise VolbenchError(f"{path}: line 1: separate date and time columns with a symbol column are not read "
                            "yet; save one series per file, or join date and time into one Timestamp column")
    if "close" not in pos:
        raise VolbenchError(f"{path}: line 1: no close column among headers {', '.join(map(repr, header))}; "
                            "name one column Close (or Last/Price)")
    cells: dict[str, list[str]] = {k: [] for k in ("date", "time", *pos)}
    lines: list[int] = []
    prev = reader.line_num
    for row in reader:
        line, prev = prev + 1, reader.line_num
        if not any(c.strip() for c in row):
            continue
        row = row + [""] * (len(header) - len(row))
        cells["date"].append(row[pair[0]].strip())
        cells["time"].append(row[pair[1]].strip())
        for k, i in pos.items():
            cells[k].append(row[i].strip())
        lines.append(line)
    if not lines:
        raise VolbenchError(f"{path}: header found but no data rows; the file holds no prices")
    ln = np.asarray(lines, dtype=np.int64)
    stamps = combine_date_time(cells["date"], cells["time"], date_format=date_format, time_format=time_format)
    bad = np.isnat(stamps)
    if bad.any():
        i = int(np.argmax(bad))
        raise VolbenchError(f"{path}: line {ln[i]}, columns {header[pair[0]]!r}/{header[pair[1]]!r}: cannot read "
                            f"{cells['date'][i]!r} {cells['time'][i]!r} as a date and time; use YYYY-MM-DD and "
                            "HH:MM[:SS], or pass --date-format")
    steps = np.diff(stamps.astype(np.int64))
    if (steps <= 0).any():
        i = int(np.argmax(steps <= 0)) + 1
        raise VolbenchError(f"{path}: line {ln[i]}: timestamp {cells['date'][i]} {cells['time'][i]} is not after "
                            f"the previous row's; sort the file by date and time and remove repeated rows")
    values: dict[str, np.ndarray] = {}
    for k in pos:
        v = _numbers(cells[k])
        bad = ~np.isfinite(v) | ((v <= 0) if k != "volume" else (v < 0))
        if bad.any():
            i = int(np.argmax(bad))
            raise VolbenchError(f"{path}: line {ln[i]}, column {header[pos[k]]!r}: {cells[k][i]!r} is not a "
                                f"{'positive price' if k != 'volume' else 'volume'}; correct or delete the row")
        values[k] = v
    return PriceHistory(
        name=path.stem, source=path, dates=stamps, close=values["close"], open=values.get("open"),
        high=values.get("high"), low=values.get("low"), volume=values.get("volume"), lines=ln,
        _sha256=hashlib.sha256(raw).hexdigest(),
    )


def _numbers(cells: list[str]) -> np.ndarray:
    """Text to floats, NaN where unreadable; the last of ',' and '.' in a cell is its decimal mark."""
    s = pd.Series(cells, dtype=object).str.replace(" ", "", regex=False)
    comma_decimal = s.str.rfind(",") > s.str.rfind(".")
    s = s.where(~comma_decimal, s.str.replace(".", "", regex=False).str.replace(",", ".", regex=False))
    s = s.where(comma_decimal, s.str.replace(",", "", regex=False))
    return pd.to_numeric(s, errors="coerce").to_numpy(dtype=float)
