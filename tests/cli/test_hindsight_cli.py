"""``volbench hindsight``: JSON contract, CSV and table output, events, exit codes and messages."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

from volbench.cli import main
from volbench.data import load_prices
from volbench.hindsight import hindsight

ROOT = Path(__file__).resolve().parents[2]
KESTREL = ROOT / "sample_prices" / "kestrel_orchards.csv"
IRONVALE = ROOT / "sample_prices" / "ironvale_mining.csv"
IRONVALE_EVENTS = ROOT / "sample_prices" / "events" / "ironvale_mining_events.csv"


def _run(capsys, *argv):
    code = main(["hindsight", *map(str, argv)])
    out, err = capsys.readouterr()
    return code, out, err


def test_json_equals_the_core_and_has_the_documented_shape(capsys):
    code, out, _ = _run(capsys, KESTREL, "--days", 21, "--windows", "20,60", "--step", 5, "--format", "json")
    assert code == 0
    (s,) = json.loads(out)["series"]
    core = hindsight(load_prices(KESTREL)[0], 21, windows=(20, 60), step=5)
    assert s["name"] == "kestrel_orchards" and s["days"] == 21 and s["periods"] == core.periods
    assert s["best"] == core.best == s["candidates"][0]["key"]
    first = s["candidates"][0]
    assert set(first) >= {"key", "label", "window", "bias", "rmse", "qlike", "coverage", "price_error", "dm_p_value"}
    assert first["qlike"] == core.scores["qlike"].iloc[0]


def test_csv_has_one_row_per_candidate_and_marks_the_best(capsys):
    code, out, _ = _run(capsys, KESTREL, "--days", 10, "--window", 20, "--format", "csv")
    rows = list(csv.DictReader(io.StringIO(out)))
    assert code == 0 and [r["key"] for r in rows if r["best"] == "1"] == [rows[0]["key"]]
    assert len(rows) == 6 and rows[0]["dm_p_value"] == ""  # five estimators at 20 bars and EWMA


def test_table_with_events_lists_the_event_aware_candidates(capsys):
    code, out, _ = _run(capsys, IRONVALE, "--days", 21, "--windows", "60", "--events", IRONVALE_EVENTS)
    assert code == 0
    assert "Ex-event close-to-close + events, 60 bars" in out and "23 event bars" in out
    assert "Past forecast accuracy is evidence, not a guarantee" in out


def test_events_with_several_series_and_bad_inputs_exit_2_with_one_line(capsys, tmp_path):
    code, _, err = _run(capsys, KESTREL, IRONVALE, "--days", 21, "--events", IRONVALE_EVENTS)
    assert code == 2 and "--events lists the events of one instrument" in err and err.count("\n") == 1
    bad = tmp_path / "bad_events.csv"
    bad.write_text("date,label\nlater,x\n")
    code, _, err = _run(capsys, KESTREL, "--days", 21, "--events", bad)
    assert code == 2 and "line 2: 'later' is not a date" in err
    code, _, err = _run(capsys, KESTREL, "--days", 21, "--windows", "20,x")
    assert code == 2 and "--windows must be whole numbers" in err
    code, _, err = _run(capsys, KESTREL, "--days", 21, "--window", 20, "--windows", "20,60")
    assert code == 2 and "not allowed with argument" in err
