"""``volbench compare --quotes``: the market's at-the-money implied vol as a candidate, and the market comparison."""

from __future__ import annotations

import json
import math

import pytest

from volbench.cli import main
from volbench.pricing.bsm import bsm_greeks


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def files(sample_dir):
    return sample_dir / "ironvale_mining.csv", sample_dir / "quotes" / "ironvale_mining_quotes.csv"


def test_the_atm_implied_vol_joins_the_comparison_unscaled(capsys, files):
    prices, quotes = files
    code, out, err = run(capsys, "compare", prices, "--pricing-vol", "0.3", "--expiry", "2024-12-20", "--rate", "0.03",
                         "--quotes", quotes, "--with-garch", "--format", "json")
    assert code == 0, err
    d = json.loads(out)
    # the same quotes through 'volbench implied' at the same spot (the last close) and rate
    code, out2, _ = run(capsys, "implied", quotes, "--as-of", d["as_of"], "--spot", repr(d["option"]["spot"]), "--rate", "0.03",
                        "--format", "json")
    assert code == 0
    atm = next(t["atm_implied_vol"] for t in json.loads(out2)["term_structure"] if t["expiry"] == "2024-12-20")
    row = next(r for r in d["candidates"] if r["key"] == "market:atm_implied")
    assert row["source"] == "market" and row["vol"] == atm  # an implied vol is not rescaled by basis_factor
    assert d["basis_factor"] != 1.0
    # repriced like every candidate: BSM at the implied vol over ACT/365 years (reference: volbench's BSM,
    # pinned to Hull's example in tests/pricing/test_bsm.py)
    assert row["price"] == pytest.approx(bsm_greeks(d["option"]["spot"], d["option"]["strike"], d["years"], 0.03, atm).price, rel=1e-12)
    m = d["market"]
    assert m["atm_implied_vol"] == atm and m["expiry"] == "2024-12-20"
    yz = next(r for r in d["candidates"] if r["key"] == "yang_zhang")
    assert m["realized_vol"] == yz["vol"] and m["implied_minus_realized_points"] == pytest.approx(100 * (atm - yz["vol"]))
    egarch = next(r for r in d["candidates"] if "preferred fit" in (r["note"] or ""))
    assert m["forecast_vol"] == pytest.approx(egarch["vol"], rel=1e-12)
    # the variance risk premium in vol points: implied minus forecast (Carr & Wu 2009)
    assert m["spread_points"] == pytest.approx(100 * (atm - egarch["vol"]), rel=1e-12)
    assert m["implied_minus_pricing_points"] == pytest.approx(100 * (atm - 0.3))
    assert 0 <= m["cone_percentile"] <= 100
    assert [t["expiry"] for t in m["term_structure"]] == ["2024-11-15", "2024-12-20", "2025-01-17", "2025-03-21",
                                                          "2025-06-20"]
    assert len(m["versus_history"]) == 5 and all(r["spread_points"] is not None for r in m["versus_history"])
    assert any("at-the-money implied vol for 2024-12-20" in line for line in m["reading"])


def test_table_shows_the_market_rows_and_reading(capsys, files):
    prices, quotes = files
    code, out, _ = run(capsys, "compare", prices, "--pricing-vol", "0.3", "--days", "30", "--quotes", quotes)
    assert code == 0
    assert "ATM implied (quotes)" in out
    assert "market: at-the-money implied vol from ironvale_mining_quotes.csv" in out
    assert "implied - forecast (EWMA (lambda 0.94))" in out  # no GARCH asked for: EWMA is the forecast
    assert "the variance risk premium in vol terms" in out
    assert "implied term structure" in out


def test_an_expiry_beyond_the_quotes_has_no_market_candidate_but_the_comparison_goes_on(capsys, files):
    prices, quotes = files
    code, out, _ = run(capsys, "compare", prices, "--pricing-vol", "0.3", "--expiry", "2025-09-19", "--quotes",
                       quotes, "--format", "json")
    assert code == 0
    d = json.loads(out)
    assert not any(r["source"] == "market" for r in d["candidates"])
    assert "does not extrapolate" in d["unavailable"]["market"]
    assert d["market"]["atm_implied_vol"] is None and math.isfinite(d["pricing"]["price"])


def test_without_quotes_the_market_is_not_requested(capsys, files):
    prices, _ = files
    code, out, _ = run(capsys, "compare", prices, "--pricing-vol", "0.3", "--days", "30", "--format", "json")
    d = json.loads(out)
    assert code == 0 and d["market"] is None and d["unavailable"]["quotes"] == "not requested"


@pytest.mark.parametrize("argv, message", [
    (["export", "{prices}", "--to", "{tmp}/x.json", "--quotes", "{quotes}"],
     "--quotes joins a comparison: also give --pricing-vol and --days (or --expiry)"),
    (["compare", "{prices}", "--pricing-vol", "0.3", "--days", "30", "--quotes", "{tmp}/none.csv"], "none.csv"),
    (["export", "{prices}", "{prices2}", "--to", "{tmp}/x.json", "--pricing-vol", "0.3", "--days", "30", "--quotes",
      "{quotes}"], "--quotes holds one underlying's options, but the export has 2 series"),
])
def test_bad_quotes_options_exit_2(capsys, files, tmp_path, argv, message):
    prices, quotes = files
    other = prices.parent / "kestrel_orchards.csv"
    argv = [a.replace("{prices2}", str(other)).replace("{prices}", str(prices)).replace("{quotes}", str(quotes))
            .replace("{tmp}", str(tmp_path)) for a in argv]
    code, out, err = run(capsys, *argv)
    assert code == 2 and out == "" and message in err and err.count("\n") == 1
    assert not (tmp_path / "x.json").exists()
