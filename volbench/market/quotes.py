"""Read an option-quotes CSV: expiry, strike, type and a premium (mid, or bid and ask).

Headers are matched case-insensitively with common aliases, as in the price import; the
delimiter (comma, semicolon, tab) is sniffed and decimal commas are understood in semicolon and
tab files. Every row that cannot be used is a :class:`~volbench.data.history.Finding` with its file
line; nothing is dropped silently.
"""

from __future__ import annotations

import hashlib
import io
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from volbench.data.history import Finding
from volbench.data.numbers import parse_numbers
from volbench.data.reader import normalise_header, read_text, sniff_delimiter
from volbench.errors import VolbenchError

QUOTE_ALIASES: dict[str, tuple[str, ...]] = {
    "expiry": ("expiry", "expiration", "expiration date", "expiry date", "exp", "exp date", "maturity",
               "maturity date", "expires", "expire", "expiry day"),
    "strike": ("strike", "strike price", "k", "exercise price", "strk"),
    "type": ("type", "option type", "call put", "put call", "cp", "pc", "c p", "p c", "right", "kind",
             "call or put", "put or call", "cp flag", "flag"),
    "bid": ("bid", "bid price", "bid premium"),
    "ask": ("ask", "offer", "ask price", "offer price", "ask premium"),
    "mid": ("mid", "mid price", "premium", "price", "mark", "option price", "value", "settle", "settlement",
            "last", "last price"),
}
_LOOKUP = {alias: canon for canon, names in QUOTE_ALIASES.items() for alias in names}
_TYPES = {"call": "call", "c": "call", "calls": "call", "put": "put", "p": "put", "puts": "put"}
QUOTE_COLUMNS = ("line", "expiry", "strike", "type", "bid", "ask", "mid", "premium", "premium_from")


@dataclass(frozen=True, eq=False)
class OptionQuotes:
    """The usable quotes of one file and the findings on every other row.

    Attributes
    ----------
    table
        One row per usable quote, in file order, columns :data:`QUOTE_COLUMNS`: file ``line``,
        ``expiry`` (``datetime64[ns]`` date), ``strike``, ``type`` ("call"/"put"), ``bid``, ``ask``,
        ``mid`` (NaN where the file has none), ``premium`` (the mid when given, else (bid + ask) / 2)
        and ``premium_from`` ("mid" or "bid/ask").
    findings
        ``error``: row left out (the message says why and what to do); ``warning``: kept but
        suspicious (mid outside bid-ask, a zero bid), or left out as a repeat of a later line.
    source, sha256
        The file read and the SHA-256 of its bytes.
    headers
        Canonical column -> header as written in the file.
    rows
        Data rows in the file (usable or not).
    """

    table: pd.DataFrame
    findings: tuple[Finding, ...]
    source: Path | None = None
    sha256: str | None = None
    headers: dict | None = None
    rows: int = 0

    @property
    def n(self) -> int:
        return len(self.table)

    def provenance(self) -> dict:
        return {"source": str(self.source) if self.source else None,
                "source_file": self.source.name if self.source else None, "sha256": self.sha256,
                "rows": self.rows, "usable": self.n}


def _match(path: Path, header: list[str]) -> dict[str, int]:
    found: dict[str, int] = {}
    for i, h in enumerate(header):
        canon = _LOOKUP.get(normalise_header(str(h)))
        if canon and canon not in found:
            found[canon] = i
    shown = ", ".join(repr(h) for h in header) or "(none)"
    for need, hint in (("expiry", "Expiry (or Expiration/Maturity)"), ("strike", "Strike"),
                       ("type", "Type (call/put, or C/P)")):
        if need not in found:
            raise VolbenchError(f"{path}: line 1: no {need} column among headers {shown}; name one column {hint}")
    if "mid" not in found and not ("bid" in found and "ask" in found):
        raise VolbenchError(f"{path}: line 1: no premium column among headers {shown}; give a Mid (or "
                            "Premium/Price) column, or both Bid and Ask")
    return found


def _decimal_comma(delimiter: str, cells: list[str]) -> bool:
    """True when numbers use a comma as the decimal mark (only possible in ';' or tab files)."""
    if delimiter == ",":
        return False
    comma = sum(1 for v in cells if "," in v and v.rfind(",") > v.rfind("."))
    dot = sum(1 for v in cells if "." in v and v.rfind(".") > v.rfind(","))
    return comma > 0 and comma >= dot


def read_quotes(path: str | Path, *, date_format: str | None = None, delimiter: str | None = None) -> OptionQuotes:
    """Read an option-quotes CSV into :class:`OptionQuotes`.

    Parameters
    ----------
    path
        CSV with a header row naming at least expiry, strike and type columns and a premium: a mid
        column (aliases Premium, Price, Mark, ...), or bid and ask columns (or all three).
        Other columns are ignored.
    date_format
        ``strftime`` format of the expiry column when it is not ISO (YYYY-MM-DD).
    delimiter
        Force the delimiter; sniffed among comma, semicolon and tab when ``None``.

    Returns
    -------
    OptionQuotes

    Raises
    ------
    VolbenchError
        Missing, empty or binary file; a required column missing (the headers found are listed);
        a row with more cells than the header; no usable row (the first findings are quoted).

    Notes
    -----
    Rules, each an ``error`` finding with the file line when broken (row left out): expiry readable,
    strike a positive number, type call/put (C/P), a premium: mid > 0, or bid >= 0 and ask > 0 with
    bid <= ask. ``warning`` findings: a mid outside [bid, ask] (kept, the mid is used), a zero bid
    (kept), and a repeated (expiry, strike, type), where the later line is kept, as the price import
    does with repeated dates (common practice, no source).
    """
    path = Path(path)
    text, raw = read_text(path)
    delim = delimiter or sniff_delimiter(text)
    all_lines = text.splitlines()
    skip = next(i for i, ln in enumerate(all_lines) if ln.strip())
    width = len(all_lines[skip].split(delim))

    def too_long(cells: list[str]) -> list[str]:
        """Trailing empty cells are dropped; a row with more values than the header is an error."""
        if all(not c.strip() for c in cells[width:]):
            return cells[:width]
        joined = delim.join(cells)
        line = next((i + 1 for i, ln in enumerate(all_lines) if ln.strip() == joined.strip()), None)
        where = f"line {line}" if line else f"row {joined!r}"
        raise VolbenchError(f"{path}: {where} has {len(cells)} cells but the header has {width}; "
                            "remove the extra cells or name their column")

    try:
        frame = pd.read_csv(io.StringIO(text), sep=delim, header=None, dtype=str, keep_default_na=False,
                            skip_blank_lines=False, skiprows=skip, engine="python", on_bad_lines=too_long,
                            names=range(width))
    except pd.errors.ParserError as exc:
        raise VolbenchError(f"{path}: cannot be read as {'tab' if delim == chr(9) else repr(delim)}-separated "
                            f"text ({exc}); check the quoting and the delimiter") from None
    frame = frame.fillna("")
    header = [str(h).strip() for h in frame.iloc[0]]
    cols = _match(path, header)
    body = frame.iloc[1:]
    file_lines = np.arange(len(body)) + skip + 2  # row j of the body sits on line skip + 2 + j
    cells = {c: body.iloc[:, i].astype(str).str.strip().to_numpy(dtype=object) for c, i in cols.items()}
    blank = (body.apply(lambda col: col.astype(str).str.strip()) == "").all(axis=1).to_numpy()
    keep_rows = ~blank
    file_lines = file_lines[keep_rows]
    cells = {c: v[keep_rows] for c, v in cells.items()}
    n = len(file_lines)
    if n == 0:
        raise VolbenchError(f"{path}: header found but no data rows; the file holds no quotes")
    headers = {c: header[i] for c, i in cols.items()}
    findings: list[Finding] = []
    bad = np.zeros(n, dtype=bool)

    def report(mask: np.ndarray, kind: str, column: str, message, severity: str = "error") -> None:
        for i in np.flatnonzero(mask & ~bad if severity == "error" else mask):
            findings.append(Finding(severity, kind, int(file_lines[i]), None, column,
                                    f"line {file_lines[i]}, column {headers.get(column, column)!r}: {message(i)}",
                                    (int(file_lines[i]),)))

    # expiry
    exp_text = pd.Series(cells["expiry"], dtype=object)
    expiry = pd.to_datetime(exp_text, format=date_format or "ISO8601", errors="coerce")
    if getattr(expiry.dt, "tz", None) is not None:
        expiry = expiry.dt.tz_localize(None)
    expiry = expiry.dt.normalize()
    empty = (exp_text == "").to_numpy()
    report(empty, "missing_value", "expiry", lambda i: "expiry is empty; row left out (fill in the date)")
    bad |= empty
    unreadable = expiry.isna().to_numpy() & ~empty
    hint = (f"it does not match the date format {date_format!r}" if date_format
            else "write dates as YYYY-MM-DD or pass the format, e.g. --date-format %d/%m/%Y")
    report(unreadable, "bad_date", "expiry", lambda i: f"expiry {cells['expiry'][i]!r} cannot be read; row left "
                                                       f"out ({hint})")
    bad |= unreadable

    # numbers
    numeric_cells = [v for c in ("strike", "bid", "ask", "mid") if c in cells for v in cells[c][:50] if v]
    dec = _decimal_comma(delim, numeric_cells)
    nums: dict[str, np.ndarray] = {}
    for c in ("strike", "bid", "ask", "mid"):
        if c not in cells:
            nums[c] = np.full(n, np.nan)
            continue
        txt = pd.Series(cells[c], dtype=object)
        v = parse_numbers(txt, dec).to_numpy(dtype=float)
        is_empty = (txt == "").to_numpy()
        non_numeric = ~np.isfinite(v) & ~is_empty
        report(non_numeric, "non_numeric", c,
               lambda i, c=c: f"{cells[c][i]!r} is not a number; row left out (correct the cell)")
        bad |= non_numeric
        if c == "strike":
            report(is_empty, "missing_value", c, lambda i: "strike is empty; row left out (fill it in)")
            bad |= is_empty
        nums[c] = np.where(is_empty | non_numeric, np.nan, v)
    strike = nums["strike"]
    nonpos = np.isfinite(strike) & ~(strike > 0)
    report(nonpos, "non_positive", "strike", lambda i: f"strike {strike[i]:g} is not positive; row left out")
    bad |= nonpos

    # type
    kinds = np.array([_TYPES.get(str(t).strip().lower(), "") for t in cells["type"]], dtype=object)
    bad_type = kinds == ""
    report(bad_type, "bad_type", "type",
           lambda i: (f"option type {cells['type'][i]!r} is neither call nor put (C/P); row left out"
                      if cells["type"][i] else "option type is empty; row left out (write call or put)"))
    bad |= bad_type

    # premium
    bid, ask, mid = nums["bid"], nums["ask"], nums["mid"]
    has_mid = np.isfinite(mid)
    has_pair = np.isfinite(bid) & np.isfinite(ask)
    neg_mid = has_mid & ~(mid > 0)
    report(neg_mid, "non_positive", "mid", lambda i: f"premium {mid[i]:g} is not positive; row left out")
    bad |= neg_mid
    neg_bid = np.isfinite(bid) & (bid < 0)
    report(neg_bid, "non_positive", "bid", lambda i: f"bid {bid[i]:g} is negative; row left out")
    bad |= neg_bid
    neg_ask = np.isfinite(ask) & ~(ask > 0)
    report(neg_ask, "non_positive", "ask", lambda i: f"ask {ask[i]:g} is not positive; row left out")
    bad |= neg_ask
    crossed = has_pair & (bid > ask)
    report(crossed, "crossed_quote", "bid", lambda i: f"bid {bid[i]:g} is above ask {ask[i]:g}; row left out "
                                                      "(a crossed quote has no mid)")
    bad |= crossed
    missing = ~has_mid & ~has_pair
    column = "mid" if "mid" in cells else "bid"
    report(missing, "missing_value", column,
           lambda i: ("no premium: the mid is empty and bid and ask are not both given; row left out"
                      if "mid" in cells else "no premium: bid and ask are not both given; row left out"))
    bad |= missing
    ok = ~bad
    outside = ok & has_mid & has_pair & ((mid < bid) | (mid > ask))
    report(outside, "mid_outside_spread", "mid",
           lambda i: f"mid {mid[i]:g} lies outside bid {bid[i]:g} / ask {ask[i]:g}; kept, the mid is used",
           "warning")
    zero_bid = ok & has_pair & (bid == 0)
    report(zero_bid, "zero_bid", "bid",
           lambda i: "bid is 0, so the premium (the mid of bid and ask) is half the ask; kept", "warning")
    premium = np.where(has_mid, mid, 0.5 * (bid + ask))
    table = pd.DataFrame({
        "line": file_lines, "expiry": expiry.to_numpy(dtype="datetime64[ns]"), "strike": strike,
        "type": kinds, "bid": bid, "ask": ask, "mid": mid, "premium": premium,
        "premium_from": np.where(has_mid, "mid", "bid/ask"),
    })[ok].reset_index(drop=True)
    # repeated (expiry, strike, type): the later line wins
    dup = table.duplicated(["expiry", "strike", "type"], keep="last").to_numpy()
    for i in np.flatnonzero(dup):
        row = table.iloc[i]
        later = table[(table.expiry == row.expiry) & (table.strike == row.strike) & (table.type == row.type)]
        kept = int(later.line.iloc[-1])
        findings.append(Finding("warning", "duplicate_quote", int(row.line), None, "strike",
                                f"line {row.line}: {row.type} {row.strike:g} expiring "
                                f"{pd.Timestamp(row.expiry).date()} repeats on line {kept}; line {row.line} "
                                f"left out, line {kept} kept (the later one in the file)", (int(row.line),)))
    table = table[~dup].reset_index(drop=True)
    findings.sort(key=lambda f: (f.line or 0, f.kind))
    if table.empty:
        first = "; ".join(f.message for f in findings[:3])
        raise VolbenchError(f"{path}: no usable quote in {n} rows ({first}{'; ...' if len(findings) > 3 else ''})")
    return OptionQuotes(table=table, findings=tuple(findings), source=path, sha256=hashlib.sha256(raw).hexdigest(),
                        headers=headers, rows=n)
