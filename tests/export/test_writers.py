"""CSV, XLSX and JSON writers: read back with pandas / openpyxl / json, the numbers are the same.

Round-trip equality is exact (==, not approx): common practice, no source — the shortest repr of a
double reads back as the same double (Python's float repr guarantee), and the readers used are
the reference libraries pandas (read_csv, exact by default in pandas 3; read_excel with
openpyxl) and the standard json module.
"""

from __future__ import annotations

import errno
import json

import numpy as np
import openpyxl
import pandas as pd
import pytest

from volbench.errors import VolbenchError
from volbench.export import SCHEMA_VERSION, write_csv, write_export, write_json, write_xlsx
from volbench.settings import OptionSettings


def _same(read: pd.DataFrame, mem: pd.DataFrame) -> None:
    """Column by column: numbers exactly equal (NaN where empty), text equal (empty == missing)."""
    assert list(read.columns) == [str(c) for c in mem.columns]
    assert len(read) == len(mem)
    for c in mem.columns:
        m, r = mem[c], read[str(c)]
        if pd.api.types.is_numeric_dtype(m) and not pd.api.types.is_bool_dtype(m):
            a = m.astype("float64").to_numpy()
            b = pd.to_numeric(r).astype("float64").to_numpy()
            assert np.array_equal(a, b, equal_nan=True), c
        else:
            a = ["" if pd.isna(x) else str(x) for x in m]
            b = ["" if pd.isna(x) else str(x) for x in r]
            assert a == b, c


@pytest.fixture
def full_bundle(make_bundle):
    def _make():
        return make_bundle(option=OptionSettings(0.25, 30, strike=50.0, rate=0.03))
    return _make


def test_csv_round_trip_full_precision(tmp_path, full_bundle):
    b = full_bundle()
    path = write_export(tmp_path / "est.csv", b)
    mem = b.table("estimates")
    read = pd.read_csv(path, keep_default_na=False, na_values=[""])
    _same(read, mem)
    assert mem["vol"].notna().sum() > 0 and mem["vol"].isna().sum() > 0  # both cases exercised


def test_csv_of_another_table(tmp_path, full_bundle):
    b = full_bundle()
    path = write_csv(tmp_path / "cone.csv", b, table="cone")
    _same(pd.read_csv(path), b.table("cone"))
    with pytest.raises(VolbenchError, match=r"table 'garch' is not in this export \(not requested"):
        write_csv(tmp_path / "g.csv", b, table="garch")


def test_xlsx_round_trip_every_sheet(tmp_path, full_bundle):
    b = full_bundle()
    path = write_xlsx(tmp_path / "sheet.xlsx", b)
    sheets = pd.read_excel(path, sheet_name=None, engine="openpyxl")
    assert list(sheets) == ["estimates", "cone", "scaling", "scaling_summary", "garch", "comparison", "price_bands",
                            "breakevens", "notes", "findings", "inputs"]
    for name in b.names:
        if name == "inputs":  # mixed text/number column: compare as text below
            continue
        _same(sheets[name], b.table(name))
    mem, read = b.table("inputs")["value"].tolist(), sheets["inputs"]["value"].fillna("").tolist()
    assert len(mem) == len(read)
    for m, r in zip(mem, read):  # a mixed column: numbers stay numbers (252.0 may read back as 252)
        assert (m == r) if isinstance(m, (int, float)) else (str(m) == str(r))


def test_xlsx_layout_as_a_user_sees_it(tmp_path, full_bundle):
    b = full_bundle()
    wb = openpyxl.load_workbook(write_xlsx(tmp_path / "sheet.xlsx", b))
    ws = wb["estimates"]
    headers = [c.value for c in ws[1]]
    assert headers == list(b.table("estimates").columns)
    assert ws.freeze_panes == "A2" and all(c.font.b for c in ws[1])
    col = {h: i + 1 for i, h in enumerate(headers)}
    vol = ws.cell(row=2, column=col["vol"])
    assert vol.data_type == "n" and isinstance(vol.value, float) and vol.number_format == "0.00%"
    assert ws.cell(row=2, column=col["n"]).number_format == "General"
    assert ws.cell(row=2, column=col["vol"]).value == b.table("estimates").iloc[0]["vol"]  # the exact double
    comp = wb["comparison"]
    heads = [c.value for c in comp[1]]
    assert comp.cell(row=2, column=heads.index("pricing_vol") + 1).number_format == "0.00%"
    assert comp.cell(row=2, column=heads.index("price") + 1).number_format == "General"
    assert wb["garch"]["B2"].value == "not requested"


def test_json_round_trip(tmp_path, full_bundle):
    b = full_bundle()
    doc = json.loads(write_json(tmp_path / "out.json", b).read_text(encoding="utf-8"))
    assert doc["schema_version"] == SCHEMA_VERSION and doc["created"] == "2024-10-18T07:30:05Z"
    assert set(doc) == {"schema_version", "volbench_version", "created", "provenance", "sections", "tables"}
    assert list(doc["tables"]) == list(b.names)
    for name in b.names:
        _same(pd.DataFrame(doc["tables"][name], columns=list(b.table(name).columns)), b.table(name))
    assert doc["sections"]["garch"]["status"] == "not requested"
    assert doc["provenance"]["series"][0]["sha256"] == b.provenance["series"][0]["sha256"]
    # missing numbers are null, never NaN (which is not JSON)
    vell = [r for r in doc["tables"]["estimates"] if r["estimator"] == "parkinson" and r["series"] == "vell_harbour_index"]
    assert vell[0]["vol"] is None and vell[0]["unavailable_reason"] == "needs high/low columns"


def test_unknown_suffix_names_the_allowed_ones(tmp_path, make_bundle):
    with pytest.raises(VolbenchError, match=r"cannot tell the export format of .*out\.txt: suffix '\.txt'; "
                                            r"use one of: \.csv, \.json, \.xlsx"):
        write_export(tmp_path / "out.txt", make_bundle())
    with pytest.raises(VolbenchError, match=r"no suffix; use one of: \.csv, \.json, \.xlsx"):
        write_export(tmp_path / "out", make_bundle())


@pytest.mark.parametrize("suffix", [".csv", ".xlsx", ".json"])
def test_every_format_refuses_to_overwrite(tmp_path, make_bundle, suffix):
    target = tmp_path / f"out{suffix}"
    target.write_bytes(b"keep me")
    b = make_bundle(scaling=None)
    with pytest.raises(VolbenchError, match=rf"out\{suffix} already exists; pass --force"):
        write_export(target, b)
    assert target.read_bytes() == b"keep me"
    write_export(target, b, overwrite=True)
    assert target.read_bytes() != b"keep me"


def test_xlsx_save_failing_keeps_old_workbook(tmp_path, make_bundle, monkeypatch):
    target = tmp_path / "out.xlsx"
    target.write_bytes(b"old workbook")

    def disk_full(self, fh):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(openpyxl.Workbook, "save", disk_full)
    with pytest.raises(VolbenchError, match=r"no space left on the device; .*the existing file is unchanged"):
        write_export(target, make_bundle(scaling=None), overwrite=True)
    assert target.read_bytes() == b"old workbook"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.xlsx"]
