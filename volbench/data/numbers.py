"""Decimal marks and thousands separators: decided from every numeric cell, never guessed.

A number such as ``4,960`` reads as 4960 when ``,`` separates thousands and as 4.96 when ``,`` is
the decimal mark; nothing in the cell says which. :func:`decide_separators` looks at every
numeric cell of the file and reads it only when the file proves the convention (some value has
other than three digits after a mark, a mark repeats, both marks appear, or a plain number
parses with ``.``); when it cannot, it stops with a message naming the column, an example and the
options that settle it. The rules are in docs/METHODS.md, Import.

Cells are converted by pandas; only the cells that fail the plain conversion are cleaned
(spaces, thousands separators, decimal comma), so clean files pay nothing for this.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from volbench.data.history import Finding
from volbench.data.options import ImportOptions
from volbench.data.reader import RawTable, clip
from volbench.errors import VolbenchError

# One pass per cell: which reading a cell with a mark allows (after removing spaces).
_CLASSIFY = (
    r"^[+-]?(?:"
    r"(?P<amb_dot>[1-9]\d{0,2}\.\d{3})"                     # 4.960: decimal or thousands
    r"|(?P<amb_comma>[1-9]\d{0,2},\d{3})"                   # 4,960: decimal or thousands
    r"|(?P<dot_thousands>\d{1,3}(?:\.\d{3}){2,}(?:,\d*)?|\d{1,3}(?:\.\d{3})+,\d*)"   # 1.234.567 / 1.234,5
    r"|(?P<comma_thousands>\d{1,3}(?:,\d{3}){2,}(?:\.\d*)?|\d{1,3}(?:,\d{3})+\.\d*)"  # 1,234,567 / 1,234.5
    r"|(?P<dot_decimal>\d+\.\d*|\.\d+)"                     # 18.52, 0.960, 1234.567
    r"|(?P<comma_decimal>\d+,\d*|,\d+)"                     # 944,1
    r")(?:[eE][+-]?\d+)?$"
)
_SPACES = r"[\s\u00a0\u202f']"
_DOT_PROOF = ("dot_decimal", "comma_thousands")
_COMMA_PROOF = ("comma_decimal", "dot_thousands")


@dataclass(frozen=True)
class Separators:
    """The reading chosen for a file: decimal mark, thousands separator (or ``None``), and the
    ``info`` finding that states how it was inferred (``None`` when nothing needed saying)."""

    decimal: str
    thousands: str | None
    finding: Finding | None = None


@dataclass
class _Evidence:
    counts: dict[str, int]
    examples: dict[str, tuple[str, str]]  # kind -> (column header, cell)

    def add(self, header: str, cells: pd.Series) -> None:
        s = cells.dropna()
        if not len(s):
            return
        s = s.str.replace(_SPACES, "", regex=True)
        kinds = s.str.extract(_CLASSIFY)
        for kind in kinds.columns:
            hit = kinds[kind].notna().to_numpy()
            n = int(hit.sum())
            if n:
                self.counts[kind] = self.counts.get(kind, 0) + n
                self.examples.setdefault(kind, (header, str(s.iloc[int(np.argmax(hit))])))

    def n(self, *kinds: str) -> int:
        return sum(self.counts.get(k, 0) for k in kinds)

    def example(self, *kinds: str) -> tuple[str, str] | None:
        return next((self.examples[k] for k in kinds if k in self.examples), None)


def _float_proves_dot(values: np.ndarray) -> bool:
    """A number pandas parsed with '.' that has more than three decimals: '.' is the decimal mark."""
    v = values[np.isfinite(values) & (np.abs(values) < 1e12)]  # beyond, every double is a whole number
    if not len(v):
        return False
    scaled = v * 1000.0
    frac = np.abs(scaled - np.round(scaled))
    return bool(np.any(frac > 1e-6 * np.maximum(1.0, np.abs(scaled)) + 1e-9))


def _has_fraction(values: np.ndarray) -> bool:
    v = values[np.isfinite(values)]
    return bool(len(v)) and bool(np.any(v != np.round(v)))


def decide_separators(table: RawTable, cols: list[str], options: ImportOptions) -> tuple[Separators, dict[str, pd.Series]]:
    """Choose the decimal mark and thousands separator for ``cols`` of ``table``.

    Returns the choice and the text of every column that must be converted from text (columns
    pandas could not read as plain numbers, and columns whose '.' turns out not to be decimal).

    Raises
    ------
    VolbenchError
        The file mixes conventions (one column proves ',' decimal, another '.'), or it cannot
        settle the reading (every value with a mark has exactly three digits after it) and the
        delimiter does not either; the message names the column, an example and the options.
    """
    frame, path = table.frame, table.path
    text_cols = [c for c in cols if not (pd.api.types.is_float_dtype(frame[c]) or pd.api.types.is_integer_dtype(frame[c]))]
    float_cols = [c for c in cols if pd.api.types.is_float_dtype(frame[c])]
    texts = table.texts(text_cols) if text_cols else {}
    given_thousands = None if options.thousands in (None, "none") else options.thousands
    if options.decimal is not None and options.thousands is not None:
        if options.decimal == ",":
            texts.update(table.texts(float_cols))
        return Separators(options.decimal, given_thousands), texts
    ev = _Evidence({}, {})
    for c in text_cols:
        ev.add(table.headers[c], texts[c])
    float_proof = next((c for c in float_cols if _float_proves_dot(frame[c].to_numpy())), None)
    dot, comma = ev.n(*_DOT_PROOF) + (float_proof is not None), ev.n(*_COMMA_PROOF)
    undecided = options.decimal is None and options.thousands in (None, "none") and not dot
    if float_cols and (comma or (undecided and table.delimiter != ",")):
        # a '.' in numbers pandas parsed could be a thousands separator, or contradict a decimal
        # comma elsewhere: look at the text of those cells too
        maybe = [c for c in float_cols if _has_fraction(frame[c].to_numpy()) or frame[c].isna().any()]
        more = table.texts(maybe)
        for c in maybe:
            ev.add(table.headers[c], more[c])
        texts.update(more)
        dot, comma = ev.n(*_DOT_PROOF) + (float_proof is not None), ev.n(*_COMMA_PROOF)
    if options.decimal is not None:
        decimal = options.decimal
    elif options.thousands in (",", "."):
        decimal = "," if options.thousands == "." else "."
    elif dot and comma:
        hd, vd = ev.example(*_DOT_PROOF) or (table.headers[float_proof], "a number with 4+ decimals")
        hc, vc = ev.example(*_COMMA_PROOF)
        raise VolbenchError(
            f"{path}: numbers mix two conventions: column {hd!r} has {clip(vd)} ('.' as decimal mark) but "
            f"column {hc!r} has {clip(vc)} (',' as decimal mark); pass --decimal . or --decimal , "
            "(and --thousands) to say how to read them")
    elif comma:
        decimal = ","
    elif dot:
        decimal = "."
    elif ev.n("amb_dot", "amb_comma") and table.delimiter != ",":
        raise VolbenchError(_ambiguous(path, ev))
    else:
        decimal = "."  # no proof either way: a comma-separated file cannot hold unquoted decimal commas
    if decimal == ",":  # every '.' is a thousands separator: numbers pandas made from them are wrong
        missing = [c for c in float_cols if c not in texts]
        more = table.texts(missing)
        for c in missing:
            ev.add(table.headers[c], more[c])
        texts.update(more)
    other = "," if decimal == "." else "."
    if options.thousands is not None:
        thousands = given_thousands
    elif other == ",":
        thousands = "," if ev.n("amb_comma", "comma_thousands") else None
    else:
        thousands = "." if ev.n("amb_dot", "dot_thousands") else None
    finding = None
    if options.decimal is None and (decimal == "," or thousands is not None):
        finding = _inference_finding(ev, decimal, thousands, float_proof, table)
    return Separators(decimal, thousands, finding), texts


def _ambiguous(path, ev: _Evidence) -> str:
    kind = "amb_comma" if ev.n("amb_comma") else "amb_dot"
    header, cell = ev.example(kind)
    mark = "," if kind == "amb_comma" else "."
    other = "." if mark == "," else ","
    return (f"{path}: column {header!r}: {clip(cell)} could be {cell.replace(mark, '')} ({mark!r} separating "
            f"thousands) or {float(cell.replace(mark, '.')):g} ({mark!r} as the decimal mark): every value with "
            f"a {mark!r} in the file has exactly three digits after it, so the file does not say; pass "
            f"--thousands {mark} (or --decimal {mark} --thousands {other}) to choose")


def _inference_finding(ev: _Evidence, decimal: str, thousands: str | None, float_proof: str | None,
                       table: RawTable) -> Finding:
    proof = _COMMA_PROOF if decimal == "," else _DOT_PROOF
    shown = ev.example(*proof)
    if shown is not None:
        because = f"as cells such as {clip(shown[1])} (column {shown[0]!r}) show"
    elif float_proof is not None:
        because = f"as numbers with more than three decimals (column {table.headers[float_proof]!r}) show"
    else:
        because = ("by the file's ',' delimiter: a comma-separated file cannot hold unquoted decimal "
                   "commas")
    sep = f" and {thousands!r} as the thousands separator" if thousands else ""
    return Finding("info", "separators", None, None, None,
                   f"numbers read with {decimal!r} as the decimal mark{sep}, {because}; pass --decimal and "
                   "--thousands to read them otherwise")


def to_numbers(raw: pd.Series, text: pd.Series | None, seps: Separators) -> tuple[np.ndarray, np.ndarray]:
    """Cells to float64 (NaN where empty or not a number) and the mask of empty cells.

    ``raw`` is the column as pandas read it; ``text`` its cells as written when the column must
    be converted from text (``None``: pandas' numbers are already right).
    """
    if text is None:
        values = np.array(raw.to_numpy(dtype=float, na_value=np.nan))
        return values, np.isnan(values)
    s = text.reset_index(drop=True)
    empty = np.array(s.isna(), dtype=bool)
    if seps.decimal == ".":
        values = np.array(pd.to_numeric(s, errors="coerce").to_numpy(dtype=float, na_value=np.nan))
        failing = np.flatnonzero(np.isnan(values) & ~empty)
    else:
        values = np.full(len(s), np.nan)
        failing = np.flatnonzero(~empty)
    if len(failing):
        cells = s.iloc[failing].str.replace(_SPACES, "", regex=True)
        empty[failing] = (cells == "").to_numpy()
        ok = np.ones(len(cells), dtype=bool)
        t, d = seps.thousands, seps.decimal
        if t is not None:
            has_t = cells.str.contains(t, regex=False).to_numpy()
            grouped = cells.str.fullmatch(
                rf"[+-]?\d{{1,3}}(?:{_re(t)}\d{{3}})+(?:{_re(d)}\d*)?(?:[eE][+-]?\d+)?").to_numpy(dtype=bool, na_value=False)
            ok &= ~has_t | grouped
            cells = cells.str.replace(t, "", regex=False)
        if d == ",":
            ok &= ~cells.str.contains(".", regex=False).to_numpy()
            cells = cells.str.replace(",", ".", regex=False)
        else:
            ok &= ~cells.str.contains(",", regex=False).to_numpy()
        fixed = pd.to_numeric(cells, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
        values[failing] = np.where(ok, fixed, np.nan)
    return values, empty


def _re(mark: str) -> str:
    return "\\" + mark if mark == "." else mark


def parse_numbers(texts: pd.Series, decimal_comma: bool) -> pd.Series:
    """Text cells of a small side file (quotes) to floats: NaN where empty or not a number.

    Spaces and the thousands mark of the chosen convention are removed: with ``decimal_comma`` the
    dot is the thousands mark, otherwise the comma is.
    """
    s = texts.astype(str).str.replace(_SPACES, "", regex=True)
    if decimal_comma:
        s = s.str.replace(".", "", regex=False).str.replace(",", ".", regex=False)
    else:
        s = s.str.replace(",", "", regex=False)
    return pd.to_numeric(s, errors="coerce")
