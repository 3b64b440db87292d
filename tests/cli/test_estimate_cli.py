"""``volbench estimate`` and ``volbench check``: JSON contract, CSV/table output, exit codes, errors."""

from __future__ import annotations

import csv
import io
import json
import math
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from volbench.cli import main
from volbench.data import load_prices
from volbench.estimators import ESTIMATOR_KEYS, point_estimate

ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture
def ohlc_file(tmp_path):
    """A 60-bar OHLC file (seeded) with one high-below-low row on line 12."""

    def _make(name="dunmore_salt.csv"):
        rng = np.random.default_rng(7)
        n = 60
        c = 50 * np.exp(np.cumsum(rng.normal(0, 0.012, n)))
        o = np.concatenate(([50.0], c[:-1])) * np.exp(rng.normal(0, 0.003, n))
        hi = np.maximum(o, c) * np.exp(np.abs(rng.normal(0, 0.006, n)))
        lo = np.minimum(o, c) * np.exp(-np.abs(rng.normal(0, 0.006, n)))
        hi[10], lo[10] = lo[10], hi[10]
        dates = pd.bdate_range("2022-01-03", periods=n).strftime("%Y-%m-%d")
        p = tmp_path / name
        p.write_text("Date,Open,High,Low,Close\n" + "".join(
            f"{d},{a:.4f},{b:.4f},{e:.4f},{f:.4f}\n" for d, a, b, e, f in zip(dates, o, hi, lo, c)))
        return p

    return _make


@pytest.fixture
def close_only_file(tmp_path):
    p = tmp_path / "brackwater_idx.csv"
    rng = np.random.default_rng(8)
    c = 1000 * np.exp(np.cumsum(rng.normal(0, 0.01, 40)))
    dates = pd.bdate_range("2022-01-03", periods=40).strftime("%Y-%m-%d")
    p.write_text("Date;Last\n" + "".join(f"{d};{v:.2f}\n".replace(".", ",") for d, v in zip(dates, c)))
    return p


def _run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


# ------------------------------------------------------------------------------------ estimate
def test_estimate_json_contract(capsys, ohlc_file, close_only_file):
    f1 = ohlc_file()
    code, out, err = _run(capsys, "estimate", f1, close_only_file, "--window", "20", "--format", "json")
    assert code == 0 and err == ""
    doc = json.loads(out)
    assert set(doc) == {"series"} and len(doc["series"]) == 2
    required = {"name", "source", "rows", "first_date", "last_date", "as_of", "window", "annualization",
                "estimates", "unavailable"}
    for s in doc["series"]:
        assert required <= set(s)
        assert s["window"] == 20 and s["annualization"] == 252
        assert set(s["estimates"]) | set(s["unavailable"]) == set(ESTIMATOR_KEYS)
        for key, e in s["estimates"].items():
            assert key in ESTIMATOR_KEYS
            assert set(e) == {"vol", "ci_low", "ci_high", "n"}
            assert isinstance(e["n"], int) and all(math.isfinite(e[k]) for k in ("vol", "ci_low", "ci_high"))
            assert e["ci_low"] <= e["vol"] <= e["ci_high"]
        for reason in s["unavailable"].values():
            assert isinstance(reason, str) and reason
    a, b = doc["series"]
    assert (a["name"], a["source"], a["rows"]) == ("dunmore_salt", str(f1), 60)
    assert (a["first_date"], a["last_date"], a["as_of"]) == ("2022-01-03", "2022-03-25", "2022-03-25")
    # a daily file: the realized estimators say why they are missing, the bar interval is a day
    assert a["unavailable"] == dict.fromkeys(("realized", "bipower"), "needs intraday bars; the file has one bar a day")
    assert a["bar_interval_seconds"] == 86400.0 and "intraday" not in a
    assert b["unavailable"]["parkinson"] == "needs high/low columns"
    assert set(b["estimates"]) == {"close_to_close", "ewma"}
    # vol is the annualized decimal of the core's point estimate
    (h,) = load_prices(f1)
    assert a["estimates"]["yang_zhang"]["vol"] == pytest.approx(point_estimate(h, "yang_zhang", 20).vol, rel=1e-12)


def test_estimate_options_reach_the_core(capsys, ohlc_file):
    f = ohlc_file()
    code, out, _ = _run(capsys, "estimate", f, "--window", "10", "--as-of", "2022-02-15", "--annualization",
                        "365", "--exclude-flagged", "--format", "json")
    assert code == 0
    (s,) = json.loads(out)["series"]
    assert s["as_of"] == "2022-02-15" and s["window"] == 10 and s["annualization"] == 365
    assert s["flagged_rows"] == "excluded"
    (h,) = load_prices(f, exclude_flagged=True)
    expected = point_estimate(h, "parkinson", 10, as_of="2022-02-15", annualization=365)
    assert s["estimates"]["parkinson"]["vol"] == pytest.approx(expected.vol, rel=1e-12)
    assert s["estimates"]["parkinson"]["n"] == 10


def test_estimate_whole_history_window(capsys, ohlc_file):
    code, out, _ = _run(capsys, "estimate", ohlc_file(), "--format", "json")
    (s,) = json.loads(out)["series"]
    assert code == 0 and s["window"] == "all"
    assert s["estimates"]["close_to_close"]["n"] == 59 and s["estimates"]["parkinson"]["n"] == 60


def test_estimate_csv_format(capsys, ohlc_file, close_only_file):
    code, out, _ = _run(capsys, "estimate", ohlc_file(), close_only_file, "--window", "20", "--format", "csv")
    assert code == 0
    rows = list(csv.DictReader(io.StringIO(out)))
    assert len(rows) == 16
    assert list(rows[0]) == ["series", "as_of", "estimator", "window", "annualization", "vol", "ci_low",
                             "ci_high", "n", "flagged_rows", "unavailable_reason"]
    assert [r["estimator"] for r in rows[:8]] == list(ESTIMATOR_KEYS)
    pk = next(r for r in rows if r["series"] == "brackwater_idx" and r["estimator"] == "parkinson")
    assert pk["vol"] == "" and pk["unavailable_reason"] == "needs high/low columns"
    cc = next(r for r in rows if r["series"] == "dunmore_salt" and r["estimator"] == "close_to_close")
    assert float(cc["vol"]) > 0 and cc["n"] == "20" and cc["flagged_rows"] == "kept"


def test_estimate_table_format(capsys, ohlc_file, close_only_file):
    code, out, err = _run(capsys, "estimate", ohlc_file(), close_only_file, "--window", "20")
    assert code == 0 and err == ""
    assert "dunmore_salt  (dunmore_salt.csv: 60 rows, 2022-01-03 to 2022-03-25)" in out
    assert "last 20 bars, annualized with 252 bars/year; flagged rows kept" in out
    assert "run 'volbench check'" in out  # the file has a finding
    assert "Parkinson" in out and "needs high/low columns" in out
    assert "%" in out and "not advice" in out


# ------------------------------------------------------------------------------------- check
def test_check_json_contract(capsys, ohlc_file):
    f = ohlc_file()
    code, out, err = _run(capsys, "check", f, "--format", "json")
    assert code == 0 and err == ""
    (s,) = json.loads(out)["series"]
    assert s["name"] == "dunmore_salt"
    (finding,) = s["findings"]
    assert finding == {
        "severity": "warning", "kind": "high_below_low", "line": 12, "date": "2022-01-17", "column": "high",
        "message": finding["message"],
    }
    assert finding["message"].startswith("high ")


def test_check_table_on_the_split_sample(capsys, sample_dir):
    code, out, _ = _run(capsys, "check", sample_dir / "quillon_textiles.csv")
    assert code == 0
    assert "2 errors, 4 warnings, 1 notes" in out
    assert "unadjusted 2:1 split" in out and "bad tick" in out


def test_check_clean_file(capsys, close_only_file):
    code, out, _ = _run(capsys, "check", close_only_file)
    assert code == 0 and "0 errors, 0 warnings, 1 notes" in out
    assert "numbers read with ',' as the decimal mark, as cells such as" in out


# ------------------------------------------------------------------------------- bad input
@pytest.mark.parametrize(("argv", "message"), [
    (["estimate", "{missing}"], r"^volbench: .*missing\.csv: file not found; check the path and try again\n$"),
    (["check", "{missing}"], r"^volbench: .*missing\.csv: file not found"),
    (["estimate", "{empty}"], r"^volbench: .*empty\.csv: file is empty"),
    (["estimate", "{good}", "--window", "1"],
     None),  # window 1: range estimators work, the others say why: exit 0
    (["estimate", "{good}", "--window", "0"], r"^volbench: window must be >= 1 bars, got 0\n$"),
    (["estimate", "{good}", "--window", "ten"], r"^volbench: window must be a whole number of bars or 'all', got 'ten'\n$"),
    (["estimate", "{good}", "--annualization", "0"],
     r"^volbench: annualization must be > 0 bars per year \(e\.g\. 252 or 365\), got 0\n$"),
    (["estimate", "{good}", "--annualization", "abc"],
     r"^volbench: annualization must be a number of bars per year, got 'abc'\n$"),
    (["estimate", "{good}", "--bogus"], r"^volbench: error: unrecognized arguments: --bogus"),
    (["estimate", "{good}", "--format", "xml"], r"^volbench estimate: error: argument --format: invalid choice: 'xml'"),
    (["estimate", "{good}", "--as-of", "someday"], r"^volbench: as-of date must look like YYYY-MM-DD, got 'someday'\n$"),
    (["estimate", "{good}", "--as-of", "1999-01-01"], r"^volbench: dunmore_salt: as-of date 1999-01-01 is outside the data, which runs from 2022-01-03 to "),
    (["estimate"], r"^volbench estimate: error: the following arguments are required: FILE"),
    (["nonsense"], r"^volbench: error: argument COMMAND: invalid choice: 'nonsense'"),
])
def test_bad_input_exits_2_with_one_line(capsys, tmp_path, ohlc_file, argv, message):
    import re

    good = ohlc_file()
    (tmp_path / "empty.csv").write_text("")
    subst = {"{missing}": str(tmp_path / "missing.csv"), "{empty}": str(tmp_path / "empty.csv"), "{good}": str(good)}
    code, out, err = _run(capsys, *[subst.get(a, a) for a in argv])
    if message is None:
        assert code == 0
        return
    assert code == 2
    assert out == ""
    assert err.count("\n") == 1 and "Traceback" not in err
    assert re.search(message, err), err


def test_internal_error_exits_1_with_one_line(capsys, monkeypatch, ohlc_file):
    import volbench.cli.cmd_estimate as cmd

    def boom(*args, **kwargs):
        raise ZeroDivisionError("simulated defect")

    monkeypatch.setattr(cmd, "estimate_all", boom)
    code, _out, err = _run(capsys, "estimate", ohlc_file())
    assert code == 1
    assert err == ("volbench: internal error (ZeroDivisionError: simulated defect); please report it with the "
                   "command and file that caused it\n")


@pytest.mark.parametrize("argv", [["--help"], ["estimate", "--help"], ["check", "--help"]])
def test_help_is_complete(capsys, argv):
    code, out, err = _run(capsys, *argv)
    assert code == 0 and err == ""
    assert out.startswith("usage: volbench")
    flat = " ".join(out.split())
    if argv[0] == "estimate":
        for opt in ("--window N|all", "--annualization A", "--as-of YYYY-MM-DD", "--exclude-flagged",
                    "--format {table,json,csv}", "--date-format FMT", "--adjusted", "--gap-days D"):
            assert opt in flat, opt
        assert "with 95% confidence intervals" in flat
    if argv[0] == "check":
        assert "--format {table,json}" in flat and "stale closes" in flat
    if argv[0] == "--help":
        assert "estimate" in out and "check" in out and "not advice" in out


def test_version(capsys):
    code, out, _ = _run(capsys, "--version")
    assert code == 0 and out.startswith("volbench ")


@pytest.mark.slow  # two interpreter start-ups importing the whole CLI: ~5 s on a shared machine
def test_installed_entry_point_in_a_subprocess(tmp_path, ohlc_file):
    # The console script installed in the venv (else the module form), and the module form itself.
    exe = ROOT / ".venv" / "bin" / "volbench"
    script = [str(exe)] if exe.exists() else [sys.executable, "-m", "volbench.cli"]
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    ok = subprocess.run(script + ["estimate", str(ohlc_file()), "--window", "20", "--format", "json"],
                        check=False, capture_output=True, text=True, env=env, timeout=120)
    assert ok.returncode == 0, ok.stderr
    assert json.loads(ok.stdout)["series"][0]["estimates"]["parkinson"]["n"] == 20
    bad = subprocess.run([sys.executable, "-m", "volbench.cli", "estimate", str(tmp_path / "gone.csv")],
                         check=False, capture_output=True, text=True, env=env, timeout=120)
    assert bad.returncode == 2 and bad.stdout == ""
    assert bad.stderr == f"volbench: {tmp_path / 'gone.csv'}: file not found; check the path and try again\n"
