"""A worksheet that prices: Black-Scholes-Merton as live spreadsheet formulas of input cells.

:func:`add_pricing_sheet` adds a sheet to an openpyxl workbook where spot, strike, rate, dividend
yield and years are input cells, each candidate vol is an input cell of its row, and d1, d2, the
call and put price, their deltas and the vega are formulas of those cells, so editing any input
reprices. openpyxl stores formulas without results; :func:`workbook_bytes` saves the workbook and
writes volbench's own values into the formula cells as cached results, so viewers that do not
recalculate still show numbers (spreadsheet programs recalculate on open: the workbook asks for a
full calculation on load).

Only functions every common spreadsheet program has are used: LN, EXP, SQRT, PI and the legacy
NORMSDIST (the standard normal distribution function), never a function that newer file formats
store with an ``_xlfn.`` prefix (such as NORM.S.DIST), which older programs show as #NAME?.
"""

from __future__ import annotations

import io
import math
import re
import zipfile
from collections.abc import Sequence
from dataclasses import dataclass
from xml.etree import ElementTree

from volbench.errors import VolbenchError
from volbench.pricing.bsm import _d1_d2, bsm_greeks, check_pricing_vol, check_rate
from volbench.types import check_positive

SHEET_TITLE = "Live pricing"
INPUT_ROWS = {"spot": 4, "strike": 5, "rate": 6, "dividend_yield": 7, "years": 8}
"""Row of each input cell (value in column B)."""
INPUT_LABELS = {"spot": "spot", "strike": "strike", "rate": "rate (continuous, decimal)",
                "dividend_yield": "dividend yield (continuous, decimal)",
                "years": "years to expiry (calendar days / 365)"}
HEADER_ROW = 10
COLUMNS = ("vol source", "vol", "d1", "d2", "call price", "put price", "call delta", "put delta",
           "vega (per 1.00 vol)", "vega (per vol point)")
CAUTION = ("Estimates are statistical and carry model risk; they are not advice. Your firm's model-validation "
           "policy governs their use.")

_S, _K, _R, _Q, _T = (f"$B${INPUT_ROWS[k]}" for k in ("spot", "strike", "rate", "dividend_yield", "years"))


def row_formulas(row: int) -> dict[str, str]:
    """The formulas of one candidate row (vol in column B of ``row``), by column letter.

    Notes
    -----
    d1 = [ln(S/K) + (r - q + sigma^2/2) T] / (sigma sqrt T), d2 = d1 - sigma sqrt T;
    c = S e^{-qT} N(d1) - K e^{-rT} N(d2); p = K e^{-rT} N(-d2) - S e^{-qT} N(-d1);
    delta_c = e^{-qT} N(d1), delta_p = -e^{-qT} N(-d1); vega = S e^{-qT} n(d1) sqrt T with
    n(x) = e^{-x^2/2} / sqrt(2 pi) (Black & Scholes 1973; Merton 1973; e.g. Hull, *Options, Futures
    and Other Derivatives*). The density is written exp(-(d1^2)/2): in spreadsheets unary minus binds
    tighter than ^, so -d1^2 would be +d1^2.
    """
    v, d1, d2, vega = f"B{row}", f"C{row}", f"D{row}", f"I{row}"
    return {
        "C": f"=(LN({_S}/{_K})+({_R}-{_Q}+{v}^2/2)*{_T})/({v}*SQRT({_T}))",
        "D": f"={d1}-{v}*SQRT({_T})",
        "E": f"={_S}*EXP(-{_Q}*{_T})*NORMSDIST({d1})-{_K}*EXP(-{_R}*{_T})*NORMSDIST({d2})",
        "F": f"={_K}*EXP(-{_R}*{_T})*NORMSDIST(-{d2})-{_S}*EXP(-{_Q}*{_T})*NORMSDIST(-{d1})",
        "G": f"=EXP(-{_Q}*{_T})*NORMSDIST({d1})",
        "H": f"=-EXP(-{_Q}*{_T})*NORMSDIST(-{d1})",
        "I": f"={_S}*EXP(-{_Q}*{_T})*EXP(-({d1}^2)/2)/SQRT(2*PI())*SQRT({_T})",
        "J": f"={vega}/100",
    }


@dataclass(frozen=True)
class PricingSheet:
    """What :func:`add_pricing_sheet` wrote.

    Attributes
    ----------
    title
        Sheet title.
    inputs
        Input name -> cell (``spot``, ``strike``, ``rate``, ``dividend_yield``, ``years``).
    rows
        Candidate label -> its row; the vol is in column B of that row.
    cached
        Formula cell -> volbench's value for it (written as the cached result by :func:`workbook_bytes`).
    """

    title: str
    inputs: dict[str, str]
    rows: dict[str, int]
    cached: dict[str, float]


def _values(spot, strike, rate, q, years, vol) -> dict[str, float]:
    call, put = (bsm_greeks(spot, strike, years, rate, vol, q, k) for k in ("call", "put"))
    d1, d2 = _d1_d2(spot, strike, years, rate, vol, q)
    return {"C": float(d1), "D": float(d2), "E": call.price, "F": put.price, "G": call.delta, "H": put.delta,
            "I": call.vega, "J": call.vega_point}


def add_pricing_sheet(wb, *, spot, strike, rate, dividend_yield, years,
                      candidates: Sequence[tuple[str, float]], title: str = SHEET_TITLE,
                      kind_note: str | None = None) -> PricingSheet:
    """Add a live Black-Scholes-Merton sheet to an openpyxl ``Workbook``.

    Parameters
    ----------
    wb
        ``openpyxl.Workbook`` to add to (a sheet named ``title`` must not exist yet).
    spot, strike, rate, dividend_yield, years
        The option; rates continuous decimals, years = calendar days / 365.
    candidates
        ``(label, vol)`` pairs, one row each in the given order (e.g. the pricing vol first, then
        every candidate of a comparison). Labels must be unique.
    title
        Sheet title (at most 31 characters).
    kind_note
        Optional sentence shown under the title (e.g. which option the comparison is about).

    Returns
    -------
    PricingSheet
        Where things are and the cached values; pass it to :func:`workbook_bytes`.

    Raises
    ------
    VolbenchError
        Bad option inputs or vols, no candidate, repeated labels, a title already used.

    Notes
    -----
    Formulas: :func:`row_formulas`. Numbers are written as the exact doubles volbench uses.
    """
    from openpyxl.styles import Font, PatternFill

    s = check_positive(spot, "spot must be a positive price")
    k = check_positive(strike, "strike must be a positive price")
    t = check_positive(years, "years must be a positive number")
    r = check_rate(rate, "rate")
    q = check_rate(dividend_yield, "dividend yield")
    cands = [(str(label), check_pricing_vol(v, f"vol of {label!r}")) for label, v in candidates]
    if not cands:
        raise VolbenchError("the pricing sheet needs at least one vol (the pricing vol)")
    labels = [c[0] for c in cands]
    if len(set(labels)) != len(labels):
        raise VolbenchError(f"pricing-sheet labels must be unique, got {labels}")
    if len(title) > 31 or title in wb.sheetnames:
        raise VolbenchError(f"sheet title {title!r} is too long (31 characters at most) or already used")
    ws = wb.create_sheet(title=title)
    bold = Font(bold=True)
    edit = PatternFill("solid", fgColor="FFF2CC")
    ws["A1"] = "Black-Scholes-Merton with live formulas: edit a shaded cell and the prices follow"
    ws["A1"].font = bold
    if kind_note:
        ws["A2"] = kind_note
    inputs = {"spot": s, "strike": k, "rate": r, "dividend_yield": q, "years": t}
    cells = {}
    for name, row in INPUT_ROWS.items():
        ws.cell(row=row, column=1, value=INPUT_LABELS[name])
        c = ws.cell(row=row, column=2, value=inputs[name])
        c.fill = edit
        cells[name] = f"B{row}"
    for j, head in enumerate(COLUMNS, start=1):
        ws.cell(row=HEADER_ROW, column=j, value=head).font = bold
    rows, cached = {}, {}
    for i, (label, vol) in enumerate(cands):
        row = HEADER_ROW + 1 + i
        ws.cell(row=row, column=1, value=label)
        c = ws.cell(row=row, column=2, value=vol)
        c.fill = edit
        c.number_format = "0.00%"
        values = _values(s, k, r, q, t, vol)
        for col, formula in row_formulas(row).items():
            ws[f"{col}{row}"] = formula
            cached[f"{col}{row}"] = values[col]
        rows[label] = row
    note = HEADER_ROW + len(cands) + 2
    ws.cell(row=note, column=1, value="N() is NORMSDIST, the standard normal distribution function; "
                                      "vega = S e^(-qT) n(d1) sqrt(T); deltas per 1.00 of spot.")
    ws.cell(row=note + 1, column=1, value=CAUTION)
    for col, width in zip("ABCDEFGHIJ", (38, 10, 12, 12, 12, 12, 11, 11, 18, 18)):
        ws.column_dimensions[col].width = width
    return PricingSheet(title=title, inputs=cells, rows=rows, cached=cached)


def comparison_sheets(wb, comparison) -> list[PricingSheet]:
    """One live pricing sheet per series of an export's comparison table.

    Parameters
    ----------
    wb
        ``openpyxl.Workbook`` to add to.
    comparison
        The export's ``comparison`` table (:func:`volbench.export.sections.comparison_section`):
        per series, the option (``spot``, ``strike``, ``rate``, ``dividend_yield``, ``years``,
        ``kind``) and one row per vol (``label``, ``vol``), the pricing vol first.

    Returns
    -------
    list of PricingSheet
        Titled :data:`SHEET_TITLE` for one series, ``"Live pricing 1"``, ``"Live pricing 2"``... for
        several (the series is named under the title). A vol outside (0, 5) (a failed fit) gets no
        row; a repeated label gets its key appended.
    """
    import pandas as pd

    sheets: list[PricingSheet] = []
    if comparison is None or not len(comparison):
        return sheets
    names = list(pd.unique(comparison["series"]))
    for i, name in enumerate(names, start=1):
        rows = comparison[comparison["series"] == name]
        first = rows.iloc[0]
        cands, seen = [], set()
        for r in rows.itertuples(index=False):
            vol = float(r.vol)
            if not (math.isfinite(vol) and 0 < vol < 5):
                continue
            label = str(r.label) if r.label not in seen else f"{r.label} ({r.key})"
            seen.add(label)
            cands.append((label, vol))
        life = ""
        if "expiry" in rows.columns and isinstance(first.get("expiry"), str):
            life = (f", expiring {first['expiry']} ({int(first['calendar_days'])} calendar days, "
                    f"{int(first['trading_days'])} trading days)")
        note = (f"{name}: {first['kind']} struck at {float(first['strike']):g}, spot {float(first['spot']):g}, "
                f"as of {first['as_of']}{life}; years = {float(first['years']):.6g}. Candidate vols as in the "
                "comparison sheet.")
        title = SHEET_TITLE if len(names) == 1 else f"{SHEET_TITLE} {i}"
        sheets.append(add_pricing_sheet(wb, spot=float(first["spot"]), strike=float(first["strike"]),
                                        rate=float(first["rate"]), dividend_yield=float(first["dividend_yield"]),
                                        years=float(first["years"]), candidates=cands, title=title,
                                        kind_note=note))
    return sheets


# ---------------------------------------------------------------------------- cached results
_NS = {"m": "http://schemas.openxmlformats.org/spreadsheetml/2006/main",
       "r": "http://schemas.openxmlformats.org/officeDocument/2006/relationships",
       "rel": "http://schemas.openxmlformats.org/package/2006/relationships"}


def _sheet_part(z: zipfile.ZipFile, title: str) -> str:
    book = ElementTree.fromstring(z.read("xl/workbook.xml"))
    rid = None
    for sh in book.iterfind("m:sheets/m:sheet", _NS):
        if sh.get("name") == title:
            rid = sh.get(f"{{{_NS['r']}}}id")
    rels = ElementTree.fromstring(z.read("xl/_rels/workbook.xml.rels"))
    for rel in rels.iterfind("rel:Relationship", _NS):
        if rid is not None and rel.get("Id") == rid:
            target = rel.get("Target")
            return target.lstrip("/") if target.startswith("/") else f"xl/{target}"
    raise VolbenchError(f"sheet {title!r} is not in the workbook")


def _with_values(xml: str, cached: dict[str, float]) -> str:
    def fill(match: re.Match) -> str:
        ref = match.group(2)
        if ref not in cached:
            return match.group(0)
        v = cached[ref]
        if not math.isfinite(v):
            raise VolbenchError(f"cell {ref}: the cached value is not a finite number")
        return f"{match.group(1)}<v>{v!r}</v>"

    return re.sub(r'(<c r="([A-Z]+[0-9]+)"[^>]*><f>[^<]*</f>)<v\s*/>', fill, xml)


def workbook_bytes(wb, sheets: Sequence[PricingSheet] = ()) -> bytes:
    """Save ``wb`` as XLSX bytes with the cached results of each pricing sheet's formula cells.

    openpyxl writes a formula cell with an empty result; this fills in volbench's value (the
    shortest text that reads back as the same double) for every cell in ``sheet.cached``. Other
    parts of the file are copied unchanged. The workbook already asks spreadsheet programs for a
    full calculation on load, so they show their own results.
    """
    buf = io.BytesIO()
    wb.save(buf)
    if not sheets:
        return buf.getvalue()
    src = zipfile.ZipFile(io.BytesIO(buf.getvalue()))
    parts = {_sheet_part(src, sh.title): sh.cached for sh in sheets}
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            data = src.read(info.filename)
            if info.filename in parts:
                data = _with_values(data.decode("utf-8"), parts[info.filename]).encode("utf-8")
            dst.writestr(info, data)
    return out.getvalue()
