"""The decision record and the provenance on ``compare`` and ``export``."""

from __future__ import annotations

import hashlib
import json

import openpyxl

from volbench import __version__
from volbench.cli import main

DECISION = ["--decision-vol", "0.27", "--rationale", "forecast over the option's life", "--prepared-by", "desk B"]


def test_compare_json_can_be_filed_on_its_own(sample_dir, capsys, monkeypatch, tmp_path):
    monkeypatch.chdir(sample_dir)  # a relative path is recorded as absolute, with the working directory
    assert main(["compare", "kestrel_orchards.csv", "--pricing-vol", "0.25", "--days", "21", "--with-scaling",
                 *DECISION, "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    prov = doc["provenance"]
    src = prov["sources"][0]
    assert src["path"] == str(sample_dir / "kestrel_orchards.csv")
    assert src["sha256"] == hashlib.sha256((sample_dir / "kestrel_orchards.csv").read_bytes()).hexdigest()
    assert prov["volbench_version"] == __version__ and prov["environment"]["packages"]["arch"]
    assert prov["environment"]["fit_threads"] == 1 and "OMP_NUM_THREADS" in prov["environment"]["thread_variables"]
    assert prov["command"]["typed"][:3] == ["volbench", "compare", "kestrel_orchards.csv"]
    assert prov["command"]["working_directory"] == str(sample_dir)
    assert prov["effective_settings"]["cone.windows"] == "10,20,40,60,120,250"
    assert prov["effective_settings"]["garch"] == "off"
    d = doc["decision"]
    assert d["vol"] == 0.27 and d["prepared_by"] == "desk B" and d["rationale"].startswith("forecast")
    assert {c["key"] for c in d["candidates"]} >= {"yang_zhang", "scaling"}
    assert all("ci_low" in c and "within_interval" in c for c in d["candidates"])
    # comparison rows carry their intervals (estimators have one; the scaling horizon vol has none)
    rows = {r["key"]: r for r in doc["candidates"]}
    assert rows["yang_zhang"]["ci_low"] < rows["yang_zhang"]["vol"] < rows["yang_zhang"]["ci_high"]
    assert rows["scaling"]["ci_low"] is None


def test_compare_table_prints_the_decision_record(sample_dir, capsys):
    assert main(["compare", str(sample_dir / "kestrel_orchards.csv"), "--pricing-vol", "0.25", "--days", "21",
                 *DECISION]) == 0
    out = capsys.readouterr().out
    assert "decision record:" in out and "- chosen vol 27.00% for an option of 21 bars" in out
    assert "- prepared by: desk B" in out


def test_export_writes_the_decision_section_in_xlsx_and_json(sample_dir, tmp_path, capsys):
    src = str(sample_dir / "kestrel_orchards.csv")
    xlsx, js = tmp_path / "d.xlsx", tmp_path / "d.json"
    for out in (xlsx, js):
        assert main(["export", src, "--to", str(out), "--pricing-vol", "0.25", "--days", "21", *DECISION]) == 0
    rows = list(openpyxl.load_workbook(xlsx)["decision"].iter_rows(values_only=True))
    header = rows[0]
    kinds = [r[header.index("kind")] for r in rows[1:]]
    assert kinds[:2] == ["record", "record"] and "candidate" in kinds and kinds[-1] == "caution"
    assert {r[header.index("decision_vol")] for r in rows[1:]} == {0.27}
    doc = json.loads(js.read_text(encoding="utf-8"))
    assert doc["sections"]["decision"]["status"] == "included"
    assert [r["text"] for r in doc["tables"]["decision"] if r["key"] == "prepared_by"] == ["desk B"]
    # without a decision the sheet is still there, saying why
    bare = tmp_path / "bare.xlsx"
    assert main(["export", src, "--to", str(bare), "--no-scaling"]) == 0
    ws = openpyxl.load_workbook(bare)["decision"]
    assert [c.value for c in ws[2]] == ["decision", "not requested",
                                        "give --decision-vol, --rationale or --prepared-by"]


def test_a_bad_decision_vol_exits_2(sample_dir, tmp_path, capsys):
    code = main(["export", str(sample_dir / "kestrel_orchards.csv"), "--to", str(tmp_path / "x.xlsx"),
                 "--decision-vol", "27"])
    assert code == 2
    assert "decision vol must be a decimal below 5 (0.25 means 25%), got 27; it looks like a percent: did you mean " \
           "0.27?" in capsys.readouterr().err


def test_a_csv_export_writes_the_decision_beside_the_estimates(sample_dir, tmp_path, capsys):
    import csv

    out = tmp_path / "sheet.csv"
    args = ["export", str(sample_dir / "kestrel_orchards.csv"), "--to", str(out), "--pricing-vol", "0.25",
            "--days", "21", "--no-scaling", *DECISION]
    assert main(args) == 0
    rows = list(csv.DictReader((tmp_path / "sheet.decision.csv").open(encoding="utf-8")))
    assert rows[0]["kind"] == "record" and rows[1]["text"] == "desk B" and rows[-1]["kind"] == "caution"
    (tmp_path / "sheet.csv").unlink()  # the second file exists: nothing is written without --force
    capsys.readouterr()
    assert main(args) == 2
    assert "sheet.decision.csv" in capsys.readouterr().err and not (tmp_path / "sheet.csv").exists()
