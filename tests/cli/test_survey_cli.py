"""``volbench survey`` from the command line: output formats, --to, exit codes, progress."""

from __future__ import annotations

import csv
import io
import json
import shutil
import sys

import pytest

from volbench.cli import main

ISSUE_FIELDS = {"name", "source", "rows", "as_of", "estimates", "cone_percentile", "pricing_vol",
                "pricing_vol_percentile", "verdicts", "forward_vol", "forward_vol_source", "findings", "error"}


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def folder(tmp_path, sample_dir):
    for name in ("kestrel_orchards.csv", "quillon_textiles.csv", "vell_harbour_index.csv"):
        shutil.copy(sample_dir / name, tmp_path / name)
    return tmp_path


def test_json_has_the_issue_shape(capsys, folder):
    code, out, err = run(capsys, "survey", folder, "--pricing-vol", "0.25", "--jobs", "1", "--format", "json")
    assert code == 0 and err == ""
    d = json.loads(out)
    assert {"engine", "workers", "elapsed_s", "series"} <= set(d) and d["engine"] == "serial"
    assert [s["name"] for s in d["series"]] == ["kestrel_orchards", "quillon_textiles", "vell_harbour_index"]
    for s in d["series"]:
        assert ISSUE_FIELDS <= set(s)
        assert set(s["findings"]) == {"error", "warning", "info"}
        assert set(s["verdicts"]) == {"variance_proportional_to_horizon", "normal_increments",
                                      "independent_increments", "negligible_drift", "continuous_paths"}
        for e in s["estimates"].values():
            assert set(e) == {"vol", "ci_low", "ci_high", "n"} and e["ci_low"] < e["vol"] < e["ci_high"]
        assert s["forward_vol"] is None and s["forward_vol_source"] is None  # GARCH not asked for
    index = d["series"][2]  # close-only: range estimators are listed as unavailable, with the reason
    assert set(index["estimates"]) == {"close_to_close", "ewma"}
    assert index["unavailable"]["parkinson"] == "needs high/low columns"


def test_table_and_csv(capsys, folder):
    code, out, _ = run(capsys, "survey", folder, folder / "missing.csv", "--jobs", "1")
    assert code == 0
    assert out.startswith("survey of 4 series (1 failed)")
    assert "kestrel_orchards" in out and "VNID" in out and "not surveyed:" in out
    assert "missing: " in out and "not advice" in out
    code, out, _ = run(capsys, "survey", folder, "--jobs", "1", "--format", "csv", "--with-garch")
    rows = list(csv.DictReader(io.StringIO(out)))
    assert [r["series"] for r in rows] == ["kestrel_orchards", "quillon_textiles", "vell_harbour_index"]
    assert float(rows[0]["close_to_close_vol"]) > 0 and rows[0]["verdict_normal_increments"] in {
        "consistent", "doubtful", "rejected"}
    assert float(rows[1]["forward_vol"]) > 0 and rows[1]["forward_vol_source"]
    assert rows[2]["parkinson_vol"] == "" and "parkinson: needs high/low columns" in rows[2]["unavailable"]


def test_exit_2_when_no_series_succeeds(capsys, tmp_path):
    (tmp_path / "empty.csv").write_text("")
    code, out, err = run(capsys, "survey", tmp_path / "empty.csv", tmp_path / "gone.csv", "--format", "json")
    assert code == 2
    assert [s["error"] is not None for s in json.loads(out)["series"]] == [True, True]
    assert err.startswith("volbench: no series could be surveyed (2 failed); first: ") and err.count("\n") == 1


def test_to_writes_atomically_and_never_overwrites_without_force(capsys, folder, tmp_path):
    target = tmp_path / "out" / "survey.json"
    target.parent.mkdir()
    code, out, _ = run(capsys, "survey", folder, "--jobs", "1", "--format", "json", "--to", target)
    assert code == 0 and out.startswith("surveyed 3 series (0 failed)") and str(target) in out
    first = json.loads(target.read_text())
    assert len(first["series"]) == 3
    target.write_text("keep me")
    code, _, err = run(capsys, "survey", folder, "--jobs", "1", "--format", "json", "--to", target)
    assert code == 2 and "already exists; pass --force" in err
    assert target.read_text() == "keep me"
    code, _, _ = run(capsys, "survey", folder, "--jobs", "1", "--format", "csv", "--to", target, "--force")
    assert code == 0 and target.read_text().startswith("series,source,rows")
    assert [p.name for p in target.parent.iterdir()] == ["survey.json"]  # no temporary file left
    code, _, err = run(capsys, "survey", folder, "--force")
    assert code == 2 and "--force only applies with --to FILE" in err


def test_pricing_vols_file_from_the_command_line(capsys, folder, tmp_path):
    vols = tmp_path / "vols.txt"
    vols.write_text("kestrel_orchards,0.2\nzz_unknown,0.3\n")
    code, out, err = run(capsys, "survey", folder, "--pricing-vols", vols, "--jobs", "1", "--format", "json")
    assert code == 0
    rows = {s["name"]: s for s in json.loads(out)["series"]}
    assert rows["kestrel_orchards"]["pricing_vol"] == 0.2
    assert rows["quillon_textiles"]["pricing_vol"] is None
    assert "not in the survey: zz_unknown" in err
    code, _, err = run(capsys, "survey", folder, "--pricing-vols", vols, "--pricing-vol", "0.2")
    assert code == 2 and "not allowed with argument" in err


def test_progress_bar_only_on_a_terminal(capsys, monkeypatch, folder):
    code, _, err = run(capsys, "survey", folder, "--jobs", "1")
    assert code == 0 and err == ""
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True)
    code, out, err = run(capsys, "survey", folder, "--jobs", "1", "--format", "json")
    assert code == 0 and "survey [" in err and "3/3 files" in err and err.endswith("\n")
    json.loads(out)  # stdout stays clean


def test_bad_settings_are_one_line_errors(capsys, folder):
    for argv, message in ((["--days", "0"], "days must be a whole number of bars >= 1, got 0"),
                          (["--window", "1"], "window must be >= 2 bars, got 1"),
                          (["--pricing-vol", "25"], "did you mean 0.25?"),
                          (["--jobs", "0"], "--jobs must be a whole number of workers >= 1, got 0")):
        code, out, err = run(capsys, "survey", folder, *argv)
        assert code == 2 and message in err and out == "", argv


def test_settings_come_from_the_shared_groups(capsys, sample_dir):
    # the cone, scaling and estimation options are the groups every command builds, so the
    # survey's figures follow them and equal the core's for the same group objects
    from volbench.data import load_prices
    from volbench.settings import ConeSettings, EstimationSettings, ScalingSettings
    from volbench.survey import SurveySettings, survey_groups, survey_history

    f = sample_dir / "kestrel_orchards.csv"
    code, out, _ = run(capsys, "survey", f, "--cone-estimator", "parkinson", "--windows", "10,21,63",
                       "--horizons", "2,4", "--alpha", "0.01", "--window", "30", "--annualization", "260",
                       "--jobs", "1", "--format", "json")
    assert code == 0
    d = json.loads(out)
    s = d["settings"]
    assert (s["cone_estimator"], s["cone_windows"], s["horizons"], s["alpha"], s["window"], s["annualization"]) == (
        "parkinson", [10, 21, 63], [1, 2, 4], 0.01, 30, 260.0)
    groups = survey_groups(estimation=EstimationSettings(window=30, annualization=260),
                           cone=ConeSettings(estimator="parkinson", windows=(10, 21, 63)),
                           scaling=ScalingSettings(horizons=(2, 4), alpha=0.01))
    expected = survey_history(load_prices(f)[0], SurveySettings(groups=groups)).as_dict()
    row = d["series"][0]
    assert row["cone_percentile"] == expected["cone_percentile"]
    assert row["verdicts"] == expected["verdicts"]
    assert row["estimates"]["parkinson"] == expected["estimates"]["parkinson"]
    assert row["estimates"]["parkinson"]["n"] == 30


def test_survey_settings_pickle_with_every_group():
    import pickle

    from volbench.survey import SurveySettings

    s = SurveySettings.build(window=30, days=10, pricing_vols={"a": 0.2}, with_garch=True, garch_models="all")
    back = pickle.loads(pickle.dumps(s))
    assert back == s and back.groups == s.groups and back.garch.models == s.garch.models
    assert back.pricing_vol_for("a") == 0.2


@pytest.mark.parametrize("argv, message", [
    (("--windows", "0"), "--windows must be positive whole numbers"),
    (("--horizons", "x"), "horizons must be whole numbers separated by commas"),
    (("--cone-estimator", "nope"), "unknown estimator 'nope'"),
    (("--window", "1"), "window must be >= 2 bars, got 1"),
])
def test_bad_group_values_get_the_shared_messages(capsys, sample_dir, argv, message):
    code, out, err = run(capsys, "survey", sample_dir / "kestrel_orchards.csv", *argv, "--jobs", "1")
    assert code == 2 and out == ""
    assert message in err
