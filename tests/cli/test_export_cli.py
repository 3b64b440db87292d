"""``volbench export``: files in every format, exit codes, and no silent overwrite."""

from __future__ import annotations

import json

import openpyxl
import pandas as pd
import pytest

from volbench.cli import main
from volbench.data import load_many
from volbench.estimators import estimate_all


def _files(sample_dir, *names):
    names = names or ("ironvale_mining.csv", "vell_harbour_index.csv")
    return [str(sample_dir / n) for n in names]


@pytest.mark.parametrize("suffix", [".csv", ".xlsx", ".json"])
def test_writes_each_format(sample_dir, tmp_path, capsys, suffix):
    out = tmp_path / f"pricing{suffix}"
    code = main(["export", *_files(sample_dir), "--to", str(out), "--window", "20"])
    assert code == 0
    assert out.is_file()
    assert f"wrote {out}" in capsys.readouterr().out
    if suffix == ".csv":
        est = pd.read_csv(out)
    elif suffix == ".xlsx":
        est = pd.read_excel(out, sheet_name="estimates", engine="openpyxl")
    else:
        est = pd.DataFrame(json.loads(out.read_text(encoding="utf-8"))["tables"]["estimates"])
    # Common practice, no source: the file carries the core's numbers for the same settings.
    h = load_many(_files(sample_dir, "ironvale_mining.csv"))[0]
    yz = estimate_all(h, 20).estimates["yang_zhang"].vol
    row = est[(est["series"] == "ironvale_mining") & (est["estimator"] == "yang_zhang")]
    assert row["vol"].item() == yz
    assert set(est["series"]) == {"ironvale_mining", "vell_harbour_index"}


def test_refuses_existing_file_without_force(sample_dir, tmp_path, capsys):
    out = tmp_path / "pricing.xlsx"
    out.write_bytes(b"someone's workbook")
    code = main(["export", *_files(sample_dir), "--to", str(out)])
    err = capsys.readouterr().err
    assert code == 2
    assert f"{out} already exists; pass --force" in err and "Traceback" not in err
    assert out.read_bytes() == b"someone's workbook"
    assert main(["export", *_files(sample_dir), "--to", str(out), "--force"]) == 0
    assert openpyxl.load_workbook(out).sheetnames[0] == "estimates"


def test_unknown_suffix_lists_the_allowed_ones(sample_dir, tmp_path, capsys):
    code = main(["export", *_files(sample_dir), "--to", str(tmp_path / "pricing.ods")])
    assert code == 2
    assert "suffix '.ods'; use one of: .csv, .json, .xlsx" in capsys.readouterr().err
    assert list(tmp_path.iterdir()) == []


def test_comparison_and_option_options(sample_dir, tmp_path):
    out = tmp_path / "cmp.xlsx"
    code = main(["export", *_files(sample_dir, "ironvale_mining.csv"), "--to", str(out), "--pricing-vol", "0.25",
                 "--days", "30", "--strike", "36", "--rate", "0.03", "--dividend-yield", "0.01", "--type", "put",
                 "--no-scaling", "--as-of", "2024-06-28"])
    assert code == 0
    sheets = pd.read_excel(out, sheet_name=None, engine="openpyxl")
    comp = sheets["comparison"]
    assert set(comp["kind"]) == {"put"} and set(comp["strike"]) == {36} and set(comp["rate"]) == {0.03}
    day = pd.Timestamp("2024-06-28")  # dates are real dates in .xlsx
    assert set(comp["as_of"]) == {day} and set(sheets["estimates"]["as_of"]) == {day}
    assert sheets["scaling"].iloc[0]["status"] == "not requested"
    inputs = sheets["inputs"]
    assert inputs[inputs["item"] == "pricing.option.kind"]["value"].item() == "put"


@pytest.mark.parametrize("args, message", [
    (["--pricing-vol", "0.25"], "a comparison needs both --pricing-vol and --days (or --expiry); missing --days"),
    (["--days", "30"], "a comparison needs both --pricing-vol and --days (or --expiry); missing --pricing-vol"),
    (["--strike", "40"], "--strike: option settings apply only to a comparison; also give --pricing-vol and --days"),
    (["--day-basis", "calendar"], "--day-basis describe the option's life: also give --days N or --expiry"),
    (["--pricing-vol", "25", "--days", "30"], "pricing vol must be a decimal below 5 (0.25 means 25%), got 25"),
    (["--window", "1x"], "window must be a whole number of bars or 'all', got '1x'"),
])
def test_bad_options_exit_2(sample_dir, tmp_path, capsys, args, message):
    out = tmp_path / "x.csv"
    assert main(["export", *_files(sample_dir), "--to", str(out), *args]) == 2
    assert message in capsys.readouterr().err
    assert not out.exists()


def test_missing_input_file_writes_nothing(tmp_path, capsys):
    out = tmp_path / "x.csv"
    assert main(["export", str(tmp_path / "absent.csv"), "--to", str(out)]) == 2
    assert "absent.csv" in capsys.readouterr().err
    assert not out.exists()


def test_missing_output_folder_is_reported_before_any_work(tmp_path, capsys):
    out = tmp_path / "no" / "x.json"
    assert main(["export", str(tmp_path / "absent.csv"), "--to", str(out)]) == 2
    assert f"folder {tmp_path / 'no'} does not exist; create it first" in capsys.readouterr().err
