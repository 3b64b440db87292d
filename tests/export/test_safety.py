"""Exports never run text as a formula, never crash on control characters, never leave temp files.

Common practice for spreadsheet formula injection, no source: a text cell starting with =, +, -,
@, tab or carriage return is stored as text (XLSX string cell; leading apostrophe in CSV/TSV).
"""

from __future__ import annotations

import csv
import io
import json

import numpy as np
import openpyxl
import pandas as pd
import pytest

from volbench.cli import main
from volbench.export import build_bundle, write_export
from volbench.export.safety import escape_controls, neutralise
from volbench.export.tsv import table_to_tsv
from volbench.export.writers import csv_text
from volbench.settings import Settings


@pytest.mark.parametrize(("text", "safe"), [
    ("=HYPERLINK(\"x\")", "'=HYPERLINK(\"x\")"), ("+1+2", "'+1+2"), ("-2+3", "'-2+3"), ("@SUM(A1)", "'@SUM(A1)"),
    ("\tx", "'\tx"), ("\rx", "'\rx"), ("KESTREL", "KESTREL"), ("a=b", "a=b"), ("a\x01b\x7f", "a\\x01b\\x7f"),
])
def test_neutralise(text, safe):
    assert neutralise(text) == safe


def test_escape_controls_keeps_line_breaks_and_tabs():
    assert escape_controls("a\tb\nc\r\x00\x1f") == "a\tb\nc\r\\x00\\x1f"


def _file(tmp_path, symbols):
    rng = np.random.default_rng(0)
    dates = pd.bdate_range("2022-01-03", periods=40).strftime("%Y-%m-%d")
    rows = []
    for s in symbols:
        c = 50 * np.exp(np.cumsum(rng.normal(0, 0.01, 40)))
        rows += [f'"{s}",{d},{x:.4f}' for d, x in zip(dates, c)]
    p = tmp_path / "hostile.csv"
    p.write_bytes(("Symbol,Date,Close\n" + "\n".join(rows) + "\n").encode())
    return p


HOSTILE = ["=1+2", "@cmd", "-NEG", "ctl\x01name"]


def test_hostile_series_names_are_text_in_every_format(tmp_path, capsys):
    src = _file(tmp_path, HOSTILE)
    for suffix in (".xlsx", ".csv", ".json"):
        out = tmp_path / f"out{suffix}"
        assert main(["export", str(src), "--to", str(out), "--no-scaling"]) == 0, capsys.readouterr().err
    wb = openpyxl.load_workbook(tmp_path / "out.xlsx")
    ws = wb["estimates"]
    names = {c.value for c in ws["A"][1:]}
    kinds = {c.data_type for c in ws["A"][1:]}
    assert names == {"=1+2", "@cmd", "-NEG", "ctl\\x01name"} and kinds == {"s"}  # never "f" (formula)
    with (tmp_path / "out.csv").open(encoding="utf-8", newline="") as fh:
        names = {r["series"] for r in csv.DictReader(fh)}
    assert names == {"'=1+2", "'@cmd", "'-NEG", "ctl\\x01name"}
    doc = json.loads((tmp_path / "out.json").read_text(encoding="utf-8"))
    assert {r["series"] for r in doc["tables"]["estimates"]} == set(HOSTILE)  # JSON keeps the data as is
    assert sorted(p.name for p in tmp_path.iterdir()) == ["hostile.csv", "out.csv", "out.json", "out.xlsx"]


def test_tsv_and_csv_text_neutralise_cells_but_not_numbers():
    df = pd.DataFrame({"series": ["=A1", "ok"], "vol": [-0.25, 0.2]})
    assert table_to_tsv(df).splitlines()[1:] == ["'=A1\t-0.25", "ok\t0.2"]
    rows = list(csv.reader(io.StringIO(csv_text(df))))
    assert rows[1:] == [["'=A1", "-0.25"], ["ok", "0.2"]]


def test_adjustments_travel_into_the_export_provenance(tmp_path, sample_dir):
    from volbench.data import load_prices

    (h,) = load_prices(sample_dir / "quillon_textiles.csv", adjust_splits=True, exclude_flagged=True)
    b = build_bundle([h], Settings(scaling=None, cone=None))
    assert b.provenance["series"][0]["adjustments"] == [{"date": "2022-06-15", "ratio": 2.0, "line": 903,
                                                          "label": "2:1 split"}]
    inputs = b.table("inputs")
    (value,) = inputs.loc[inputs["item"] == "adjustments", "value"]
    assert value == "2:1 split on 2022-06-15 (line 903): earlier prices divided by 2"
    path = write_export(tmp_path / "p.json", b)
    doc = json.loads(path.read_text(encoding="utf-8"))
    assert doc["provenance"]["series"][0]["adjustments"][0]["ratio"] == 2.0
