"""The per-series survey gives the single-series commands' numbers, and bad input is a row.

Reference for every number here: volbench's own single-series commands run on the same files
with the same settings (the survey must not compute anything of its own).
"""

from __future__ import annotations

import json
import shutil

import pytest

from volbench.cli import main
from volbench.data import load_prices
from volbench.errors import VolbenchError
from volbench.pricing.compare import compare
from volbench.survey import (
    SurveySettings,
    read_pricing_vols,
    run_survey,
    survey_file,
    survey_history,
)
from volbench.survey.record import SurveyRecord

SAMPLES = ("ironvale_mining.csv", "kestrel_orchards.csv", "quillon_textiles.csv", "saltmarsh_ferries.csv",
           "vell_harbour_index.csv")


def cli_json(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out)


@pytest.fixture
def book(tmp_path, sample_dir, write_prices):
    """The five sample files plus a long file holding two symbols, one of them also a sample name."""
    for name in SAMPLES:
        shutil.copy(sample_dir / name, tmp_path / name)
    write_prices("long.csv", 700, 3, symbols=["gannet_rail", "kestrel_orchards"])
    return [tmp_path / n for n in (*SAMPLES, "long.csv")]


def test_survey_equals_the_single_series_commands(capsys, book):
    days = 20  # a cone window, so 'volbench cone' prints the same current percentile
    args = ["--window", 20]
    survey = cli_json(capsys, "survey", *book, *args, "--days", days, "--pricing-vol", 0.25, "--with-garch",
                      "--jobs", 1, "--format", "json")
    estimate = cli_json(capsys, "estimate", *book, *args, "--format", "json")["series"]
    cone = cli_json(capsys, "cone", *book, "--format", "json")["series"]
    scaling = cli_json(capsys, "scaling", *book, "--format", "json")["series"]
    garch = cli_json(capsys, "garch", *book, "--model", "garch", "--horizons", days, "--processes", 1,
                     "--format", "json")["series"]
    check = cli_json(capsys, "check", *book, "--format", "json")["series"]
    rows = survey["series"]
    # a long file counts as many series; a name seen before gets the file stem (as 'estimate' does)
    assert [r["name"] for r in rows] == [s["name"] for s in estimate] == [s["name"] for s in check]
    assert rows[-1]["name"] == "kestrel_orchards (long)" and len(rows) == 7
    for r, e, c, s, g, q in zip(rows, estimate, cone, scaling, garch, check, strict=True):
        # the survey reads bars as they are: it leaves out the realized estimators (intraday bars analysed
        # by day), which 'estimate' lists as unavailable on these daily files
        daily_only = {k: v for k, v in e["unavailable"].items() if k not in ("realized", "bipower")}
        assert r["error"] is None and r["unavailable"] == daily_only
        assert (r["rows"], r["as_of"]) == (e["rows"], e["as_of"])
        assert r["estimates"] == e["estimates"]
        col = next(w for w in c["windows"] if w["window"] == days)
        assert r["current_vol"] == col["current"]
        assert r["cone_percentile"] == col["current_percentile"]
        assert r["verdicts"] == {v["property"]: v["status"] for v in s["verdicts"]}
        # the model's forward vol, or the flat EWMA fallback when its fit has warnings. Survey workers
        # pin BLAS to one thread, which changes the optimizer's summation order: fits agree to ~1e-6,
        # not to the last bit (measured; the engines agree exactly with each other, test_engines.py)
        assert r["forward_vol"] == pytest.approx(g["models"][0]["term_structure"][0]["vol"], rel=1e-5)
        assert ("fallback" in r["forward_vol_source"]) == (g["preferred"] is None)
        assert r["findings"] == {k: sum(f["severity"] == k for f in q["findings"]) for k in ("error", "warning", "info")}
    assert rows[2]["findings"]["warning"] > 0  # quillon's planted bad rows are counted


def test_pricing_vol_percentile_is_the_compare_command_s(capsys, sample_dir):
    # The survey counts the option's life in bars (years = days / annualization, fit for intraday bars);
    # 'volbench compare' counts --days as trading days to an expiry with ACT/365 years and puts the
    # history's vols on that basis. On the bar convention the core comparison gives the survey's numbers
    # exactly; the command's vols are those times its basis factor.
    f = sample_dir / "saltmarsh_ferries.csv"
    h = load_prices(f)[0]
    for days in (21, 20, 5, 300):  # interpolated, exact column, clamped below, clamped above
        survey = cli_json(capsys, "survey", f, "--days", days, "--pricing-vol", 0.3, "--format", "json")
        row = survey["series"][0]
        bars = compare(h, 0.3, days)
        assert row["pricing_vol_percentile"] == bars.cone_percentile
        assert row["pricing_vol"] == bars.pricing_vol == 0.3
        # the estimates over the option's life are compare's candidates (window defaults to days)
        cands = {r.key: r.vol for r in bars.table.itertuples() if r.source == "estimator"}
        assert {k: v["vol"] for k, v in row["estimates"].items()} == cands
        comp = cli_json(capsys, "compare", f, "--days", days, "--pricing-vol", 0.3, "--format", "json")
        assert comp["trading_days"] == days
        for c in comp["candidates"]:
            if c["source"] == "estimator":
                assert c["vol"] == pytest.approx(row["estimates"][c["key"]]["vol"] * comp["basis_factor"], rel=1e-14)


def test_forward_vol_is_the_garch_command_s(capsys, sample_dir):
    for name in ("ironvale_mining.csv", "kestrel_orchards.csv"):  # a usable fit, and one that falls back
        f = sample_dir / name
        survey = cli_json(capsys, "survey", f, "--with-garch", "--garch-model", "all", "--format", "json")
        garch = cli_json(capsys, "garch", f, "--model", "all", "--processes", 1, "--format", "json")["series"][0]
        row = survey["series"][0]
        models = {m["model"]: m for m in garch["models"]}
        if garch["preferred"] is None:
            assert row["forward_vol_source"].startswith("EWMA (lambda 0.94) fallback: ")
            used = garch["models"][0]
        else:
            used = models[garch["preferred"]]
            assert row["forward_vol_source"] == used["label"]
        assert row["forward_vol"] == pytest.approx(  # to ~1e-6: see the first test on BLAS threads
            next(t["vol"] for t in used["term_structure"] if t["horizon"] == 21), rel=1e-5)
    assert "fallback" in json.dumps(cli_json(capsys, "survey", sample_dir / "kestrel_orchards.csv", "--with-garch",
                                             "--format", "json")["series"][0]["forward_vol_source"])


def test_survey_history_is_pure_and_matches_the_file_path(sample_dir):
    settings = SurveySettings(days=21, pricing_vol=0.2)
    h = load_prices(sample_dir / "ironvale_mining.csv")[0]
    a, b = survey_history(h, settings), survey_file(sample_dir / "ironvale_mining.csv", settings)[0]
    assert isinstance(a, SurveyRecord) and a.ok
    assert a.as_dict() == b.as_dict()
    assert survey_history(h, settings, pricing_vol=None).pricing_vol_percentile is None


def test_bad_files_and_series_are_rows_and_the_survey_goes_on(tmp_path, sample_dir, write_prices):
    good = shutil.copy(sample_dir / "kestrel_orchards.csv", tmp_path / "good.csv")
    short = write_prices("short.csv", 12, 1)
    binary = tmp_path / "binary.csv"
    binary.write_bytes(bytes(range(256)) * 4)
    mixed = write_prices("mixed.csv", 400, 2, symbols=["longer"])
    with open(mixed, "a") as fh:  # a second symbol with three rows
        fh.write("2016-01-01,tiny,10,10.5,9.5,10\n2016-01-04,tiny,10,10.5,9.5,10.2\n2016-01-05,tiny,10,10.5,9.5,10.1\n")
    result = run_survey([good, tmp_path / "missing.csv", short, binary, mixed, str(tmp_path / "none*.csv")],
                        SurveySettings(), jobs=1)
    by = {r.name: r for r in result.records}
    assert [r.name for r in result.records] == ["good", "missing", "short", "binary", "longer", "tiny", "none*.csv"]
    assert by["good"].ok and by["longer"].ok
    assert by["missing"].error.endswith("missing.csv: not found; check the path")
    assert "short: no estimate possible with a 21-bar window" in by["short"].error
    assert by["short"].rows == 12 and by["short"].findings == {"error": 0, "warning": 0, "info": 0}
    assert "binary.csv" in by["binary"].error and by["binary"].rows is None
    assert "tiny: no estimate possible" in by["tiny"].error
    assert by["none*.csv"].error.endswith("no file matches this pattern")
    assert (result.succeeded, result.failed) == (2, 5)
    # parts a series is too short for are listed with their reasons, never passed off as numbers
    partial = run_survey([write_prices("year.csv", 60, 4)], SurveySettings(), jobs=1).records[0]
    assert partial.ok and partial.verdicts and partial.cone_percentile is not None
    assert set(partial.unavailable) == set()
    short_scaling = run_survey([write_prices("two_months.csv", 25, 4)], SurveySettings(), jobs=1).records[0]
    assert short_scaling.ok and short_scaling.verdicts == {}
    assert "the scaling check needs at least 30" in short_scaling.unavailable["verdicts"]


def test_pricing_vols_per_series(tmp_path, sample_dir):
    vols = tmp_path / "vols.csv"
    vols.write_text("symbol,pricing_vol\nkestrel_orchards,0.22\n\nnot_in_survey,0.3\n")
    assert read_pricing_vols(vols) == {"kestrel_orchards": 0.22, "not_in_survey": 0.3}
    settings = SurveySettings(pricing_vols=read_pricing_vols(vols))
    result = run_survey([sample_dir / "kestrel_orchards.csv", sample_dir / "ironvale_mining.csv"], settings, jobs=1)
    k, i = result.records
    assert k.pricing_vol == 0.22 and k.pricing_vol_percentile is not None
    assert i.pricing_vol is None and i.unavailable["pricing_vol"] == "the pricing-vol file lists no 'ironvale_mining'"


@pytest.mark.parametrize("text, message", [
    ("a,0.2\na,0.3\n", r"line 2: symbol 'a' is listed again \(first on line 1\)"),
    ("symbol,vol\na,25\n", r"line 2, column 2: pricing vol of 'a' must be a decimal below 5 .*did you mean 0.25"),
    ("a\n", r"line 1: expected two cells, symbol,pricing_vol"),
    (",0.2\n", r"line 1, column 1: symbol is empty"),
    ("symbol,pricing_vol\n", r"no symbol,pricing_vol line found"),
])
def test_pricing_vol_file_errors_name_the_line(tmp_path, text, message):
    f = tmp_path / "vols.csv"
    f.write_text(text)
    with pytest.raises(VolbenchError, match=message):
        read_pricing_vols(f)


def test_settings_are_validated_once(tmp_path):
    with pytest.raises(VolbenchError, match="days must be a whole number of bars >= 1, got 0"):
        SurveySettings(days=0)
    with pytest.raises(VolbenchError, match="window must be >= 2 bars, got 1"):
        SurveySettings.build(window=1)
    with pytest.raises(VolbenchError, match="pricing vol must be a decimal below 5"):
        SurveySettings(pricing_vol=20)
    with pytest.raises(VolbenchError, match="unknown model 'arma'"):
        SurveySettings.build(with_garch=True, garch_models=("arma",))
    with pytest.raises(VolbenchError, match="pricing-vol file not found"):
        read_pricing_vols(tmp_path / "nope.csv")
    s = SurveySettings(days=30)
    assert s.estimate_window == 30 and SurveySettings(days=1).estimate_window == 2
