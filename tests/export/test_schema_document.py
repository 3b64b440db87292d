"""docs/EXPORT_SCHEMA.md holds still: the sheets, their column order and their percent columns
in written workbooks match the page, for several option sets.

The sheets come from the one registry (``TABLE_ORDER``) and the documented layouts from the page's
"Column layouts" section, so a sheet added later is checked as soon as it is registered (and
fails until the page documents it).
"""

from __future__ import annotations

import datetime
import re
from pathlib import Path

import openpyxl
import pytest

from volbench.export import TABLE_ORDER, write_xlsx
from volbench.export.layout import DATE_COLUMNS, NOTE_SHEET_COLUMNS, garch_columns, table_columns
from volbench.settings import (
    ConeSettings,
    DecisionSettings,
    EstimationSettings,
    GarchSettings,
    OptionSettings,
)

DOC = Path(__file__).resolve().parents[2] / "docs" / "EXPORT_SCHEMA.md"


def documented() -> dict[str, dict[str, list[str]]]:
    """``{table: {"Columns": [...], "Percent": [...]}}`` from the page's "Column layouts" section."""
    text = DOC.read_text(encoding="utf-8")
    part = text.split("## Column layouts", 1)[1].split("\n## ", 1)[0]
    out: dict[str, dict[str, list[str]]] = {}
    for block in re.split(r"^### ", part, flags=re.MULTILINE)[1:]:
        name = re.match(r"`([^`]+)`", block).group(1)
        fields: dict[str, list[str]] = {}
        for m in re.finditer(r"^(Columns|Percent):(.*?)(?:\n\n|\Z)", block, flags=re.MULTILINE | re.DOTALL):
            fields[m.group(1)] = re.findall(r"`([^`]+)`", m.group(2))
        out[name] = fields
    return out


def test_every_registered_table_is_documented_in_order():
    docs = documented()
    assert list(docs) == list(TABLE_ORDER)
    listed = re.search(r"\| `\.xlsx` \|(.*)\|", DOC.read_text(encoding="utf-8")).group(1)
    assert re.findall(r"`([a-z_]+)`", listed) == list(TABLE_ORDER)


def test_the_code_layouts_are_the_documented_ones():
    docs = documented()
    for name, columns in table_columns().items():
        assert docs[name]["Columns"] == list(columns), name
    assert docs["garch"]["Columns"] == list(garch_columns())


OPTION_SETS = {
    "defaults": {},
    "comparison, GARCH(1,1) normal": {"garch": GarchSettings(models=("garch",)),
                                      "option": OptionSettings(pricing_vol=0.25, days=21), "scaling": None},
    "GJR and EGARCH t, Hodges-Tompkins, decision": {
        "garch": GarchSettings(models=("gjr", "egarch"), dist="t", simulations=200),
        "cone": ConeSettings(windows=(10, 21, 63), hodges_tompkins=True),
        "option": OptionSettings(pricing_vol=0.3, days=21, kind="put"),
        "decision": DecisionSettings(vol=0.28, rationale="r", prepared_by="p")},
}


@pytest.mark.slow
@pytest.mark.parametrize("name", list(OPTION_SETS))
def test_written_workbooks_match_the_document(name, make_bundle, sample_histories, tmp_path):
    # common practice, no source: a published layout is checked against files actually written
    docs = documented()
    bundle = make_bundle(sample_histories("ironvale_mining.csv"), estimation=EstimationSettings(window=40),
                         **OPTION_SETS[name])
    wb = openpyxl.load_workbook(write_xlsx(tmp_path / "x.xlsx", bundle))
    tables, live = wb.sheetnames[:len(TABLE_ORDER)], wb.sheetnames[len(TABLE_ORDER):]
    assert tables == list(TABLE_ORDER)
    # then the live pricing sheets (documented as formulas, not a table): one per compared series
    assert all(s.startswith("Live pricing") for s in live)
    assert bool(live) == ("comparison" in bundle.tables)
    assert "**Live pricing**" in DOC.read_text(encoding="utf-8")
    for sheet in tables:
        ws = wb[sheet]
        headers = [c.value for c in ws[1]]
        if sheet not in bundle.tables:
            assert headers == list(NOTE_SHEET_COLUMNS) and ws.max_row == 2, sheet
            continue
        assert headers == docs[sheet]["Columns"], sheet
        percent = set(docs[sheet].get("Percent", []))
        for row in ws.iter_rows(min_row=2):
            for header, cell in zip(headers, row):
                if isinstance(cell.value, float):
                    assert (cell.number_format == "0.00%") == (header in percent), (sheet, header)
                if header in DATE_COLUMNS and cell.value is not None:
                    assert isinstance(cell.value, datetime.datetime), (sheet, header, cell.value)
