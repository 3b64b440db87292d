"""Lay an :class:`~volbench.export.bundle.ExportBundle` out as CSV, XLSX or JSON, atomically.

CSV holds one table (the estimates table by default, in the schema of
:mod:`volbench.export.schema`); XLSX holds every table, one sheet each, plus a sheet per section
that is not available saying why; JSON holds every table as records plus the provenance.
"""

from __future__ import annotations

import csv
import datetime
import io
import json
import os
import re
from collections.abc import Callable
from pathlib import Path
from typing import BinaryIO

import pandas as pd

from volbench import __version__
from volbench.errors import VolbenchError
from volbench.export import layout
from volbench.export.atomic import atomic_write, check_destination
from volbench.export.bundle import TABLE_ORDER, ExportBundle
from volbench.export.pricing_sheet import comparison_sheets, workbook_bytes
from volbench.export.safety import escape_controls, neutralise
from volbench.export.schema import SCHEMA_VERSION
from volbench.export.tsv import cell_value

FORMATS: tuple[str, ...] = (".csv", ".json", ".xlsx")
"""File suffixes :func:`write_export` understands."""

PERCENT_FORMAT = "0.00%"
DATE_FORMAT = "yyyy-mm-dd"
_ISO_DATE = re.compile(r"\d{4}-\d{2}-\d{2}")
_MAX_WIDTH = 60


def export_format(path: str | os.PathLike) -> str:
    """The export format for ``path`` from its suffix; a clear error listing the allowed ones."""
    suffix = Path(path).suffix.lower()
    if suffix not in FORMATS:
        got = f"suffix {suffix!r}" if suffix else "no suffix"
        raise VolbenchError(f"cannot tell the export format of {path}: {got}; "
                            f"use one of: {', '.join(FORMATS)}")
    return suffix


def write_export(path: str | os.PathLike, bundle: ExportBundle, *, overwrite: bool = False) -> Path:
    """Write ``bundle`` to ``path`` in the format given by its suffix (.csv, .xlsx, .json).

    Raises
    ------
    VolbenchError
        Unknown suffix (the allowed ones are listed), the file exists and ``overwrite`` is false
        (the message names the path and says to pass --force), or the write failed; an existing
        file is left unchanged whenever an error is raised.
    """
    writer = {".csv": write_csv, ".json": write_json, ".xlsx": write_xlsx}[export_format(path)]
    return writer(path, bundle, overwrite=overwrite)


# ---------------------------------------------------------------------------------- CSV
def csv_text(df: pd.DataFrame) -> str:
    """CSV text of ``df`` (no index), numbers in the shortest form that reads back exactly.

    Missing values are empty cells; booleans ``True``/``False``; the header is the column names.
    Text that a spreadsheet would run as a formula gets a leading apostrophe and control
    characters are escaped (:mod:`volbench.export.safety`).
    """
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow([neutralise(str(c)) for c in df.columns])
    w.writerows([_csv_cell(v) for v in row] for row in df.itertuples(index=False, name=None))
    return buf.getvalue()


def _csv_cell(v) -> str:
    v = cell_value(v)
    if v is None:
        return ""
    if isinstance(v, float):
        return repr(v)  # shortest text that reads back as the same double
    if isinstance(v, str):
        return neutralise(v)
    return str(v)


def write_csv(path: str | os.PathLike, bundle: ExportBundle, *, overwrite: bool = False,
              table: str = "estimates") -> Path:
    """Write one table of ``bundle`` (default the estimates table) as UTF-8 CSV.

    With the estimates table, a decision record in the bundle goes to a second file beside it,
    ``<name>.decision.csv`` (:func:`decision_csv_path`); both destinations are checked before
    either is written.
    """
    text = csv_text(bundle.table(table))
    if table == "estimates" and "decision" in bundle.tables:
        second = decision_csv_path(path)
        check_destination(path, overwrite=overwrite)
        check_destination(second, overwrite=overwrite)
        written = atomic_write(path, text, overwrite=overwrite)
        atomic_write(second, csv_text(bundle.table("decision")), overwrite=overwrite)
        return written
    return atomic_write(path, text, overwrite=overwrite)


def decision_csv_path(path: str | os.PathLike) -> Path:
    """Where a .csv export puts its decision record: ``pricing.csv`` -> ``pricing.decision.csv``."""
    p = Path(path)
    return p.with_name(f"{p.stem}.decision{p.suffix}")


# ---------------------------------------------------------------------------------- JSON
def json_document(bundle: ExportBundle) -> dict:
    """The JSON export as a dict: ``schema_version``, ``volbench_version``, ``created``,
    ``provenance``, ``sections`` and ``tables`` (name -> list of records; missing values null)."""
    return {
        "schema_version": SCHEMA_VERSION,
        "volbench_version": __version__,
        "created": bundle.created,
        "provenance": _json_safe(dict(bundle.provenance)),
        "sections": {k: {"status": s.status, "reason": s.reason} for k, s in bundle.sections.items()},
        "tables": {name: _records(df) for name, df in bundle.tables.items()},
    }


def _records(df: pd.DataFrame) -> list[dict]:
    cols = [str(c) for c in df.columns]
    return [dict(zip(cols, (cell_value(v) for v in row))) for row in df.itertuples(index=False, name=None)]


def _json_safe(obj):
    if isinstance(obj, dict):
        return {str(k): _json_safe(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_json_safe(v) for v in obj]
    return cell_value(obj)


def write_json(path: str | os.PathLike, bundle: ExportBundle, *, overwrite: bool = False) -> Path:
    """Write ``bundle`` as one UTF-8 JSON document (see :func:`json_document`)."""
    text = json.dumps(json_document(bundle), indent=2, allow_nan=False, ensure_ascii=False) + "\n"
    return atomic_write(path, text, overwrite=overwrite)


# ---------------------------------------------------------------------------------- XLSX
def write_xlsx(path: str | os.PathLike, bundle: ExportBundle, *, overwrite: bool = False) -> Path:
    """Write ``bundle`` as an Excel workbook, one sheet per table.

    Sheets follow :data:`~volbench.export.bundle.TABLE_ORDER`; each section of
    :data:`~volbench.export.bundle.SECTIONS` always has its sheet, holding a one-line note when
    the section is not in the export. Every sheet is a table with a bold, frozen header row and a
    filter; numbers are stored as numbers (the exact double: shortest round-trip text), missing
    values as empty cells, and vol columns carry a percentage number format (the stored value
    stays the decimal).
    """
    return atomic_write(path, _xlsx_payload(bundle), overwrite=overwrite)


def _xlsx_payload(bundle: ExportBundle) -> Callable[[BinaryIO], None]:
    from openpyxl import Workbook
    from openpyxl.styles import Font

    def write(fh: BinaryIO) -> None:
        wb = Workbook()
        wb.remove(wb.active)
        bold = Font(bold=True)
        for name in _sheet_order(bundle):
            ws = wb.create_sheet(title=name[:31])
            if name in bundle.tables:
                df = bundle.tables[name]
            else:
                df = _missing_sheet(bundle, name)
            _fill_sheet(ws, df, bundle.percent_columns.get(name, ()), bold)
        wb.properties.creator = f"volbench {__version__}"
        wb.properties.title = "volbench export"
        # the option of the comparison as live formulas (one sheet per series), cached values filled in
        sheets = comparison_sheets(wb, bundle.tables.get("comparison"))
        fh.write(workbook_bytes(wb, sheets))  # saved in memory: openpyxl seeks while zipping

    return write


def _sheet_order(bundle: ExportBundle) -> list[str]:
    """Every table of :data:`TABLE_ORDER` (one not in the export keeps its sheet, holding a note),
    then any other table of the bundle."""
    return list(TABLE_ORDER) + [n for n in bundle.tables if n not in TABLE_ORDER]


def _missing_sheet(bundle: ExportBundle, name: str) -> pd.DataFrame:
    """One row ``section, status, reason`` for a table that is not in the export."""
    section = layout.SECTION_OF.get(name, name)
    status = bundle.sections.get(section)
    if status is None:
        what, why = "not available", "not produced by this export"
    elif status.status in ("included", "partial"):
        what, why = "not available", f"the {section} section produced no {name} rows"
    else:
        what, why = status.status, status.reason
    return pd.DataFrame({"section": [section], "status": [what], "reason": [why]},
                        columns=list(layout.NOTE_SHEET_COLUMNS))


def _fill_sheet(ws, df: pd.DataFrame, percent: tuple[str, ...], bold) -> None:
    from openpyxl.utils import get_column_letter

    headers = [escape_controls(str(c)) for c in df.columns]
    ws.append(headers)
    for cell in ws[1]:
        cell.font = bold
    pct = {j for j, col in enumerate(headers, start=1) if col in percent}
    dates = {j for j, col in enumerate(headers, start=1) if col in layout.DATE_COLUMNS}
    for i, row in enumerate(df.itertuples(index=False, name=None), start=2):
        for j, raw in enumerate(row, start=1):
            v = cell_value(raw)
            if v is None:
                continue
            cell = ws.cell(row=i, column=j)
            if isinstance(v, float):
                # openpyxl writes numbers with 16 significant digits, which can change the last
                # bit of a double; the shortest round-trip text, marked numeric, is stored as is.
                cell.value = repr(v)
                cell.data_type = "n"
            elif j in dates and isinstance(v, str) and _ISO_DATE.fullmatch(v):
                cell.value = datetime.date.fromisoformat(v)  # a real date (a number to the spreadsheet)
                cell.number_format = DATE_FORMAT
            elif isinstance(v, str):
                # always a string cell: text from the user's files is never stored as a formula
                cell.value = escape_controls(v)
                cell.data_type = "s"
            else:
                cell.value = v
            if j in pct:
                cell.number_format = PERCENT_FORMAT
    for j, col in enumerate(headers, start=1):
        if pd.api.types.is_numeric_dtype(df.iloc[:, j - 1]):
            width = max(len(col), 10) + 2
        else:
            sample = [len(str(v)) for v in df.iloc[:200, j - 1] if v is not None]
            width = max([len(col)] + sample) + 2
        ws.column_dimensions[get_column_letter(j)].width = min(width, _MAX_WIDTH)
    ws.freeze_panes = "A2"
    if headers:
        ws.auto_filter.ref = ws.dimensions
