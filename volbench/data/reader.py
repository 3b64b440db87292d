"""Read a price file into a table of cells by canonical column, with the file line of each row.

Only reading and the file's structure live here: encoding, the header line (after an optional
preamble), the delimiter, rows whose field count differs from the header's, and quoted cells
that run over several lines. Turning cells into numbers and dates, and judging the rows, is done
in :mod:`volbench.data.numbers`, :mod:`volbench.data.dates`, :mod:`volbench.data.load` and
:mod:`volbench.data.quality`. The rules are described in docs/METHODS.md, Import.

Files without quote marks (nearly every price export) are parsed by pandas' C reader, after one
vectorised scan of the bytes that counts the fields of every line; files with quote marks go
through Python's ``csv`` module, which reports where each record starts.
"""

from __future__ import annotations

import csv
import hashlib
import io
import itertools
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from volbench.data.history import Finding
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
_DATE_ONLY = frozenset({"date", "day", "trade date", "as of"})
DELIMITERS = (",", ";", "\t")
"""Delimiters inferred from the header; others (``|``) must be given explicitly."""
TEXT_COLUMNS = frozenset({"date", "time", "symbol"})
NUMERIC_COLUMNS = ("open", "high", "low", "close", "adj_close", "volume")
MAX_PREAMBLE = 20
"""Lines before the header that are skipped (with an ``info`` finding) when looking for it."""
CLIP = 60
"""Characters of a cell quoted in a message (the rest is elided)."""
_HEAD_BYTES = 1 << 16
_BLANK = " \t\r\x0b\x0c"
"""What a blank line may hold besides delimiters (ASCII white space, as ``bytes.strip`` sees it)."""
_CONTROL = bytes(b for b in range(32) if b not in (9, 10, 13)) + b"\x7f"


def clip(text: object, limit: int = CLIP) -> str:
    """``repr`` of a cell, cut to about ``limit`` characters so that no message grows unbounded."""
    s = str(text)
    if len(s) > limit:
        return repr(s[:limit]) + f"... ({len(s):,} characters)"
    return repr(s)


def normalise_header(name: str) -> str:
    """Lower-case, strip, and fold runs of ``_ - . /`` and spaces into single spaces."""
    s = name.strip().strip('"').strip("'").lower()
    s = re.sub(r"\(.*?\)", "", s)  # drop unit hints like "Close (EUR)"
    return re.sub(r"[\s_\-./]+", " ", s).strip()


@dataclass(frozen=True, eq=False)
class RawTable:
    """The cells of a price file by canonical column, one row per data record kept for parsing.

    Attributes
    ----------
    path, delimiter, sha256
        The file, its field separator and the SHA-256 of its bytes.
    frame
        One pandas Series per canonical name found (``date``, ``time``, ``symbol``, ``open``, ...):
        float64 where pandas read every cell as a number, text otherwise.
    lines
        File line (1-based, the header's line counts) where each row of ``frame`` starts.
    headers
        Canonical name -> the header as written in the file.
    findings
        Structural findings: preamble skipped, rows with the wrong number of fields, quoted
        cells spanning lines. Rows they name are not in ``frame``.
    data_rows
        Non-blank records after the header: ``len(frame)`` plus the rows named by ``findings``.
    header_line
        1-based line of the header.
    """

    path: Path
    delimiter: str
    frame: dict[str, pd.Series]
    lines: np.ndarray
    headers: dict[str, str]
    sha256: str
    findings: tuple[Finding, ...]
    data_rows: int
    header_line: int = 1
    size: int = 0
    _source: bytes | Path = b""
    _read_args: tuple = ()

    @property
    def columns(self) -> dict[str, pd.Series]:
        return dict(self.frame)

    @property
    def n(self) -> int:
        return len(self.lines)

    def texts(self, names) -> dict[str, pd.Series]:
        """The cells of ``names`` as text, exactly as written (re-read when pandas made numbers)."""
        out: dict[str, pd.Series] = {}
        need = []
        for name in names:
            col = self.frame[name]
            if pd.api.types.is_string_dtype(col) and col.dtype != object:
                out[name] = col  # text exactly as written (an object column may mix parsed numbers in)
            else:
                need.append(name)
        if need:
            if not self._read_args:  # the csv path keeps text already
                raise AssertionError("text of a column read by the csv module is always kept")
            skip, width, positions, encoding, keep = self._read_args
            df = _read_c(self._source, self.delimiter, skip, width, {n: positions[n] for n in need},
                         encoding, text=set(need))
            for name in need:
                out[name] = df[name] if keep.all() else df[name][keep].reset_index(drop=True)
        return out


# ------------------------------------------------------------------------------------ bytes
def read_bytes(path: Path) -> bytes:
    """The file's bytes, rejecting missing, empty and folder paths with a clear message."""
    if not path.exists():
        raise VolbenchError(f"{path}: file not found; check the path and try again")
    if path.is_dir():
        raise VolbenchError(f"{path}: is a folder, not a CSV file; give the path of a price file")
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise VolbenchError(f"{path}: cannot be read ({exc.strerror}); check permissions") from None
    if not raw or raw.isspace():
        raise VolbenchError(f"{path}: file is empty; export the price history again with a header row")
    return raw


def decode(path: Path, raw: bytes) -> tuple[bytes, str]:
    """Bytes the C reader can take and their encoding; UTF-16 (with a byte-order mark) is
    converted to UTF-8, other files are UTF-8 (with or without BOM) or else Windows-1252."""
    if raw[:2] in (b"\xff\xfe", b"\xfe\xff"):
        try:
            text = raw.decode("utf-16")
        except UnicodeDecodeError:
            raise VolbenchError(f"{path}: starts like UTF-16 text but cannot be decoded; save it again as "
                                "UTF-8 or 'Unicode text'") from None
        raw = text.lstrip("\ufeff").encode("utf-8")
    head = raw[:_HEAD_BYTES]
    if b"\x00" in head:
        raise VolbenchError(
            f"{path}: looks like a binary file, not a CSV (contains NUL bytes); "
            "export the prices as comma, semicolon or tab separated text"
        )
    if raw.isascii():
        encoding = "utf-8"
    else:
        try:
            raw.decode("utf-8")
            encoding = "utf-8-sig" if raw.startswith(b"\xef\xbb\xbf") else "utf-8"
        except UnicodeDecodeError:
            encoding = "cp1252"
    if encoding == "cp1252":
        raw = raw.decode("cp1252", errors="replace").encode("utf-8")
        encoding = "utf-8"
    control = len(head) - len(head.translate(None, _CONTROL))
    if control > max(3, len(head) // 100):
        raise VolbenchError(
            f"{path}: looks like a binary file, not a CSV ({control} control characters); "
            "export the prices as comma, semicolon or tab separated text"
        )
    if b"\r" in raw and raw.count(b"\r") != raw.count(b"\r\n"):  # lone CR line ends (old Mac files)
        raw = raw.replace(b"\r\n", b"\n").replace(b"\r", b"\n")
    return raw, encoding


# ------------------------------------------------------------------------------------ header
def _match(header: list[str]) -> dict[str, int]:
    found: dict[str, int] = {}
    dates: list[tuple[int, str]] = []
    for i, h in enumerate(header):
        norm = normalise_header(h)
        canon = _LOOKUP.get(norm)
        if canon == "date":
            dates.append((i, norm))
        if canon and canon not in found:
            found[canon] = i
    # a date column and a separate time column are combined
    if len(dates) >= 2:
        day = next((i for i, n in dates if n in _DATE_ONLY), None)
        clock = next((i for i, n in dates if n == "time"), None)
        if day is not None and clock is not None:
            found["date"], found["time"] = day, clock
    return found


def match_headers(path: Path, header: list[str], line: int = 1) -> dict[str, int]:
    """Map canonical names to column positions; raise if date or close is missing."""
    found = _match(header)
    shown = ", ".join(clip(h, 40) for h in header[:40]) or "(none)"
    if len(header) > 40:
        shown += f", ... ({len(header)} columns)"
    if "date" not in found:
        raise VolbenchError(
            f"{path}: line {line}: no date column among headers {shown}; "
            "name one column Date (or Time/Timestamp)"
        )
    if "close" not in found and "adj_close" not in found:
        raise VolbenchError(
            f"{path}: line {line}: no close column among headers {shown}; "
            "name one column Close (or Adj Close/Last/Price)"
        )
    return found


def _split(line: str, delim: str) -> list[str]:
    try:
        return next(csv.reader([line], delimiter=delim), [])
    except csv.Error:
        return line.split(delim)


def find_header(path: Path, raw: bytes, delimiter: str | None) -> tuple[int, str, list[str], list[tuple[int, str]]]:
    """Locate the header: the first of the first ``MAX_PREAMBLE + 1`` non-blank lines naming a
    date and a close column under some delimiter.

    Returns the header's 0-based physical line, the delimiter, the header cells and the skipped
    preamble lines (1-based line, text).
    """
    head = raw[:_HEAD_BYTES].decode("utf-8", errors="replace").lstrip("\ufeff")
    physical = head.split("\n", 4 * (MAX_PREAMBLE + 21))
    if len(physical) > 4 * (MAX_PREAMBLE + 21) or len(raw) > _HEAD_BYTES:
        physical = physical[:-1]  # the rest of the file, or a line that may be cut
    nonblank = [(i, s.rstrip("\r")) for i, s in enumerate(physical) if s.strip()]
    if not nonblank:
        raise VolbenchError(f"{path}: no header row found; the first line must name the columns")
    candidates = (delimiter,) if delimiter else DELIMITERS
    for k, (i, text) in enumerate(nonblank[: MAX_PREAMBLE + 1]):
        options = []
        for d in candidates:
            cells = _split(text, d)
            found = _match(cells)
            if "date" in found and ("close" in found or "adj_close" in found):
                after = [t for _, t in nonblank[k + 1: k + 21]]
                consistent = sum(t.count(d) == text.count(d) for t in after)
                options.append((consistent, len(cells), d, cells))
        if options:
            _, _, d, cells = max(options, key=lambda o: (o[0], o[1]))
            return i, d, cells, [(j + 1, t) for j, t in nonblank[:k]]
    first_line, first = nonblank[0]
    d = delimiter or max(DELIMITERS, key=lambda c: (first.count(c), c == ","))
    match_headers(path, _split(first, d), first_line + 1)
    raise AssertionError("unreachable: match_headers raises")  # pragma: no cover


# ------------------------------------------------------------------------------------ structure
def _line_spans(raw: bytes, start: int) -> tuple[np.ndarray, np.ndarray]:
    """Start and end offsets (end excludes the newline) of every physical line from ``start``."""
    arr = np.frombuffer(raw, dtype=np.uint8)
    nl = np.flatnonzero(arr == 10)
    nl = nl[nl >= start]
    starts = np.concatenate([[start], nl + 1])
    ends = np.concatenate([nl, [len(raw)]])
    if starts[-1] >= len(raw):  # file ends with a newline: no last line
        starts, ends = starts[:-1], ends[:-1]
    return starts, ends


def _field_counts(raw: bytes, starts: np.ndarray, ends: np.ndarray, delim: str) -> np.ndarray:
    arr = np.frombuffer(raw, dtype=np.uint8)
    pos = np.flatnonzero(arr == ord(delim))
    return np.searchsorted(pos, ends) - np.searchsorted(pos, starts) + 1


def _read_c(raw: bytes | Path, delim: str, skip: int, width: int, positions: dict[str, int], encoding: str,
            text: set[str] | frozenset[str] = TEXT_COLUMNS, every: bool = False) -> pd.DataFrame:
    """The C reader on ``raw`` after ``skip`` lines, columns named by position.

    With ``every`` all ``width`` columns are read, so that a line with more fields raises
    ``ParserError`` (with only some columns asked for, pandas ignores extra fields).
    """
    by_pos = {p: name for name, p in positions.items()}
    use = None if every else sorted(p for p in by_pos if p < width)  # a column no row reaches is empty
    df = pd.read_csv(
        raw if isinstance(raw, Path) else io.BytesIO(raw), sep=delim, header=None, names=list(range(width)), usecols=use, skiprows=skip,
        dtype={p: str for p in (use or range(width)) if p in by_pos and by_pos[p] in text},
        keep_default_na=False, na_values=[""],
        skip_blank_lines=False, encoding=encoding, engine="c",
    )
    out = {by_pos[p]: df[p] for p in df.columns if p in by_pos}
    for p, name in by_pos.items():
        if p >= width:
            out[name] = pd.Series(np.full(len(df), np.nan))
    return out


def _runs(idx: np.ndarray, lines: np.ndarray, counts: np.ndarray) -> list[tuple[int, int]]:
    """Split sorted row indices into runs of rows on consecutive lines with the same field count."""
    if not len(idx):
        return []
    brk = np.flatnonzero((np.diff(lines[idx]) != 1) | (np.diff(counts[idx]) != 0)) + 1
    bounds = np.concatenate([[0], brk, [len(idx)]])
    return [(int(a), int(b)) for a, b in itertools.pairwise(bounds)]


def _width_findings(path: Path, lines: np.ndarray, counts: np.ndarray, bad: np.ndarray, width: int,
                    delim: str, header_line: int) -> list[Finding]:
    idx = np.flatnonzero(bad)
    out: list[Finding] = []
    for a, b in _runs(idx, lines, counts):
        rows = lines[idx[a:b]]
        n, k = b - a, int(counts[idx[a]])
        where = f"line {rows[0]}" if n == 1 else f"lines {rows[0]}-{rows[-1]} ({n} rows)"
        if k > width:
            cause = ("likely cause: numbers written with an unquoted thousands separator or decimal comma "
                     "(e.g. 4,960) split into two fields; quote such numbers or save the file with ';' "
                     "separators" if delim == "," else
                     f"likely cause: an unquoted {delim!r} inside a value; quote such values")
        else:
            cause = "likely cause: truncated lines; export the file again"
        out.append(Finding("error", "field_count", int(rows[0]), None, None,
                           f"{where}: {k} field{'s' if k != 1 else ''} where the header (line {header_line}) "
                           f"has {width}; left out, since the values cannot be matched to their columns "
                           f"({cause})", tuple(int(x) for x in rows)))
    return out


def read_table(path: str | Path, delimiter: str | None = None) -> RawTable:
    """Read ``path`` into a :class:`RawTable`.

    Raises
    ------
    VolbenchError
        Missing, empty or binary file; no header; no date or close column; every data row has
        a field count the header does not have; a quote mark that is never closed.
    """
    path = Path(path)
    raw = read_bytes(path)
    sha = hashlib.sha256(raw).hexdigest()
    size = len(raw)
    data, encoding = decode(path, raw)
    src = path if data is raw else data  # pandas reads a file faster from its path than from memory
    del raw
    h, delim, header, preamble = find_header(path, data, delimiter)
    header_line = h + 1
    positions = match_headers(path, header, header_line)
    names = [c.strip() for c in header]
    width = max((i + 1 for i, c in enumerate(names) if c), default=1)
    needed = max(p for k, p in positions.items() if k != "volume") + 1  # volume may be cut off
    headers = {canon: names[pos] for canon, pos in positions.items()}
    findings: list[Finding] = []
    if preamble:
        first, text = preamble[0]
        findings.append(Finding(
            "info", "preamble", first, None, None,
            f"{len(preamble)} line{'s' if len(preamble) > 1 else ''} before the header (line {header_line}) "
            f"skipped, starting with {clip(text)}"))
    start = _offset_of_line(data, h + 1)
    if b'"' in data[start:]:
        frame, lines, _, data_rows = _read_quoted(path, data[start:], delim, header_line, width, needed,
                                                         positions, findings)
        return RawTable(path, delim, frame, lines, headers, sha, tuple(findings), data_rows, header_line, size)
    n_header = len(names)
    extra = {f"_extra{j}": j for j in range(width, n_header)}
    fast = _read_fast(data, src, delim, h, start, n_header, needed, {**positions, **extra}, encoding)
    if fast is not None:
        frame, counts, blank = fast
        max_width = n_header
    else:  # some line has more fields than the header: count the fields of every line
        starts, ends = _line_spans(data, start)
        counts = _field_counts(data, starts, ends, delim)
        blank = _blank(data, starts, ends, counts, delim, np.ones(len(starts), dtype=bool))
        max_width = int(counts.max()) if len(counts) else width
        if blank.all():
            raise VolbenchError(f"{path}: header found but no data rows; the file holds no prices")
        if ((counts < needed) | blank).all():
            k = int(np.bincount(counts[~blank]).argmax())
            raise VolbenchError(_all_rows_bad(path, header_line, k, width, delim))
        extra = {f"_extra{j}": j for j in range(width, min(max_width, width + 4))}
        frame = _read_c(src, delim, h + 1, max_width, {**positions, **extra}, encoding)
        if len(next(iter(frame.values()))) != len(starts):  # pragma: no cover - scan and reader disagree
            raise VolbenchError(f"{path}: the file's lines could not be matched to its rows; save it again as CSV")
        wide_unread = (counts > width + len(extra)) & ~blank
        for i in np.flatnonzero(wide_unread):  # more extra fields than were read: look at the bytes
            cells = data[starts[i]:ends[i]].split(delim.encode())[width:]
            wide_unread[i] = any(c.strip(_BLANK.encode()) for c in cells)
    n = len(next(iter(frame.values())))
    lines = np.arange(header_line + 1, header_line + 1 + n, dtype=np.int64)
    data_rows = int((~blank).sum())
    if not data_rows:
        raise VolbenchError(f"{path}: header found but no data rows; the file holds no prices")
    short = (counts < needed) & ~blank
    if short.sum() == data_rows:
        raise VolbenchError(_all_rows_bad(path, header_line, int(np.bincount(counts[short]).argmax()), width, delim))
    bad = short
    if extra:
        filled = np.zeros(n, dtype=bool)
        for name in extra:
            col = frame[name]
            filled |= col.notna().to_numpy() & (col.astype(str).str.strip() != "").to_numpy()
        bad = bad | (filled & ~blank)
        frame = {k: v for k, v in frame.items() if k not in extra}
    if fast is None:
        bad = bad | wide_unread
    if bad.any():
        if bad.sum() == data_rows:
            k = int(np.bincount(counts[bad]).argmax())
            raise VolbenchError(_all_rows_bad(path, header_line, k, width, delim))
        findings += _width_findings(path, lines, counts, bad, width, delim, header_line)
    keep = ~(blank | bad)
    if not keep.all():
        frame = {k: v[keep].reset_index(drop=True) for k, v in frame.items()}
    return RawTable(path, delim, frame, lines[keep], headers, sha, tuple(findings), data_rows, header_line, size,
                    src, (h + 1, max_width, positions, encoding, keep))


def _blank(data: bytes, starts, ends, counts, delim: str, candidates: np.ndarray) -> np.ndarray:
    """Lines holding only delimiters and white space (checked byte by byte on short lines only)."""
    blank = candidates & ((ends - starts) - (counts - 1) <= 8)
    for i in np.flatnonzero(blank):
        blank[i] = not data[starts[i]:ends[i]].replace(delim.encode(), b"").strip(_BLANK.encode())
    return blank


def _read_fast(data: bytes, src: bytes | Path, delim: str, h: int, start: int, n_header: int, needed: int,
               positions: dict[str, int], encoding: str):
    """One pass of the C reader when every line has at most the header's fields (the usual file).

    Rows are then the physical lines after the header, in order. Rows with an empty cell in a
    column we use or in the last column are looked at again, to tell a blank or short line from an
    empty cell; then the delimiters in the file must number exactly what those field counts add
    up to, which proves no line has more fields than the header. Returns ``None`` otherwise (the
    caller counts the fields of every line).
    """
    last = f"_last{n_header - 1}"
    cols = dict(positions)
    if n_header - 1 not in cols.values():
        cols[last] = n_header - 1
    try:
        frame = _read_c(src, delim, h + 1, n_header, cols, encoding, every=True)
    except pd.errors.ParserError:
        return None
    n = len(next(iter(frame.values())))
    counts = np.full(n, n_header, dtype=np.int64)
    blank = np.zeros(n, dtype=bool)
    used = [c for c in positions if c != "volume" and not c.startswith("_extra")]
    look = np.zeros(n, dtype=bool)
    for c in {*used, next(c for c, p in cols.items() if p == n_header - 1)}:
        v = frame[c].to_numpy()
        look |= np.isnan(v) if v.dtype.kind == "f" else frame[c].isna().to_numpy()
    sep = delim.encode()
    if look.any():
        starts, ends = _line_spans(data, start)
        if len(starts) != n:  # pragma: no cover - the lines and the C reader's rows disagree
            return None
        idx = np.flatnonzero(look)
        if len(idx) > 10_000:
            counts[idx] = _field_counts(data, starts, ends, delim)[idx]
        else:
            counts[idx] = [data.count(sep, s, e) + 1 for s, e in zip(starts[idx], ends[idx])]
        blank = _blank(data, starts, ends, counts, delim, look)
    if counts.max(initial=0) > n_header or data.count(sep, start) != int((counts - 1).sum()):
        return None
    frame.pop(last, None)
    return frame, counts, blank


def _all_rows_bad(path: Path, header_line: int, k: int, width: int, delim: str) -> str:
    if k > width and delim == ",":
        fix = ("likely cause: numbers written with an unquoted thousands separator or decimal comma "
               "(e.g. 4,960); quote such numbers, or save the file with ';' separators and pass "
               "--delimiter ';'")
    elif k > width:
        fix = f"likely cause: an unquoted {delim!r} inside values; quote them or pass --delimiter"
    else:
        fix = "the lines look truncated or use another separator; check --delimiter"
    return (f"{path}: every data row has a field count the header (line {header_line}) does not have: most "
            f"have {k} fields, the header has {width}; {fix}")


def _offset_of_line(data: bytes, n: int) -> int:
    """Byte offset where 0-based physical line ``n`` starts."""
    pos = 0
    for _ in range(n):
        nxt = data.find(b"\n", pos)
        if nxt < 0:
            return len(data)
        pos = nxt + 1
    return pos


def _read_quoted(path: Path, body: bytes, delim: str, header_line: int, width: int, needed: int,
                 positions: dict[str, int], findings: list[Finding]):
    """The slower path for files with quote marks: Python's csv module tells where records start."""
    text = body.decode("utf-8", errors="replace")
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delim)
    cols: dict[str, list[str]] = {k: [] for k in positions}
    lines: list[int] = []
    counts: list[int] = []
    bad_lines: list[int] = []
    prev = 0
    data_rows = 0
    spans: list[tuple[int, int]] = []
    try:
        for row in reader:
            first = header_line + prev + 1
            last = header_line + reader.line_num
            prev = reader.line_num
            if not any(cell.strip(_BLANK) for cell in row):
                continue
            data_rows += 1
            n = len(row)
            extra_filled = n > width and any(c.strip(_BLANK) for c in row[width:])
            if last > first:
                spans.append((first, last))
                continue
            if n < needed or extra_filled:
                bad_lines.append(first)
                counts.append(n)
                continue
            for canon, pos in positions.items():
                cols[canon].append(row[pos].strip() if pos < n else "")
            lines.append(first)
    except csv.Error as exc:
        raise VolbenchError(f"{path}: line {header_line + prev + 1}: cannot be read as CSV ({exc}); a quote "
                            "mark probably opens a cell that is never closed: remove or close it") from None
    physical = text.split("\n")
    total_lines = header_line + len(physical) - (1 if text.endswith("\n") else 0)
    for first, last in spans:
        swallowed = last - first
        if last >= total_lines and text.count('"') % 2:
            raise VolbenchError(
                f"{path}: line {first}: a quote mark opens a cell that is never closed, so the "
                f"{swallowed} line{'s' if swallowed != 1 else ''} after it would be read into that one cell; "
                "remove the stray quote mark or close it")
        named = tuple(ln for ln in range(first, last + 1) if physical[ln - header_line - 1].strip(_BLANK + delim + '"'))
        data_rows += len(named) - 1  # data rows are counted by line, as every other row
        findings.append(Finding(
            "error", "quote_span", first, None, None,
            f"line {first}: a quoted cell runs over {swallowed + 1} lines (to line {last}), swallowing "
            f"{swallowed} line{'s' if swallowed != 1 else ''}; the record is left out (check for a stray "
            "quote mark)", named))
    if not data_rows:
        raise VolbenchError(f"{path}: header found but no data rows; the file holds no prices")
    if bad_lines:
        arr_lines = np.asarray(bad_lines, dtype=np.int64)
        arr_counts = np.asarray(counts, dtype=np.int64)
        if len(bad_lines) == data_rows:
            raise VolbenchError(_all_rows_bad(path, header_line, int(np.bincount(arr_counts).argmax()), width, delim))
        findings += _width_findings(path, arr_lines, arr_counts, np.ones(len(arr_lines), bool), width, delim,
                                    header_line)
    frame = {k: pd.Series(v, dtype=str) for k, v in cols.items()}
    return frame, np.asarray(lines, dtype=np.int64), bad_lines, data_rows


# ------------------------------------------------------------------------------------ side files
def read_text(path: str | Path) -> tuple[str, bytes]:
    """A small side file (quotes, holidays, events) as text, with the price files' checks:
    missing, empty, folder, binary and UTF-16 files are handled by :func:`read_bytes` and :func:`decode`."""
    path = Path(path)
    raw, _ = decode(path, read_bytes(path))
    return raw.decode("utf-8", errors="replace").lstrip("\ufeff"), raw


def sniff_delimiter(text: str) -> str:
    """Comma, semicolon or tab: the one that splits the first non-blank line most often (comma on ties)."""
    first = next((ln for ln in text.splitlines() if ln.strip()), "")
    return max(DELIMITERS, key=lambda d: (first.count(d), d == ","))
