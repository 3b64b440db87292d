"""``volbench scaling`` from the command line."""

from __future__ import annotations

import json
import re

import numpy as np
import pandas as pd
import pytest

from volbench.cli import main


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def _csv(path, closes):
    dates = pd.date_range("2021-01-04", periods=len(closes), freq="B")
    pd.DataFrame({"date": dates.strftime("%Y-%m-%d"), "close": closes}).to_csv(path, index=False)
    return path


def test_json_has_the_issue_shape(capsys, sample_dir):
    code, out, err = run(capsys, "scaling", sample_dir / "kestrel_orchards.csv", sample_dir / "ironvale_mining.csv",
                         "--format", "json")
    assert code == 0 and err == ""
    d = json.loads(out)
    assert [s["name"] for s in d["series"]] == ["kestrel_orchards", "ironvale_mining"]
    s = d["series"][0]
    for key in ("name", "horizons", "slope", "slope_ci", "hurst", "chow_denning_p", "ljung_box", "drift", "verdicts"):
        assert key in s
    assert [h["h"] for h in s["horizons"]] == [1, 2, 5, 10, 20, 40, 60]
    assert {"h", "variance", "variance_nonoverlap", "n_nonoverlap", "annualized_vol", "sqrt_time_vol",
            "variance_ratio", "z", "z_robust", "p_value", "p_value_robust", "skew", "excess_kurtosis",
            "jarque_bera_p"} <= set(s["horizons"][0])
    assert s["horizons"][0]["z"] is None  # undefined at h = 1: null, not NaN
    assert [v["property"] for v in s["verdicts"]] == ["variance_proportional_to_horizon", "normal_increments",
                                                      "independent_increments", "negligible_drift",
                                                      "continuous_paths"]
    assert s["continuity"]["method"] == "lee_mykland" and s["continuity"]["low_power"] is True
    assert {v["status"] for v in s["verdicts"]} <= {"consistent", "doubtful", "rejected"}
    assert s["flagged_rows"] == "kept"


def test_sample_verdicts_are_sensible(capsys, sample_dir):
    # sample_prices/PARAMETERS.json: kestrel is geometric Brownian motion, ironvale GARCH(1,1)
    # (alpha 0.09, beta 0.89): theory says the first scales like Brownian motion and the second
    # shows volatility clustering (Engle 1982; Bollerslev 1986).
    code, out, _ = run(capsys, "scaling", sample_dir / "kestrel_orchards.csv", sample_dir / "ironvale_mining.csv",
                       "--format", "json")
    assert code == 0
    kestrel, ironvale = json.loads(out)["series"]
    k = {v["property"]: v["status"] for v in kestrel["verdicts"]}
    assert k["variance_proportional_to_horizon"] == "consistent"
    assert k["independent_increments"] == "consistent"
    assert kestrel["slope_ci"][0] < 1 < kestrel["slope_ci"][1]
    iv = {v["property"]: v for v in ironvale["verdicts"]}
    assert iv["independent_increments"]["status"] == "rejected"
    assert "volatility clusters" in iv["independent_increments"]["message"]
    assert all(row["p_squared"] < 0.001 for row in ironvale["ljung_box"])


def test_table_output_reads_as_a_report(capsys, sample_dir):
    code, out, err = run(capsys, "scaling", sample_dir / "kestrel_orchards.csv", "--horizons", "1,5,20",
                         "--alpha", "0.1", "--annualization", "252")
    assert code == 0 and err == ""
    assert out.startswith("kestrel_orchards  (kestrel_orchards.csv: 1512 rows, 2019-01-02 to ")
    assert "significance level 0.1" in out
    for label in ("variance proportional to horizon:", "normal increments:", "independent increments:",
                  "negligible drift:", "Ljung-Box", "log-log slope", "Chow-Denning", "drift: mean"):
        assert label in out
    assert "90% interval" in out
    assert "not advice" in out


def test_short_file_drops_horizons_and_says_why(capsys, tmp_path):
    closes = 100 * np.exp(np.cumsum(np.random.default_rng(1).standard_normal(201) * 0.01))
    f = _csv(tmp_path / "short.csv", closes)
    code, out, _ = run(capsys, "scaling", f, "--format", "json")
    assert code == 0
    s = json.loads(out)["series"][0]
    assert s["dropped"]["40"].startswith("needs at least 10 non-overlapping 40-bar returns")
    code, out, _ = run(capsys, "scaling", f)
    assert "horizon 60 left out: needs at least 10 non-overlapping 60-bar returns (600 returns); " \
           "the history has 200" in out


@pytest.mark.parametrize("argv, message", [
    (["--horizons", "0,5"], r"^volbench: horizons must be positive whole numbers separated by commas; got '0,5'$"),
    (["--horizons", "a"], r"^volbench: horizons must be whole numbers separated by commas"),
    (["--horizons", "1"], r"^volbench: horizons must include at least one horizon of 2 bars or more"),
    (["--alpha", "5"], (r"^volbench: alpha must be a significance level between 0 and 0.5 \(e.g. 0.05\), got 5; "
                       r"it looks like a percent: did you mean 0.05\?$")),
    (["--annualization", "0"], r"^volbench: annualization must be > 0 bars per year"),
])
def test_bad_settings_exit_2_with_one_line(capsys, sample_dir, argv, message):
    code, out, err = run(capsys, "scaling", sample_dir / "kestrel_orchards.csv", *argv)
    assert code == 2 and out == ""
    assert len(err.strip().splitlines()) == 1
    assert re.search(message, err.strip())


def test_too_short_and_constant_files_exit_2_naming_the_series(capsys, tmp_path):
    short = _csv(tmp_path / "stub.csv", np.linspace(10, 11, 12))
    code, _, err = run(capsys, "scaling", short)
    assert code == 2 and len(err.strip().splitlines()) == 1
    assert re.search(r"^volbench: stub: only 11 returns \(12 rows\); the scaling check needs at least 30", err)
    flat = _csv(tmp_path / "flat.csv", np.full(80, 7.5))
    code, _, err = run(capsys, "scaling", flat)
    assert code == 2
    assert re.search(r"^volbench: flat: prices are constant \(every return is zero\)", err)


def test_missing_file_exit_2(capsys, tmp_path):
    code, out, err = run(capsys, "scaling", tmp_path / "nope.csv")
    assert code == 2 and out == "" and len(err.strip().splitlines()) == 1
    assert "nope.csv" in err


def test_exclude_flagged_is_reported(capsys, sample_dir):
    code, out, _ = run(capsys, "scaling", sample_dir / "quillon_textiles.csv", "--exclude-flagged", "--format", "json")
    assert code == 0
    s = json.loads(out)["series"][0]
    assert s["flagged_rows"] == "excluded" and s["provenance"]["excluded_lines"]
    code, out, _ = run(capsys, "scaling", sample_dir / "quillon_textiles.csv")
    assert "flagged rows kept" in out and "note: the data-quality check found" in out


def test_help(capsys):
    code, out, _ = run(capsys, "scaling", "--help")
    assert code == 0
    for opt in ("--horizons", "--alpha", "--annualization", "--format", "--exclude-flagged", "FILE"):
        assert opt in out
