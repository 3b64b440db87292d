"""garch, scaling, hindsight and survey take the option's life group: --days N (trading days by
default, as before), or --expiry YYYY-MM-DD resolved per series from its as-of date."""

from __future__ import annotations

import json
from pathlib import Path

from volbench.cli import main
from volbench.data import load_prices
from volbench.hindsight import hindsight

ROOT = Path(__file__).resolve().parents[2]
KESTREL = ROOT / "sample_prices" / "kestrel_orchards.csv"  # last row 2024-10-17, a Thursday
EXPIRY = "2024-11-15"  # 21 weekdays after 2024-10-17, 29 calendar days
IRONVALE = ROOT / "sample_prices" / "ironvale_mining.csv"  # last row 2024-10-17 too


def _json(capsys, *argv):
    code = main([*map(str, argv), "--format", "json"])
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out)


def _drop_life(d: dict) -> dict:
    return {k: v for k, v in d.items() if k != "life"}


def test_hindsight_days_unchanged_and_expiry_equals_its_trading_days(capsys):
    by_days = _json(capsys, "hindsight", KESTREL, "--days", 21, "--windows", "20,60", "--step", 5)
    by_expiry = _json(capsys, "hindsight", KESTREL, "--expiry", EXPIRY, "--windows", "20,60", "--step", 5)
    (d,), (e,) = by_days["series"], by_expiry["series"]
    core = hindsight(load_prices(KESTREL)[0], 21, windows=(20, 60), step=5)
    # agreement checks: --days N is N trading bars as before; an expiry 21 weekdays out is --days 21
    # (common practice, no source)
    assert d["days"] == 21 and d["best"] == core.best and d["candidates"][0]["qlike"] == core.scores["qlike"].iloc[0]
    assert _drop_life(d) == _drop_life(e)
    assert (e["life"]["expiry"], e["life"]["calendar_days"], e["life"]["trading_days"]) == (EXPIRY, 29, 21)
    assert d["life"]["trading_days"] == 21 and d["life"]["given_as"] == "trading days"


def test_hindsight_without_a_life_says_what_to_give(capsys):
    assert main(["hindsight", str(KESTREL)]) == 2
    assert "--days N" in capsys.readouterr().err


def test_survey_days_unchanged_and_expiry_equals_its_trading_days_per_series(capsys):
    common = ("survey", KESTREL, "--pricing-vol", "0.25", "--jobs", 1)
    (before,) = _json(capsys, *common)["series"]  # no life given: the default 21 trading days, as before
    (by_days,) = _json(capsys, *common, "--days", 21)["series"]
    (by_expiry,) = _json(capsys, *common, "--expiry", EXPIRY)["series"]
    # agreement checks: --days 21 is the old 21 bars; an expiry 21 weekdays out is --days 21
    # (common practice, no source)
    assert before["life"] is None and before["days"] == by_days["days"] == by_expiry["days"] == 21
    assert _drop_life(before) == _drop_life(by_days) == _drop_life(by_expiry)
    assert (by_expiry["life"]["expiry"], by_expiry["life"]["calendar_days"],
            by_expiry["life"]["trading_days"]) == (EXPIRY, 29, 21)
    code = main([*map(str, common), "--expiry", EXPIRY])
    assert code == 0 and f"option life to expiry {EXPIRY}" in capsys.readouterr().out


def test_survey_calendar_days_become_each_series_trading_days(capsys):
    (d,) = _json(capsys, "survey", KESTREL, "--days", 29, "--day-basis", "calendar", "--jobs", 1)["series"]
    assert d["days"] == d["window"] == d["life"]["trading_days"] == 21 and d["life"]["calendar_days"] == 29


def test_garch_days_adds_the_life_and_expiry_equals_its_trading_days(capsys):
    common = ("garch", IRONVALE, "--model", "garch")
    (plain,) = _json(capsys, *common, "--horizons", "10,21,63")["series"]
    (by_days,) = _json(capsys, *common, "--horizons", "10,63", "--days", 21)["series"]
    (by_expiry,) = _json(capsys, *common, "--horizons", "10,63", "--expiry", EXPIRY)["series"]
    # agreement checks: --days 21 adds a 21-bar horizon, the same fit and forward vols as listing it;
    # an expiry 21 weekdays out is --days 21 (common practice, no source)
    assert "life" not in plain and _drop_life(plain) == _drop_life(by_days) == _drop_life(by_expiry)
    assert by_days["life"]["forward_vols"] == by_expiry["life"]["forward_vols"]
    fit = plain["models"][0]
    (at21,) = [t["vol"] for t in fit["term_structure"] if t["horizon"] == 21]
    assert by_expiry["life"]["forward_vols"]["garch"] == at21
    assert (by_expiry["life"]["expiry"], by_expiry["life"]["calendar_days"],
            by_expiry["life"]["trading_days"]) == (EXPIRY, 29, 21)


def test_scaling_days_leaves_the_check_alone_and_expiry_equals_its_trading_days(capsys):
    (plain,) = _json(capsys, "scaling", IRONVALE)["series"]
    (by_days,) = _json(capsys, "scaling", IRONVALE, "--days", 21)["series"]
    (by_expiry,) = _json(capsys, "scaling", IRONVALE, "--expiry", EXPIRY)["series"]
    (listed,) = _json(capsys, "scaling", IRONVALE, "--horizons", "21")["series"]
    # agreement checks: the life adds its horizon vol beside an unchanged check, the same row the check
    # gives for a 21-bar horizon; an expiry 21 weekdays out is --days 21 (common practice, no source)
    assert "life" not in plain and _drop_life(plain) == _drop_life(by_days) == _drop_life(by_expiry)
    assert by_days["life"]["annualized_vol"] == by_expiry["life"]["annualized_vol"]
    (row,) = [t for t in listed["horizons"] if t["h"] == 21]
    assert (by_expiry["life"]["annualized_vol"], by_expiry["life"]["sqrt_time_vol"]) == (
        row["annualized_vol"], row["sqrt_time_vol"])
    assert (by_expiry["life"]["expiry"], by_expiry["life"]["trading_days"]) == (EXPIRY, 21)
