"""``volbench compare`` carries what the pricing vol promises about the price (bands, breakevens)."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from volbench.cli import main
from volbench.data.load import load_prices
from volbench.pricing.compare import OptionSpec, compare
from volbench.pricing.daycount import option_life


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_compare_json_carries_the_same_band_numbers_as_the_core(capsys, sample_dir):
    path = sample_dir / "ironvale_mining.csv"
    code, out, err = run(capsys, "compare", str(path), "--pricing-vol", "0.25", "--days", "30", "--strike", "36",
                         "--type", "put", "--format", "json")
    assert code == 0 and err == ""
    d = json.loads(out)
    h = load_prices(path)[0]
    life = option_life(h.last_date, days=30, basis="trading")  # --days 30 counts trading days by default
    ref = compare(h, 0.25, 30, option=OptionSpec(strike=36.0, kind="put"), life=life).promises.as_dict()
    for key in ("bands", "bands_by_candidate", "band_scores", "straddle", "straddle_by_candidate", "breakeven",
                "breakeven_by_candidate"):
        assert d[key] == json.loads(json.dumps(ref[key])), key  # floats round-trip through JSON exactly
    assert [b["sigmas"] for b in d["bands"]] == [1.0, 2.0, 3.0]
    assert set(d["bands_by_candidate"]) == {c["key"] for c in d["candidates"]}
    assert d["breakeven"]["kind"] == "put" and d["breakeven"]["strike"] == 36.0
    assert d["price_promise"]["verdict"].startswith("History kept the bands of")
    assert d["price_promise"]["windows"] == 50
    # the bands spread vol x sqrt(years), years = calendar days / 365 (common practice, no source)
    one = next(b for b in d["bands_by_candidate"]["pricing"] if b["sigmas"] == 1.0)
    assert one["high_move"] == pytest.approx(np.expm1(0.25 * np.sqrt(life.calendar_days / 365)), rel=1e-13)


def test_compare_table_reads_the_promise_in_prices(capsys, sample_dir):
    code, out, _ = run(capsys, "compare", str(sample_dir / "kestrel_orchards.csv"), "--pricing-vol", "0.25",
                       "--days", "30")
    assert code == 0
    # 30 trading days from 2024-10-17 end on 2024-11-28, 42 calendar days: 25% x sqrt(42/365) = 8.48%,
    # so the band is exp(-0.0848) - 1 = -8.1% to exp(0.0848) - 1 = +8.9% (common practice, no source)
    assert "- at 25.0%, a 30-bar move outside ±1 sigma (-8.1% to +8.9%) should happen 31.7% of the time" in out
    assert "- an at-the-money straddle at 25.0% costs" in out and "- History kept the bands of" in out
    assert "note: the ±3 sigma band promises 0.27% of moves outside it" in out


def test_compare_on_a_history_shorter_than_the_option_life_says_why_bands_are_missing(capsys, tmp_path):
    rng = np.random.default_rng(3)
    dates = pd.bdate_range("2024-01-01", periods=25)
    path = tmp_path / "short.csv"
    pd.DataFrame({"Date": dates.strftime("%Y-%m-%d"),
                  "Close": 20 * np.exp(np.cumsum(rng.normal(0, 0.01, 25)))}).to_csv(path, index=False)
    code, out, _ = run(capsys, "compare", str(path), "--pricing-vol", "0.2", "--days", "20", "--window", "10",
                       "--format", "json")
    assert code == 0
    d = json.loads(out)
    assert d["price_promise"]["windows"] == 1
    assert d["price_promise"]["warnings"][0].startswith("only 1 non-overlapping 20-bar windows")
    code, out, _ = run(capsys, "compare", str(path), "--pricing-vol", "0.2", "--days", "30", "--window", "10")
    assert code == 0
    assert "price bands (short: 25 closes hold no complete 30-bar move; need at least 31 closes" in out
