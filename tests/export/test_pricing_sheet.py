"""The live pricing sheet: formulas evaluated by an independent engine reproduce volbench's BSM."""

from __future__ import annotations

import dataclasses
import io
import re

import pytest
from openpyxl import Workbook, load_workbook

from volbench.errors import VolbenchError
from volbench.export.pricing_sheet import (
    HEADER_ROW,
    INPUT_ROWS,
    SHEET_TITLE,
    add_pricing_sheet,
    row_formulas,
    workbook_bytes,
)
from volbench.pricing.bsm import bsm_greeks

formulas = pytest.importorskip("formulas")  # test extra: an independent spreadsheet formula engine

OPTION = {"spot": 42.0, "strike": 40.0, "rate": 0.10, "dividend_yield": 0.03, "years": 0.5}
CANDIDATES = [("pricing vol", 0.20), ("close-to-close", 0.2731), ("Yang-Zhang", 0.2488), ("GARCH(1,1)", 0.61),
              ("low", 0.02)]
COLS = {"E": ("call", "price"), "F": ("put", "price"), "G": ("call", "delta"), "H": ("put", "delta"),
        "I": ("call", "vega"), "J": ("call", "vega_point")}


def _book(tmp_path, option=OPTION, candidates=CANDIDATES, *, cached=True):
    """The workbook on disk; ``cached=False`` leaves the formula results out, so an engine must compute them."""
    wb = Workbook()
    wb.active.title = "Estimates"
    sheet = add_pricing_sheet(wb, candidates=candidates, kind_note="test option", **option)
    path = tmp_path / ("live.xlsx" if cached else "bare.xlsx")
    path.write_bytes(workbook_bytes(wb, [sheet] if cached else []))
    return path, sheet


def _engine_values(path, inputs=None):
    model = formulas.ExcelModel().loads(str(path)).finish()
    sol = model.calculate(inputs=inputs or {})
    out = {}
    for key, val in sol.items():
        m = re.search(r"'\[.*\](.*)'!([A-Z]+[0-9]+)$", key)
        if m and m.group(1) == SHEET_TITLE.upper():
            v = val.value[0, 0]
            if isinstance(v, (int, float)) and not isinstance(v, bool):
                out[m.group(2)] = float(v)
    return out, model


def _key(path, cell):
    return f"'[{path.name}]{SHEET_TITLE.upper()}'!{cell}"


def test_formulas_evaluated_independently_reproduce_bsm_for_every_candidate(tmp_path):
    # Reference: volbench's BSM (itself checked against Hull's example in tests/pricing/test_bsm.py);
    # the spreadsheet formulas are evaluated by the `formulas` package, not by volbench, in a file
    # without cached results.
    path, sheet = _book(tmp_path, cached=False)
    values, _ = _engine_values(path)
    o = OPTION
    for label, vol in CANDIDATES:
        row = sheet.rows[label]
        g = {k: bsm_greeks(o["spot"], o["strike"], o["years"], o["rate"], vol, o["dividend_yield"], k)
             for k in ("call", "put")}
        for col, (kind, attr) in COLS.items():
            assert values[f"{col}{row}"] == pytest.approx(getattr(g[kind], attr), abs=1e-9, rel=1e-12), (label, col)


def test_editing_a_vol_or_an_input_cell_reprices(tmp_path):
    path, sheet = _book(tmp_path, cached=False)
    row = sheet.rows["pricing vol"]
    values, model = _engine_values(path)
    sol = model.calculate(inputs={_key(path, f"B{row}"): 0.35, _key(path, sheet.inputs["spot"]): 45.0})
    got = float(sol[_key(path, f"E{row}")].value[0, 0])
    o = OPTION
    assert got == pytest.approx(bsm_greeks(45.0, o["strike"], o["years"], o["rate"], 0.35, o["dividend_yield"]).price,
                                abs=1e-9)
    assert got != pytest.approx(values[f"E{row}"])


def test_cached_values_are_in_the_file_for_viewers_that_do_not_recalculate(tmp_path):
    path, sheet = _book(tmp_path)
    cached = load_workbook(path, data_only=True)[SHEET_TITLE]
    live = load_workbook(path)[SHEET_TITLE]
    o = OPTION
    for label, vol in CANDIDATES:
        row = sheet.rows[label]
        assert cached[f"B{row}"].value == vol and cached[f"A{row}"].value == label
        call = bsm_greeks(o["spot"], o["strike"], o["years"], o["rate"], vol, o["dividend_yield"])
        assert cached[f"E{row}"].value == call.price  # the exact double volbench computed
        assert live[f"E{row}"].value.startswith("=") and "NORMSDIST" in live[f"E{row}"].value
    for name, row in INPUT_ROWS.items():
        assert cached[f"B{row}"].value == o[name]
    assert cached[f"A{HEADER_ROW}"].value == "vol source"
    assert load_workbook(path)["Estimates"] is not None  # the rest of the workbook is untouched
    assert load_workbook(path).calculation.fullCalcOnLoad  # spreadsheet programs recalculate on open


def test_formulas_use_only_functions_every_spreadsheet_has():
    # docs/METHODS.md, "Black-Scholes-Merton": NORMSDIST, not NORM.S.DIST (which needs the _xlfn. prefix).
    used = set()
    for f in row_formulas(11).values():
        used |= set(re.findall(r"([A-Z][A-Z.]*)\(", f))
    assert used == {"LN", "SQRT", "EXP", "NORMSDIST", "PI"}
    assert "EXP(-(C11^2)/2)" in row_formulas(11)["I"]  # unary minus binds before ^ in spreadsheets


def test_without_sheets_workbook_bytes_is_a_plain_save():
    wb = Workbook()
    data = workbook_bytes(wb)
    assert load_workbook(io.BytesIO(data)).sheetnames == ["Sheet"]


def test_bad_inputs(tmp_path):
    wb = Workbook()
    with pytest.raises(VolbenchError, match="needs at least one vol"):
        add_pricing_sheet(wb, candidates=[], **OPTION)
    with pytest.raises(VolbenchError, match="labels must be unique"):
        add_pricing_sheet(wb, candidates=[("a", 0.2), ("a", 0.3)], **OPTION)
    with pytest.raises(VolbenchError, match=r"vol of 'a' must be a decimal below 5 .* did you mean 0.25"):
        add_pricing_sheet(wb, candidates=[("a", 25)], **OPTION)
    with pytest.raises(VolbenchError, match="spot must be a positive price"):
        add_pricing_sheet(wb, candidates=[("a", 0.2)], **{**OPTION, "spot": 0})
    add_pricing_sheet(wb, candidates=[("a", 0.2)], **OPTION)
    with pytest.raises(VolbenchError, match="already used"):
        add_pricing_sheet(wb, candidates=[("a", 0.2)], **OPTION)
    sheet = add_pricing_sheet(wb, candidates=[("a", 0.2)], title="Other", **OPTION)
    bad = dataclasses.replace(sheet, cached={"E11": float("nan")})
    with pytest.raises(VolbenchError, match="cell E11: the cached value is not a finite number"):
        workbook_bytes(wb, [bad])
