"""``volbench cone``, ``volbench compare`` and ``volbench price`` from the command line."""

from __future__ import annotations

import json
import re

import numpy as np
import pandas as pd
import pytest

from volbench.cli import main


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


# ---------------------------------------------------------------------------- price
def test_price_json_hull_example(capsys):
    # Hull, Options, Futures and Other Derivatives, worked example (from memory): c = 4.76, p = 0.81.
    code, out, err = run(capsys, "price", "--spot", "42", "--strike", "40", "--rate", "0.1", "--vol", "0.2",
                         "--years", "0.5", "--format", "json")
    assert code == 0 and err == ""
    d = json.loads(out)
    assert round(d["call"]["price"], 2) == 4.76 and round(d["put"]["price"], 2) == 0.81
    for kind in ("call", "put"):
        assert {"price", "delta", "gamma", "vega", "theta", "rho"} <= set(d[kind])
    assert d["units"]["theta_day"] == "per calendar day (theta / 365)"
    assert d["inputs"]["dividend_yield"] == 0.0


def test_price_table(capsys):
    code, out, _ = run(capsys, "price", "--spot", "42", "--strike", "40", "--rate", "0.1", "--vol", "0.2",
                       "--years", "0.5", "--dividend-yield", "0")
    assert code == 0
    lines = out.splitlines()
    assert lines[0] == ("Black-Scholes-Merton: spot 42, strike 40, 0.5 years, rate 10.00%, dividend yield 0.00%, "
                        "vol 20.00%")
    assert lines[3].split() == ["price", "4.7594", "0.8086"]
    assert any(line.startswith("theta (per calendar day)") for line in lines)


@pytest.mark.parametrize("argv,message", [
    (["--vol", "20"], (r"pricing vol must be a decimal below 5 \(0.25 means 25%\), got 20; it looks like a percent: "
                      r"did you mean 0.2\?")),
    (["--vol", "0"], "pricing vol must be > 0"),
    (["--spot", "-1"], "spot must be a positive finite number, got -1"),
    (["--years", "0"], "years to expiry must be a positive finite number, got 0"),
    (["--rate", "5"], r"--rate must be a decimal between -1 and 1 .*did you mean 0.05\?"),
    (["--strike", "abc"], "--strike must be a number, got 'abc'"),
    (["--years", "nan"], "--years must be a finite number, got 'nan'"),
])
def test_price_bad_input_exit_2_one_line(capsys, argv, message):
    base = {"--spot": "42", "--strike": "40", "--rate": "0.1", "--vol": "0.2", "--years": "0.5"}
    base.update(dict(zip(argv[::2], argv[1::2])))
    code, out, err = run(capsys, "price", *[x for kv in base.items() for x in kv])
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and err.startswith("volbench: ")
    assert re.search(message, err)


# ---------------------------------------------------------------------------- cone
def test_cone_table_on_sample(capsys, sample_dir):
    code, out, err = run(capsys, "cone", str(sample_dir / "kestrel_orchards.csv"))
    assert code == 0 and err == ""
    lines = out.splitlines()
    assert "close-to-close vol cone, 2019-01-02 to" in lines[0]
    assert lines[1].split()[:8] == ["window", "min", "10%", "25%", "median", "75%", "90%", "max"]
    assert [ln.split()[0] for ln in lines[3:9]] == ["10", "20", "40", "60", "120", "250"]
    assert "not advice" in out


def test_cone_json_matches_core(capsys, sample_dir):
    from volbench.data import load_prices
    from volbench.pricing.cone import vol_cone

    path = sample_dir / "ironvale_mining.csv"
    code, out, _ = run(capsys, "cone", str(path), "--windows", "10,60", "--estimator", "yang_zhang",
                       "--start", "2020-01-01", "--end", "2022-12-31", "--hodges-tompkins", "--format", "json")
    assert code == 0
    d = json.loads(out)["series"][0]
    core = vol_cone(load_prices(path)[0], "yang_zhang", (10, 60), start="2020-01-01", end="2022-12-31",
                    hodges_tompkins=True)
    assert d["estimator"] == "yang_zhang" and d["hodges_tompkins"] is True
    assert [w["window"] for w in d["windows"]] == [10, 60]
    assert d["windows"][1]["p90_adj"] == pytest.approx(core.table.loc[60, "p90_adj"])
    assert d["start"] >= "2020-01-01" and d["end"] <= "2022-12-31"


def test_cone_several_files_and_hodges_tompkins_table(capsys, sample_dir):
    code, out, _ = run(capsys, "cone", str(sample_dir / "kestrel_orchards.csv"),
                       str(sample_dir / "saltmarsh_ferries.csv"), "--hodges-tompkins", "--start", "2024-01-01")
    assert code == 0
    assert out.count("vol cone,") == 2
    assert "HT factor" in out and "Hodges & Tompkins 2002" in out
    assert "dropped window 250: window 250 needs 251 rows" in out


@pytest.mark.parametrize("argv,message", [
    (["--estimator", "gk"], "unknown estimator 'gk'; choose one of: close_to_close"),
    (["--windows", "10,x"], "--windows must be whole numbers separated by commas"),
    (["--windows", "1,20"], "window must be >= 2 bars, got 1"),
    (["--start", "2024-05-01", "--end", "2024-01-01"], "start date 2024-05-01 is after end date 2024-01-01"),
    (["--annualization", "0"], "annualization must be > 0"),
])
def test_cone_bad_input_exit_2(capsys, sample_dir, argv, message):
    code, out, err = run(capsys, "cone", str(sample_dir / "kestrel_orchards.csv"), *argv)
    assert code == 2 and out == "" and err.count("\n") == 1
    assert message in err


def test_cone_missing_file(capsys, tmp_path):
    code, _, err = run(capsys, "cone", str(tmp_path / "nope.csv"))
    assert code == 2 and "nope.csv" in err


# ---------------------------------------------------------------------------- compare
def test_compare_table_reads_in_ten_seconds(capsys, sample_dir):
    code, out, err = run(capsys, "compare", str(sample_dir / "kestrel_orchards.csv"),
                         "--pricing-vol", "0.25", "--days", "30")
    assert code == 0 and err == ""
    assert "call expiring 2024-11-28: 42 calendar days = 0.1151 years (ACT/365), 30 trading days" in out
    assert "(last close)" in out and "(at the money)" in out
    table = [ln for ln in out.splitlines() if ln.startswith(("Pricing vol", "Close-to-close", "Yang-Zhang"))]
    assert len(table) == 3 and table[0].split()[:3] == ["Pricing", "vol", "25.00%"]
    assert ("not shown: GARCH (not requested; add --with-garch), scaling check (not requested; add --with-scaling), "
            "market implied vol (not requested; add --quotes FILE)") in out
    assert "- pricing vol 25.0% (as " in out and "over 30 trading days, the cone's basis) sits at the " in out
    assert "percentile of 30-bar close-to-close vol, interpolated between the 20- and 40-bar cone columns" in out
    assert "vol points above Yang-Zhang" in out or "vol points below Yang-Zhang" in out


def test_compare_json_put_with_strike(capsys, sample_dir):
    code, out, _ = run(capsys, "compare", str(sample_dir / "saltmarsh_ferries.csv"), "--pricing-vol", "0.3",
                       "--days", "60", "--strike", "70", "--rate", "0.04", "--dividend-yield", "0.01",
                       "--type", "put", "--window", "40", "--format", "json")
    assert code == 0
    d = json.loads(out)
    assert d["option"]["kind"] == "put" and d["option"]["strike"] == 70.0 and d["option"]["rate"] == 0.04
    assert d["window"] == 40 and d["days"] == 60 and d["cone"]["windows"] == [60]
    assert d["candidates"][0]["source"] == "pricing" and d["candidates"][0]["gap_points"] == 0.0
    assert d["unavailable"] == {"garch": "not requested", "scaling": "not requested", "quotes": "not requested",
                                "events": "not requested"}


def test_compare_with_scaling(capsys, sample_dir):
    code, out, _ = run(capsys, "compare", str(sample_dir / "kestrel_orchards.csv"), "--pricing-vol", "0.25",
                       "--days", "20", "--with-scaling", "--format", "json")
    assert code == 0
    d = json.loads(out)
    assert [c["source"] for c in d["candidates"]].count("scaling") == 1


@pytest.mark.parametrize("argv,message", [
    (["--pricing-vol", "25", "--days", "30"], ("pricing vol must be a decimal below 5 (0.25 means 25%), got 25; "
                                              "it looks like a percent: did you mean 0.25?")),
    (["--pricing-vol", "0.25", "--days", "0"], "days must be a whole number of bars >= 1, got 0"),
    (["--pricing-vol", "0.25", "--days", "2.5"], "days must be a whole number of bars >= 1, got 2.5"),
    (["--pricing-vol", "0.25", "--days", "30", "--window", "1"], "window must be >= 2 bars, got 1"),
    (["--pricing-vol", "0.25", "--days", "30", "--strike", "-2"], "strike must be a positive price, got -2"),
    (["--pricing-vol", "0.25", "--days", "30", "--rate", "3"], "volbench: rate must be a decimal between -1 and 1"),
    (["--pricing-vol", "0.25", "--days", "30", "--cone-estimator", "x"], "unknown estimator 'x'"),
    (["--pricing-vol", "0.25", "--days", "30", "--series", "NOPE"], "no series 'NOPE' in the file; it holds:"),
])
def test_compare_bad_input_exit_2(capsys, sample_dir, argv, message):
    code, out, err = run(capsys, "compare", str(sample_dir / "kestrel_orchards.csv"), *argv)
    assert code == 2 and out == "" and err.count("\n") == 1
    assert message in err


def test_compare_missing_required_option(capsys, sample_dir):
    code, _, err = run(capsys, "compare", str(sample_dir / "kestrel_orchards.csv"), "--days", "30")
    assert code == 2 and "--pricing-vol" in err


def test_compare_file_with_several_series_needs_series(capsys, tmp_path):
    rng = np.random.default_rng(1)
    dates = pd.bdate_range("2021-01-01", periods=120)
    frames = [pd.DataFrame({"Date": dates.strftime("%Y-%m-%d"), "Symbol": sym,
                            "Close": 50 * np.exp(np.cumsum(rng.standard_normal(120) * 0.01))})
              for sym in ("ALPHA-FICT", "BETA-FICT")]
    path = tmp_path / "two.csv"
    pd.concat(frames).to_csv(path, index=False)
    code, _, err = run(capsys, "compare", str(path), "--pricing-vol", "0.2", "--days", "20")
    assert code == 2
    assert "the file holds 2 series (ALPHA-FICT, BETA-FICT); choose one with --series NAME" in err
    code, out, _ = run(capsys, "compare", str(path), "--pricing-vol", "0.2", "--days", "20", "--series", "BETA-FICT")
    assert code == 0 and out.startswith("BETA-FICT")
