"""Read a price CSV into raw text columns, with file line numbers and canonical column names.

Only reading and header matching live here; turning text into numbers and judging the rows is
done in :mod:`volbench.data.load` and :mod:`volbench.data.quality`.
"""

from __future__ import annotations

import csv
import io
import re
from dataclasses import dataclass
from pathlib import Path

from volbench.errors import VolbenchError

# Canonical column -> accepted header spellings (compared after normalising case, spaces,
# underscores, hyphens and dots). Order of the canonical names is the order we report them.
ALIASES: dict[str, tuple[str, ...]] = {
    "date": ("date", "time", "timestamp", "datetime", "date time", "day", "trade date", "as of"),
    "symbol": ("symbol", "ticker", "instrument", "series", "code", "name", "asset"),
    "open": ("open", "o", "open price", "opening price", "first"),
    "high": ("high", "h", "hi", "high price", "max"),
    "low": ("low", "l", "lo", "low price", "min"),
    "close": ("close", "c", "close price", "closing price", "last", "last price", "price", "settle", "settlement"),
    "adj_close": ("adj close", "adjusted close", "adj", "adjclose", "adj close price", "adjusted close price", "adjusted"),
    "volume": ("volume", "vol", "v", "qty", "quantity", "shares"),
}
_LOOKUP = {alias: canon for canon, names in ALIASES.items() for alias in names}
DELIMITERS = (",", ";", "\t")


def normalise_header(name: str) -> str:
    """Lower-case, strip, and fold runs of ``_ - . /`` and spaces into single spaces."""
    s = name.strip().strip('"').strip("'").lower()
    s = re.sub(r"\(.*?\)", "", s)  # drop unit hints like "Close (EUR)"
    return re.sub(r"[\s_\-./]+", " ", s).strip()


@dataclass(frozen=True)
class RawTable:
    """Text cells of a CSV by canonical column, with the file line of each data row."""

    path: Path
    delimiter: str
    columns: dict[str, list[str]]
    lines: list[int]
    headers: dict[str, str]  # canonical -> header as written in the file
    raw: bytes


def read_text(path: Path) -> tuple[str, bytes]:
    """Read a file as text, rejecting missing, empty and binary files with a clear message."""
    if not path.exists():
        raise VolbenchError(f"{path}: file not found; check the path and try again")
    if path.is_dir():
        raise VolbenchError(f"{path}: is a folder, not a CSV file; give the path of a price file")
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise VolbenchError(f"{path}: cannot be read ({exc.strerror}); check permissions") from None
    if not raw.strip():
        raise VolbenchError(f"{path}: file is empty; export the price history again with a header row")
    if b"\x00" in raw[:65536]:
        raise VolbenchError(
            f"{path}: looks like a binary file, not a CSV (contains NUL bytes); "
            "export the prices as comma, semicolon or tab separated text"
        )
    for enc in ("utf-8-sig", "cp1252"):
        try:
            text = raw.decode(enc)
            break
        except UnicodeDecodeError:
            continue
    else:  # pragma: no cover - cp1252 decodes almost anything
        raise VolbenchError(f"{path}: not readable as text; save it as UTF-8 CSV")
    sample = text[:65536]
    bad = sum(1 for ch in sample if (ord(ch) < 32 and ch not in "\r\n\t") or 0x7F <= ord(ch) < 0xA0)
    if bad > max(3, len(sample) // 100):
        raise VolbenchError(
            f"{path}: looks like a binary file, not a CSV ({bad} control characters); "
            "export the prices as comma, semicolon or tab separated text"
        )
    return text, raw


def sniff_delimiter(text: str) -> str:
    """Pick comma, semicolon or tab from the header and first rows."""
    head = "\n".join(text.splitlines()[:20])
    try:
        return csv.Sniffer().sniff(head, delimiters="".join(DELIMITERS)).delimiter
    except csv.Error:
        first = text.splitlines()[0] if text.splitlines() else ""
        counts = {d: first.count(d) for d in DELIMITERS}
        best = max(counts, key=counts.get)
        return best if counts[best] else ","


def match_headers(path: Path, header: list[str]) -> dict[str, int]:
    """Map canonical names to column positions; raise if date or close is missing."""
    found: dict[str, int] = {}
    for i, h in enumerate(header):
        canon = _LOOKUP.get(normalise_header(h))
        if canon and canon not in found:
            found[canon] = i
    shown = ", ".join(repr(h) for h in header) or "(none)"
    if "date" not in found:
        raise VolbenchError(
            f"{path}: line 1: no date column among headers {shown}; "
            "name one column Date (or Time/Timestamp)"
        )
    if "close" not in found and "adj_close" not in found:
        raise VolbenchError(
            f"{path}: line 1: no close column among headers {shown}; "
            "name one column Close (or Adj Close/Last/Price)"
        )
    return found


def read_table(path: str | Path, delimiter: str | None = None) -> RawTable:
    """Read ``path`` into a :class:`RawTable`.

    Raises
    ------
    VolbenchError
        Missing, empty or binary file; no header; no date or close column.
    """
    path = Path(path)
    text, raw = read_text(path)
    delim = delimiter or sniff_delimiter(text)
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delim)
    header: list[str] | None = None
    for row in reader:
        if any(cell.strip() for cell in row):
            header = row
            break
    if header is None:
        raise VolbenchError(f"{path}: no header row found; the first line must name the columns")
    header_line = reader.line_num
    positions = match_headers(path, header)
    cols: dict[str, list[str]] = {k: [] for k in positions}
    lines: list[int] = []
    width = len(header)
    prev = header_line
    for row in reader:
        line = prev + 1  # the line a record starts on (records may span lines inside quotes)
        prev = reader.line_num
        if not any(cell.strip() for cell in row):
            continue
        if len(row) < width:
            row = row + [""] * (width - len(row))
        for canon, pos in positions.items():
            cols[canon].append(row[pos].strip())
        lines.append(line)
    if not lines:
        raise VolbenchError(f"{path}: header found but no data rows; the file holds no prices")
    headers = {canon: header[pos].strip() for canon, pos in positions.items()}
    return RawTable(path=path, delimiter=delim, columns=cols, lines=lines, headers=headers, raw=raw)
