"""``volbench implied``: one premium, and a quotes file with and without a price history."""

from __future__ import annotations

import csv
import io
import json

import pytest

from volbench.cli import main

SAMPLE_QUOTES = "quotes/ironvale_mining_quotes.csv"


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


HULL = ("--spot", "42", "--strike", "40", "--rate", "0.1")


def test_single_premium_json_hull_example(capsys):
    # Hull, Options, Futures and Other Derivatives, worked example (from memory): sigma = 0.20 gives
    # c = 4.76; the rounded premium solves to a vol within 0.01 vol points of 20 %.
    code, out, err = run(capsys, "implied", *HULL, "--years", "0.5", "--premium", "4.76", "--type", "call",
                         "--format", "json")
    assert code == 0 and err == ""
    d = json.loads(out)
    assert {"implied_vol", "price_check", "vega", "status"} <= set(d)
    assert d["status"] == "ok" and d["implied_vol"] == pytest.approx(0.2, abs=1e-4)
    assert d["price_check"] == pytest.approx(4.76, abs=1e-12) and d["vega"] > 8
    assert d["life"] is None


def test_single_premium_table(capsys):
    code, out, _ = run(capsys, "implied", *HULL, "--years", "0.5", "--premium", "0.81", "--type", "put")
    assert code == 0
    assert "implied vol" in out and "status" in out and "0 < put < 38.0" in out


@pytest.mark.parametrize("premium, kind, status", [("1.5", "call", "below_lower_bound"),
                                                   ("42", "call", "above_upper_bound"),
                                                   ("39", "put", "above_upper_bound")])
def test_out_of_bounds_premium_exits_2_with_the_bounds(capsys, premium, kind, status):
    code, out, err = run(capsys, "implied", *HULL, "--years", "0.5", "--premium", premium, "--type", kind)
    assert code == 2 and out == ""
    assert err.startswith("volbench: ") and err.count("\n") == 1
    assert "(bounds: " in err and "no-arbitrage" in err
    code, out, err = run(capsys, "implied", *HULL, "--years", "0.5", "--premium", premium, "--type", kind,
                         "--format", "json")
    assert code == 2 and json.loads(out)["status"] == status and json.loads(out)["implied_vol"] is None
    assert "(bounds: " in err


def test_negligible_vega_exits_2(capsys):
    code, _, err = run(capsys, "implied", "--spot", "100", "--strike", "75", "--rate", "0", "--years", "0.05",
                       "--premium", "25.000000001", "--type", "call")
    assert code == 2 and ("negligible" in err or "lower bound" in err) and "(bounds: " in err


def test_expiry_and_days_give_the_same_numbers_as_years(capsys, tmp_path):
    hol = tmp_path / "holidays.txt"
    hol.write_text("2024-12-25\n2024-12-26\n2025-01-01\n")
    outs = []
    for life in (["--expiry", "2025-01-17"], ["--days", "28", "--day-basis", "calendar"],
                 ["--days", "17", "--holidays", str(hol)], ["--years", str(28 / 365)]):
        extra = [] if life[0] == "--years" else ["--as-of", "2024-12-20"]
        code, out, _ = run(capsys, "implied", *HULL, *life, *extra, "--premium", "2.5", "--type", "call",
                           "--format", "json")
        assert code == 0
        outs.append(json.loads(out))
    assert len({d["implied_vol"] for d in outs}) == 1  # the same option, whichever way its life is given
    assert outs[0]["life"]["calendar_days"] == 28 and outs[0]["life"]["trading_days"] == 20
    assert outs[2]["life"]["trading_days"] == 17 and outs[2]["life"]["expiry"] == "2025-01-17"


def test_single_premium_usage_errors(capsys):
    code, _, err = run(capsys, "implied", *HULL, "--premium", "2", "--type", "call")
    assert code == 2 and "give the option's life one way" in err
    code, _, err = run(capsys, "implied", *HULL, "--expiry", "2025-01-17", "--premium", "2", "--type", "call")
    assert code == 2 and "--expiry needs --as-of" in err
    code, _, err = run(capsys, "implied", "--spot", "42", "--rate", "0.1", "--years", "1", "--premium", "2")
    assert code == 2 and "one premium needs --strike, --type" in err
    code, _, err = run(capsys, "implied", *HULL, "--years", "1", "--premium", "2", "--type", "call", "--rate", "5")
    assert code == 2 and "did you mean 0.05" in err


def test_quotes_file_json_shapes(capsys, sample_dir):
    meta = json.loads((sample_dir / "PARAMETERS.json").read_text())["option_quotes"]
    code, out, err = run(capsys, "implied", str(sample_dir / SAMPLE_QUOTES), "--spot", str(meta["spot"]),
                         "--rate", str(meta["rate"]), "--as-of", meta["as_of"], "--format", "json")
    assert code == 0 and err == ""
    d = json.loads(out)
    assert {"quotes", "term_structure", "versus_history"} <= set(d) and d["versus_history"] == []
    q = d["quotes"][0]
    assert {"expiry", "strike", "type", "premium", "years", "implied_vol", "status"} <= set(q)
    assert [t["expiry"] for t in d["term_structure"]] == meta["expiries"]
    for t in d["term_structure"]:
        assert {"expiry", "trading_days", "years", "atm_implied_vol", "forward_implied_vol"} <= set(t)
        assert t["years"] == t["calendar_days"] / 365


def test_quotes_file_with_prices(capsys, sample_dir):
    meta = json.loads((sample_dir / "PARAMETERS.json").read_text())["option_quotes"]
    code, out, _ = run(capsys, "implied", str(sample_dir / SAMPLE_QUOTES), "--rate", str(meta["rate"]),
                       "--as-of", meta["as_of"], "--prices", str(sample_dir / "ironvale_mining.csv"),
                       "--format", "json")
    assert code == 0
    d = json.loads(out)
    assert d["spot"] == meta["spot"] and "last close" in d["spot_from"]
    rows = d["versus_history"]
    assert len(rows) == len(meta["expiries"])
    for r in rows:
        assert {"expiry", "atm_implied_vol", "realized_vol", "forecast_vol", "forecast_source", "cone_percentile",
                "spread_points"} <= set(r)
        assert r["spread_points"] == pytest.approx(100 * (r["atm_implied_vol"] - r["forecast_vol"]))
    code, out, _ = run(capsys, "implied", str(sample_dir / SAMPLE_QUOTES), "--rate", str(meta["rate"]),
                       "--as-of", meta["as_of"], "--prices", str(sample_dir / "ironvale_mining.csv"))
    assert code == 0
    assert "implied term structure" in out and "spread (pts)" in out and "model risk" in out


def test_quotes_file_csv(capsys, sample_dir):
    meta = json.loads((sample_dir / "PARAMETERS.json").read_text())["option_quotes"]
    code, out, _ = run(capsys, "implied", str(sample_dir / SAMPLE_QUOTES), "--spot", str(meta["spot"]),
                       "--rate", str(meta["rate"]), "--as-of", meta["as_of"], "--format", "csv")
    assert code == 0
    rows = list(csv.DictReader(io.StringIO(out)))
    data_lines = (sample_dir / SAMPLE_QUOTES).read_text().strip().count("\n")  # every quote row, one line each
    assert len(rows) == data_lines and rows[0]["line"] == "2" and rows[0]["expiry"] == "2024-11-15"
    assert {"implied_vol", "status", "iv_bid", "iv_ask"} <= set(rows[0])


def test_quotes_file_usage_errors(capsys, sample_dir):
    path = str(sample_dir / SAMPLE_QUOTES)
    code, _, err = run(capsys, "implied", path, "--spot", "34", "--rate", "0.03")
    assert code == 2 and "needs --as-of" in err
    code, _, err = run(capsys, "implied", path, "--rate", "0.03", "--as-of", "2024-10-17")
    assert code == 2 and "needs --spot S (or --prices FILE" in err
    code, _, err = run(capsys, "implied", path, "--spot", "34", "--rate", "0.03", "--as-of", "2024-10-17",
                       "--strike", "30")
    assert code == 2 and "--strike belongs to the one-premium form" in err
    code, _, err = run(capsys, "implied", path, "--spot", "34", "--rate", "0.03", "--as-of", "2024-10-17",
                       "--cone-estimator", "gk")
    assert code == 2 and "unknown estimator 'gk'" in err
