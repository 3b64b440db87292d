"""``volbench garch`` from the command line."""

from __future__ import annotations

import json
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest

from volbench.cli import main


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_json_shape_follows_the_issue(capsys, sample_dir):
    code, out, err = run(capsys, "garch", str(sample_dir / "ironvale_mining.csv"), "--format", "json",
                         "--horizons", "5,21,63")
    assert code == 0 and err == ""
    d = json.loads(out)
    assert list(d) == ["series"] and len(d["series"]) == 1
    s = d["series"][0]
    assert s["name"] == "ironvale_mining"
    assert {"name", "models", "preferred"} <= set(s)
    assert [m["model"] for m in s["models"]] == ["garch", "gjr", "egarch"]
    for m in s["models"]:
        assert {"model", "dist", "converged", "params", "std_errors", "loglik", "aic", "bic", "persistence",
                "long_run_vol", "half_life", "term_structure", "warnings"} <= set(m)
        assert [row["horizon"] for row in m["term_structure"]] == [5, 21, 63]
        assert set(m["params"]) == set(m["std_errors"])
    assert s["preferred"] in {"garch", "gjr", "egarch"}


def test_ironvale_fit_is_plausible(capsys, sample_dir):
    # sample_prices/PARAMETERS.json: ironvale_mining was simulated as GARCH(1,1) with alpha 0.09,
    # beta 0.89, long-run vol 0.32 over 1511 returns. The MLE is asymptotically normal, so the
    # estimates should lie within 3 reported standard errors of the truth, and the long-run vol
    # within a loose 25% (it is a ratio with a small denominator 1 - alpha - beta).
    code, out, _ = run(capsys, "garch", str(sample_dir / "ironvale_mining.csv"), "--model", "garch",
                       "--format", "json")
    m = json.loads(out)["series"][0]["models"][0]
    assert code == 0 and m["converged"] and m["warnings"] == []
    assert abs(m["params"]["alpha[1]"] - 0.09) <= 3 * m["std_errors"]["alpha[1]"]
    assert abs(m["params"]["beta[1]"] - 0.89) <= 3 * m["std_errors"]["beta[1]"]
    assert m["long_run_vol"] == pytest.approx(0.32, rel=0.25)


def test_table_reads_per_series(capsys, sample_dir):
    files = [str(sample_dir / f) for f in ("ironvale_mining.csv", "kestrel_orchards.csv")]
    code, out, _ = run(capsys, "garch", *files, "--model", "garch", "--dist", "t", "--horizons", "10,21")
    assert code == 0
    assert "ironvale_mining  (ironvale_mining.csv" in out and "kestrel_orchards  (kestrel_orchards.csv" in out
    assert "forward vol, bars:" in out and "Student-t innovations" in out
    assert "not advice" in out


def test_short_file_reports_the_fallback(capsys, tmp_path):
    p = tmp_path / "short.csv"
    rng = np.random.default_rng(0)
    close = 50 * np.exp(np.cumsum(rng.normal(0, 0.01, 30)))
    pd.DataFrame({"date": pd.date_range("2023-01-02", periods=30, freq="B").strftime("%Y-%m-%d"),
                  "close": close}).to_csv(p, index=False)
    code, out, _ = run(capsys, "garch", str(p), "--format", "json", "--model", "egarch")
    assert code == 0
    s = json.loads(out)["series"][0]
    m = s["models"][0]
    assert s["preferred"] is None and m["fallback"] == "EWMA (lambda 0.94)"
    assert m["params"] == {} and m["bic"] is None
    assert "29 returns, at least 250 are needed" in m["warnings"][0]
    code, out, _ = run(capsys, "garch", str(p))
    assert code == 0 and "fallback*" in out and "warnings:" in out


@pytest.mark.parametrize("argv,msg", [
    (["--horizons", "0,5"], "horizons must be positive whole numbers"),
    (["--horizons", "5,x"], "horizons must be whole numbers separated by commas"),
    (["--annualization", "-1"], "annualization must be > 0"),
    (["--simulations", "10"], "simulations must be a whole number between 100 and 100000, got 10"),
    (["--model", "figarch"], "unknown model 'figarch'; choose one of: garch, gjr, egarch"),
    (["--processes", "0"], "processes must be a whole number >= 1 or None, got 0"),
])
def test_bad_input_exits_2_with_one_line(capsys, sample_dir, argv, msg):
    code, out, err = run(capsys, "garch", str(sample_dir / "ironvale_mining.csv"), *argv)
    assert code == 2 and out == ""
    assert msg in err and "Traceback" not in err


def test_missing_file_exits_2(capsys, tmp_path):
    code, _, err = run(capsys, "garch", str(tmp_path / "nope.csv"))
    assert code == 2 and "nope.csv" in err


def test_help(capsys):
    code, out, _ = run(capsys, "garch", "--help")
    assert code == 0
    for opt in ("--model", "--dist", "--mean", "--horizons", "--annualization", "--format", "--exclude-flagged"):
        assert opt in out


@pytest.mark.slow
def test_worker_processes_from_a_plain_cli_process(sample_dir):
    # a real process (no Qt loaded), so the fast start method is used; results equal the serial run
    files = [str(sample_dir / f) for f in ("ironvale_mining.csv", "vell_harbour_index.csv")]
    outs = []
    for procs in ("1", "2"):
        cp = subprocess.run([sys.executable, "-m", "volbench.cli", "garch", *files, "--model", "garch",
                             "--format", "json", "--processes", procs], check=False, capture_output=True, text=True, timeout=120)
        assert cp.returncode == 0, cp.stderr
        outs.append(json.loads(cp.stdout))
    assert outs[0] == outs[1]
