"""Regression tests through the command line for issue 10: every number means what its label says.

Each case the issue lists: intervals and the discretisation note, zero-range bars unavailable (not
0.00 %), GARCH fallbacks named for what they are and chosen by cause, absurd fits never preferred,
no percentage with more than ~6 significant digits, the family false-alarm rate, strict dates,
one limit and one message per setting in every command, and user wording (options, not
parameters).
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from volbench.cli import main
from volbench.estimators import point_estimate

ROOT = Path(__file__).resolve().parents[2]
KESTREL = ROOT / "sample_prices" / "kestrel_orchards.csv"  # constant vol 22 % (sample_prices/PARAMETERS.json)


def _run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def padded_file(tmp_path):
    """Kestrel's closes padded to OHLC (open = high = low = close), as close-only data often arrives."""
    df = pd.read_csv(KESTREL)
    for col in ("Open", "High", "Low"):
        df[col] = df["Close"]
    p = tmp_path / "padded.csv"
    df.to_csv(p, index=False)
    return p


def _close_file(tmp_path, name, close, start="2020-01-01"):
    d = pd.bdate_range(start, periods=len(close)).strftime("%Y-%m-%d")
    p = tmp_path / f"{name}.csv"
    pd.DataFrame({"Date": d, "Close": close}).to_csv(p, index=False)
    return p


# ------------------------------------------------------------------------------ intervals, notes
def test_estimate_states_the_discretisation_bias_and_interval_method(capsys):
    code, out, _ = _run(capsys, "estimate", KESTREL, "--window", "60")
    assert code == 0
    assert "read low on discretely traded prices" in out and "the intervals do not include that bias" in out
    code, out, _ = _run(capsys, "estimate", "--help")
    assert "read low on discretely traded prices" in out.replace("\n", " ").replace("  ", " ")


def test_export_carries_the_caveat_and_effective_degrees_of_freedom(capsys, tmp_path):
    target = tmp_path / "e.json"
    code, _, _ = _run(capsys, "export", KESTREL, "--to", target, "--window", "20", "--no-scaling")
    assert code == 0
    rows = {r["estimator"]: r for r in json.loads(target.read_text())["tables"]["estimates"]}
    assert rows["parkinson"]["caveat"].startswith("reads low on discretely traded prices")
    assert rows["close_to_close"]["caveat"] == ""
    assert "effective n" in rows["yang_zhang"]["ci_method"] and "overnight share" in rows["yang_zhang"]["ci_method"]


# ------------------------------------------------------------------------------ unavailable, not zero
def test_zero_range_bars_are_unavailable_everywhere_and_compare_and_export_go_on(capsys, tmp_path, padded_file):
    code, out, _ = _run(capsys, "estimate", padded_file, "--window", "20", "--format", "json")
    assert code == 0
    s = json.loads(out)["series"][0]
    assert set(s["estimates"]) == {"close_to_close", "ewma"}
    assert s["unavailable"]["parkinson"].startswith("no range on any bar of the window")
    code, out, _ = _run(capsys, "estimate", padded_file, "--window", "20")
    assert "0.00%" not in out and "no range on any bar" in out

    code, out, err = _run(capsys, "compare", padded_file, "--pricing-vol", "0.25", "--days", "30",
                          "--cone-estimator", "parkinson", "--format", "json")
    assert code == 0, err
    c = json.loads(out)
    assert [r["key"] for r in c["candidates"]] == ["pricing", "close_to_close", "ewma"]
    assert c["unavailable"]["yang_zhang"].startswith("no range on any bar")
    assert "no Parkinson cone: no range on any bar" in c["unavailable"]["cone"]

    target = tmp_path / "p.json"
    code, _, err = _run(capsys, "export", padded_file, "--to", target, "--pricing-vol", "0.25", "--days", "30",
                        "--no-scaling")
    assert code == 0 and "comparison" not in err  # the comparison is not dropped
    data = json.loads(target.read_text())
    assert data["sections"]["comparison"]["status"] == "included"
    est = {r["estimator"]: r for r in data["tables"]["estimates"]}
    assert est["parkinson"]["vol"] is None and est["parkinson"]["unavailable_reason"].startswith("no range")

    code, _, err = _run(capsys, "cone", padded_file, "--estimator", "parkinson")
    assert code == 2 and "padded: no Parkinson cone: no range on any bar of the window" in err


# ------------------------------------------------------------------------------ GARCH fallbacks
def test_constant_vol_series_falls_back_to_the_close_to_close_vol_and_says_so(capsys):
    # Kestrel is constant-vol (true 22 %): GARCH(1,1) finds no clustering (alpha on its bound), so its
    # forward vol is the whole-history close-to-close vol, not EWMA, and every label says so.
    code, out, _ = _run(capsys, "garch", KESTREL, "--model", "garch", "--format", "json")
    assert code == 0
    fit = json.loads(out)["series"][0]["models"][0]
    c2c = point_estimate(__import__("volbench.data", fromlist=["load_prices"]).load_prices(KESTREL)[0],
                         "close_to_close").vol
    assert fit["forecast_method"] == "fallback_close_to_close"
    assert fit["forward_vol_source"] == "close-to-close vol over the whole history, because: alpha on its bound"
    assert fit["candidate_label"] == "GARCH(1,1) → close-to-close fallback"
    assert fit["term_structure"][0]["vol"] == pytest.approx(c2c, rel=1e-12)
    assert abs(c2c - 0.22) < 0.01

    code, out, _ = _run(capsys, "compare", KESTREL, "--pricing-vol", "0.25", "--days", "30", "--with-garch")
    assert code == 0
    assert "GARCH(1,1) → close-to-close fallback" in out
    assert "- GARCH(1,1) forward vol" not in out  # the reading names the preferred usable fit instead


def test_a_fallback_number_is_never_attributed_to_the_model(capsys, tmp_path):
    # 120 returns: too little data for any fit, so every forward vol is EWMA's, and the reading says so.
    close = 50 * np.exp(np.cumsum(np.random.default_rng(5).normal(0, 0.015, 121)))
    f = _close_file(tmp_path, "short", close)
    code, out, _ = _run(capsys, "compare", f, "--pricing-vol", "0.25", "--days", "30", "--with-garch",
                        "--format", "json")
    assert code == 0
    c = json.loads(out)
    garch = [r for r in c["candidates"] if r["source"] == "garch"]
    assert [r["label"] for r in garch] == ["GARCH(1,1) → EWMA fallback", "GJR-GARCH(1,1,1) → EWMA fallback",
                                           "EGARCH(1,1) → EWMA fallback"]
    line = next(t for t in c["reading"] if "GARCH" in t)
    assert line.startswith("no GARCH-family fit gave a usable forecast, so the forward vol over 30 bars is a "
                           "fallback's:")
    assert "from EWMA (lambda 0.94), because: too little data (120 returns, 250 needed)" in line
    code, out, _ = _run(capsys, "garch", f, "--format", "json")
    m = json.loads(out)["series"][0]["models"][0]
    assert m["forecast_method"] == "fallback_ewma" and m["forward_vol_source"].startswith("EWMA (lambda 0.94)")


def test_absurd_fits_are_never_preferred_and_percentages_stay_short(capsys, tmp_path):
    # Daily returns of 40 % (about 635 % a year): every fit's long-run vol is above 500 %, so no fit
    # is usable, none is preferred, and the forward vol is a named fallback.
    close = 50 * np.exp(np.cumsum(np.random.default_rng(3).normal(0, 0.4, 600)))
    f = _close_file(tmp_path, "wild", close)
    code, out, _ = _run(capsys, "garch", f, "--format", "json")
    assert code == 0
    s = json.loads(out)["series"][0]
    assert s["preferred"] is None
    assert all("above 500 %" in " ".join(m["warnings"]) for m in s["models"])
    assert all(m["forecast_method"] == "fallback_ewma" for m in s["models"])
    code, out, _ = _run(capsys, "compare", f, "--pricing-vol", "4", "--days", "30", "--with-garch")
    assert code == 0 and "preferred" not in out


def test_no_percentage_prints_more_than_six_significant_digits(capsys, tmp_path):
    f = _close_file(tmp_path, "jumpy", np.array([1e-300, 1e300] * 20))
    for argv in (["estimate", f], ["scaling", f], ["garch", f], ["cone", f, "--windows", "5,10"],
                 ["compare", f, "--pricing-vol", "0.25", "--days", "5", "--with-garch", "--with-scaling"]):
        code, out, _ = _run(capsys, *argv)
        assert code == 0
        for number in re.findall(r"([0-9][0-9.e+]*)%", out):
            mantissa = number.split("e")[0].replace(".", "").lstrip("0")
            assert len(mantissa) <= 6, number


# ------------------------------------------------------------------------------ verdicts
def test_scaling_json_and_text_state_the_family_false_alarm(capsys):
    code, out, _ = _run(capsys, "scaling", KESTREL, "--format", "json")
    assert code == 0
    fa = json.loads(out)["series"][0]["family_false_alarm"]
    assert fa["level"] == 0.05 and fa["rejected_at_most"] == 0.05 and 0.1 < fa["not_consistent"] < 0.25
    assert fa["length_bucket"] == 1260
    code, out, _ = _run(capsys, "scaling", KESTREL)
    # daily file: four properties plus the low-power daily jump screen, judged as five
    assert "On a perfectly Brownian series of about this length, at least one of the five" in out


# ------------------------------------------------------------------------------ dates and limits
@pytest.mark.parametrize("argv, message", [
    (["estimate", KESTREL, "--as-of", "01/06/2022"], "as-of date must look like YYYY-MM-DD, got '01/06/2022'"),
    (["estimate", KESTREL, "--as-of", "17/10/2024"], "as-of date must look like YYYY-MM-DD, got '17/10/2024'"),
    (["estimate", KESTREL, "--as-of", "2030-01-01"],
     ("kestrel_orchards: as-of date 2030-01-01 is outside the data, which runs from 2019-01-02 to 2024-10-17; "
      "choose a date in that range or 'last' for the last row")),
    (["export", KESTREL, "--to", "{tmp}/x.json", "--as-of", "2030-01-01"],
     "kestrel_orchards: as-of date 2030-01-01 is outside the data, which runs from 2019-01-02 to 2024-10-17"),
    (["cone", KESTREL, "--end", "31/12/2021"], "end date must look like YYYY-MM-DD, got '31/12/2021'"),
    (["cone", KESTREL, "--end", "2030-01-01"],
     "kestrel_orchards: end date 2030-01-01 is outside the data, which runs from 2019-01-02 to 2024-10-17"),
    (["export", KESTREL, "--to", "{tmp}/x.json", "--cone-estimator", "nope"],
     "unknown estimator 'nope'; choose one of: close_to_close, parkinson"),
])
def test_bad_dates_and_names_exit_2_with_one_line(capsys, tmp_path, argv, message):
    code, out, err = _run(capsys, *[str(a).replace("{tmp}", str(tmp_path)) for a in argv])
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and err.startswith("volbench: ") and message in err, err
    assert not (tmp_path / "x.json").exists()


def test_as_of_last_is_the_last_row(capsys):
    code, out, _ = _run(capsys, "estimate", KESTREL, "--as-of", "last", "--format", "json")
    assert code == 0 and json.loads(out)["series"][0]["as_of"] == "2024-10-17"


SETTINGS = {  # setting -> (bad value, commands and the options that take it)
    "pricing vol 7": ("7", [["compare", KESTREL, "--days", "30", "--pricing-vol"],
                            ["export", KESTREL, "--to", "{tmp}/x.json", "--days", "30", "--pricing-vol"],
                            ["price", "--spot", "1", "--strike", "1", "--rate", "0", "--years", "1", "--vol"]]),
    "pricing vol 12": ("12", [["compare", KESTREL, "--days", "30", "--pricing-vol"],
                              ["export", KESTREL, "--to", "{tmp}/x.json", "--days", "30", "--pricing-vol"],
                              ["price", "--spot", "1", "--strike", "1", "--rate", "0", "--years", "1", "--vol"]]),
    "days": ("2.5", [["compare", KESTREL, "--pricing-vol", "0.25", "--days"],
                     ["export", KESTREL, "--to", "{tmp}/x.json", "--pricing-vol", "0.25", "--days"]]),
    "window": ("ten", [["estimate", KESTREL, "--window"], ["export", KESTREL, "--to", "{tmp}/x.json", "--window"],
                       ["compare", KESTREL, "--pricing-vol", "0.25", "--days", "30", "--window"]]),
    "annualization": ("-5", [[c, KESTREL, "--annualization"] for c in ("estimate", "scaling", "garch", "cone")]
                      + [["compare", KESTREL, "--pricing-vol", "0.25", "--days", "30", "--annualization"],
                         ["export", KESTREL, "--to", "{tmp}/x.json", "--annualization"]]),
    "as-of": ("2022/01/03", [["estimate", KESTREL, "--as-of"], ["export", KESTREL, "--to", "{tmp}/x.json", "--as-of"]]),
    "estimator": ("gk", [["cone", KESTREL, "--estimator"],
                         ["compare", KESTREL, "--pricing-vol", "0.25", "--days", "30", "--cone-estimator"],
                         ["export", KESTREL, "--to", "{tmp}/x.json", "--cone-estimator"]]),
}


@pytest.mark.parametrize("setting", list(SETTINGS))
def test_the_same_bad_value_gets_the_same_message_in_every_command(capsys, tmp_path, setting):
    value, commands = SETTINGS[setting]
    messages = set()
    for argv in commands:
        code, out, err = _run(capsys, *[str(a).replace("{tmp}", str(tmp_path)) for a in argv], value)
        assert code == 2 and out == "" and err.count("\n") == 1, (argv, err)
        messages.add(err)
    assert len(messages) == 1, messages
    assert "--" not in next(iter(messages))  # names the setting, not one command's option


def test_pricing_vol_message_hints_at_a_percent(capsys):
    code, _, err = _run(capsys, "export", KESTREL, "--to", "x.json", "--pricing-vol", "7", "--days", "30")
    assert code == 2
    assert err == ("volbench: pricing vol must be a decimal below 5 (0.25 means 25%), got 7; it looks like a "
                   "percent: did you mean 0.07?\n")


def test_user_messages_name_options_not_parameters(capsys, tmp_path):
    target = tmp_path / "x.json"
    target.write_text("{}")
    code, _, err = _run(capsys, "export", KESTREL, "--to", target)
    assert code == 2 and "pass --force" in err and "overwrite=True" not in err
    code, _, _ = _run(capsys, "export", KESTREL, "--to", tmp_path / "y.json", "--no-scaling")
    data = json.loads((tmp_path / "y.json").read_text())
    assert data["sections"]["garch"] == {"status": "not requested", "reason": "add --with-garch"}
    assert "include_garch" not in json.dumps(data)
