"""The XLSX export carries the comparison's option as a live pricing sheet (formulas of input cells)."""

from __future__ import annotations

import datetime
import re

import pytest
from openpyxl import Workbook, load_workbook

from volbench.cli import main
from volbench.export.pricing_sheet import SHEET_TITLE, comparison_sheets
from volbench.pricing.bsm import bsm_greeks

formulas = pytest.importorskip("formulas")  # test extra: an independent spreadsheet formula engine


def _engine(path, title):
    """Every numeric cell of sheet ``title`` as computed by the `formulas` engine (not by volbench)."""
    sol = formulas.ExcelModel().loads(str(path)).finish().calculate()
    out = {}
    for key, val in sol.items():
        m = re.search(r"'\[.*\](.*)'!([A-Z]+[0-9]+)$", key)
        if m and m.group(1) == title.upper():
            v = val.value[0, 0]
            if isinstance(v, (int, float)) and not isinstance(v, bool):
                out[m.group(2)] = float(v)
    return out


def test_export_xlsx_prices_every_candidate_with_live_formulas(tmp_path, sample_dir, capsys):
    target = tmp_path / "book.xlsx"
    code = main(["export", str(sample_dir / "kestrel_orchards.csv"), "--to", str(target), "--pricing-vol", "0.25",
                 "--expiry", "2024-12-20", "--strike", "52", "--rate", "0.03", "--type", "put"])
    assert code == 0, capsys.readouterr().err
    cached = load_workbook(target, data_only=True)
    comp = cached["comparison"]
    head = [c.value for c in comp[1]]
    rows = [dict(zip(head, [c.value for c in r])) for r in comp.iter_rows(min_row=2)]
    assert rows and rows[0]["source"] == "pricing" and rows[0]["expiry"] == datetime.datetime(2024, 12, 20)  # a real date cell
    assert rows[0]["years"] == rows[0]["calendar_days"] / 365  # ACT/365 (common practice, no source)
    # Reference: volbench's BSM (checked against Hull's example in tests/pricing/test_bsm.py) and the
    # comparison sheet's own prices; the live sheet's formulas are evaluated by the `formulas` engine
    # in a copy without the cached results, so volbench's values cannot leak into the check.
    live = load_workbook(target)
    sheet = live[SHEET_TITLE]
    for r in sheet.iter_rows(min_row=11, max_row=11 + len(rows) - 1):
        for c in r[2:]:
            assert isinstance(c.value, str) and c.value.startswith("=")
    bare = tmp_path / "bare.xlsx"
    wb = Workbook()
    wb.remove(wb.active)
    ws = wb.create_sheet(SHEET_TITLE)
    for r in sheet.iter_rows():
        for c in r:
            if c.value is not None:
                ws[c.coordinate] = c.value
    wb.save(bare)
    values = _engine(bare, SHEET_TITLE)
    o = rows[0]
    for i, row in enumerate(rows):
        r = 11 + i
        assert cached[SHEET_TITLE][f"A{r}"].value.startswith(row["label"])
        put = bsm_greeks(o["spot"], o["strike"], o["years"], o["rate"], row["vol"], o["dividend_yield"], "put")
        assert values[f"F{r}"] == pytest.approx(put.price, abs=1e-9)
        assert values[f"F{r}"] == pytest.approx(row["price"], abs=1e-9)  # the comparison's own repricing
        assert cached[SHEET_TITLE][f"F{r}"].value == pytest.approx(row["price"], abs=1e-12)  # cached for viewers


def test_one_live_sheet_per_series_and_failed_vols_left_out():
    import pandas as pd

    base = {"as_of": "2024-10-17", "spot": 50.0, "strike": 50.0, "rate": 0.0, "dividend_yield": 0.0,
            "years": 0.1, "kind": "call"}
    table = pd.DataFrame([
        {**base, "series": "a", "key": "pricing", "label": "Pricing vol", "vol": 0.25},
        {**base, "series": "a", "key": "x", "label": "Twin", "vol": 0.2},
        {**base, "series": "a", "key": "y", "label": "Twin", "vol": 0.3},
        {**base, "series": "a", "key": "bad", "label": "Broken fit", "vol": 9.0},
        {**base, "series": "b", "key": "pricing", "label": "Pricing vol", "vol": 0.25},
    ])
    wb = Workbook()
    sheets = comparison_sheets(wb, table)
    assert [s.title for s in sheets] == [f"{SHEET_TITLE} 1", f"{SHEET_TITLE} 2"]
    assert list(sheets[0].rows) == ["Pricing vol", "Twin", "Twin (y)"]  # a vol of 900 % gets no row
    assert comparison_sheets(wb, None) == []
