"""``volbench realized`` from the command line."""

from __future__ import annotations

import json

import pandas as pd
import pytest

from volbench.cli import main

INTRADAY = "intraday/gullridge_energy_5min.csv"


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_json_has_the_issue_shape(capsys, sample_dir):
    code, out, err = run(capsys, "realized", sample_dir / INTRADAY, "--format", "json")
    assert code == 0 and err == ""
    (s,) = json.loads(out)["series"]
    for key in ("name", "source", "bar_interval_seconds", "bars_per_session", "sessions", "realized_vol",
                "bipower_vol", "kernel_vol", "overnight_share", "signature", "jump_days", "jump_share", "har"):
        assert key in s, key
    assert s["bar_interval_seconds"] == 300.0 and s["bars_per_session"] == 78 and s["sessions"] == 126
    assert s["intraday"] is True and s["annualization"] == 252.0
    assert {"interval_seconds", "annualized_vol"} <= set(s["signature"][0])
    assert [p["interval_seconds"] for p in s["signature"]][:2] == [300.0, 600.0]
    assert s["signature"][-1]["kind"] == "close_to_close"
    assert {"date", "z", "p_value"} == set(s["jump_days"][0])
    assert set(s["har"]) >= {"params", "term_structure"}
    assert {"horizon", "vol"} == set(s["har"]["term_structure"][0])
    # vols are annualized decimals
    for key in ("realized_vol", "bipower_vol", "kernel_vol"):
        assert 0.1 < s[key] < 0.5
    assert s["continuity"]["verdict"]["property"] == "continuous_paths"
    assert s["estimates"]["realized"]["ci_low"] < s["realized_vol"] < s["estimates"]["realized"]["ci_high"]


def test_sample_planted_jumps_are_listed(capsys, sample_dir):
    # sample_prices/PARAMETERS.json records the planted jump dates (2-3.5 % jumps, about 1.3-2 daily sds)
    meta = json.loads((sample_dir / "PARAMETERS.json").read_text())["intraday"]
    code, out, _ = run(capsys, "realized", sample_dir / INTRADAY, "--format", "json")
    (s,) = json.loads(out)["series"]
    assert code == 0
    listed = {d["date"] for d in s["jump_days"]}
    assert {j["date"] for j in meta["planted_jumps"]} <= listed
    assert s["continuity"]["verdict"]["status"] == "rejected"


def test_table_output(capsys, sample_dir):
    code, out, _ = run(capsys, "realized", sample_dir / INTRADAY, sample_dir / "kestrel_orchards.csv")
    assert code == 0
    assert "5-minute bars, 78 a session, 126 sessions" in out
    assert "Signature plot" in out and "suggested sampling:" in out
    assert "continuous paths: REJECTED" in out and "HAR-RV forecast" in out
    # the daily file: only the low-power screen
    assert "daily bars, 1512 sessions" in out and "low power" in out
    assert out.rstrip().endswith("not advice.")


def test_daily_file_json_says_what_is_unavailable(capsys, sample_dir):
    code, out, _ = run(capsys, "realized", sample_dir / "kestrel_orchards.csv", "--format", "json")
    (s,) = json.loads(out)["series"]
    assert code == 0 and s["intraday"] is False and s["bar_interval_seconds"] == 86400.0
    assert s["realized_vol"] is None and s["har"] is None and s["signature"] == []
    assert s["unavailable"]["realized"] == "needs intraday bars; the file has one bar a day"
    assert s["continuity"]["method"] == "lee_mykland" and s["continuity"]["low_power"] is True


def test_sampling_option(capsys, sample_dir):
    code, out, _ = run(capsys, "realized", sample_dir / INTRADAY, "--sampling", "600", "--format", "json")
    (s,) = json.loads(out)["series"]
    assert code == 0 and s["sampling_seconds"] == 600.0
    code, out, _ = run(capsys, "realized", sample_dir / INTRADAY, "--sampling", "auto", "--format", "json")
    (a,) = json.loads(out)["series"]
    assert a["sampling_seconds"] == a["suggested_interval_seconds"]


@pytest.mark.parametrize("args, msg", [
    (["--session-break", "90"], "session break '90' needs a unit, e.g. 4h or 90min"),
    (["--sampling", "450"], "sampling '450' seconds must be a whole multiple of the 300-second bar interval"),
    (["--jump-alpha", "5"], "jump level must be a probability between 0 and 0.5"),
    (["--horizons", "5,x"], "horizons must be whole numbers"),
])
def test_bad_options_exit_2_with_one_line(capsys, sample_dir, args, msg):
    code, out, err = run(capsys, "realized", sample_dir / INTRADAY, *args)
    assert code == 2 and out == "" and msg in err and len(err.strip().splitlines()) == 1


def test_date_and_time_columns_work_through_the_command(capsys, tmp_path, sample_dir):
    f = pd.read_csv(sample_dir / INTRADAY, nrows=78 * 70)
    ts = pd.to_datetime(f.pop("Timestamp"))
    f.insert(0, "Time", ts.dt.strftime("%H:%M"))
    f.insert(0, "Date", ts.dt.strftime("%Y-%m-%d"))
    path = tmp_path / "split.csv"
    f.to_csv(path, index=False)
    code, out, err = run(capsys, "realized", path, "--format", "json")
    (s,) = json.loads(out)["series"]
    assert code == 0 and err == "" and s["sessions"] == 70 and s["bar_interval_seconds"] == 300.0
