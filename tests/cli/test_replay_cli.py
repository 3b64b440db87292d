"""``volbench replay``: an export rebuilt from its own record reproduces every cell; a changed
source or a changed number is reported with exit 3; bad input exits 2."""

from __future__ import annotations

import json
import shutil

import pytest

from volbench.cli import main
from volbench.export.replay import compare_tables

NON_DEFAULT = ["--window", "63", "--confidence", "0.9", "--ewma-lambda", "0.97", "--gap-days", "7",
               "--cone-windows", "10,21,63", "--hodges-tompkins", "--scaling-horizons", "2,5,10", "--alpha", "0.01",
               "--with-garch", "--model", "garch,egarch", "--dist", "t", "--simulations", "500", "--seed", "11",
               "--garch-horizons", "5,21", "--pricing-vol", "0.3", "--days", "21", "--candidate-window", "30",
               "--type", "put", "--decision-vol", "0.29", "--rationale", "desk view: lean on the forecast",
               "--prepared-by", "A. Validator"]


@pytest.fixture
def source(sample_dir, tmp_path):
    path = tmp_path / "kestrel_orchards.csv"
    shutil.copy(sample_dir / "kestrel_orchards.csv", path)
    return path


@pytest.mark.slow
def test_a_non_default_xlsx_export_replays_identically_then_flags_a_changed_price(source, tmp_path, capsys):
    out = tmp_path / "evidence.xlsx"
    assert main(["export", str(source), "--to", str(out), *NON_DEFAULT]) == 0
    capsys.readouterr()
    assert main(["replay", str(out)]) == 0
    said = capsys.readouterr().out
    import openpyxl

    n = len(openpyxl.load_workbook(out).sheetnames)  # every sheet is compared, notes of absent sections too
    assert "identical" in said and f"cells in {n} tables reproduce exactly" in said
    # one price changes: the hash change is named with both hashes, the numbers that moved are listed
    lines = source.read_text(encoding="utf-8").splitlines()
    fields = lines[-1].split(",")
    fields[4] = f"{float(fields[4]) * 1.01:.4f}"
    lines[-1] = ",".join(fields)
    source.write_text("\n".join(lines) + "\n", encoding="utf-8")
    assert main(["replay", str(out)]) == 3
    said = capsys.readouterr().out
    assert "source changed:" in said and "SHA-256 recorded" in said and ", now " in said
    assert "cells differ" in said and "estimates row" in said


def test_a_json_export_replays_and_a_moved_source_is_given_with_source(source, tmp_path, capsys):
    out = tmp_path / "evidence.json"
    assert main(["export", str(source), "--to", str(out), "--pricing-vol", "0.25", "--days", "30",
                 "--cone-windows", "20,40"]) == 0
    (tmp_path / "elsewhere").mkdir()
    moved = tmp_path / "elsewhere" / source.name
    source.rename(moved)
    capsys.readouterr()
    assert main(["replay", str(out)]) == 2  # the recorded file is gone: bad input, one line
    assert "kestrel_orchards.csv" in capsys.readouterr().err
    assert main(["replay", str(out), "--source", str(moved)]) == 0
    assert "identical" in capsys.readouterr().out


def test_a_changed_number_is_listed_with_where_and_how_much(source, tmp_path, capsys):
    out = tmp_path / "evidence.json"
    assert main(["export", str(source), "--to", str(out), "--no-scaling"]) == 0
    doc = json.loads(out.read_text(encoding="utf-8"))
    doc["tables"]["estimates"][0]["vol"] += 0.001
    out.write_text(json.dumps(doc), encoding="utf-8")
    capsys.readouterr()
    assert main(["replay", str(out)]) == 3
    said = capsys.readouterr().out
    assert " 1 of " in said and "estimates row 2, vol: recorded" in said and "rebuilt - recorded = -0.001" in said


def test_bad_input_exits_2_with_one_line(tmp_path, source, capsys):
    csv_out = tmp_path / "e.csv"
    assert main(["export", str(source), "--to", str(csv_out), "--no-scaling"]) == 0
    capsys.readouterr()
    assert main(["replay", str(csv_out)]) == 2
    assert "a .csv export holds the estimates table only" in capsys.readouterr().err
    assert main(["replay", str(tmp_path / "missing.xlsx")]) == 2
    assert "no such file" in capsys.readouterr().err
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps({"tables": {}}), encoding="utf-8")
    assert main(["replay", str(bad)]) == 2
    assert "not a volbench export" in capsys.readouterr().err


def test_compare_tables_counts_cells_and_sets_environment_rows_apart():
    header = ["group", "series", "item", "value"]
    a = {"t": [["x", "y"], [1.0, "a"]], "inputs": [header, ["environment", None, "python", "3.11"],
                                                   ["setting", None, "window", 20]]}
    b = {"t": [["x", "y"], [1.0, "b"]], "inputs": [header, ["environment", None, "python", "3.12"],
                                                   ["setting", None, "window", 20]]}
    cells, diffs, env = compare_tables(a, b)
    assert cells == 4 + 8 and [(d.table, d.row, d.column) for d in diffs] == [("t", 2, "y")]
    assert env == ["environment python: recorded '3.11', now '3.12'"]
