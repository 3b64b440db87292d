"""``volbench memo``: a PDF whose text holds the numbers, headless, atomic and never overwriting
without --force."""

from __future__ import annotations

import os
import re
import subprocess
import sys

import pytest
from pypdf import PdfReader

from volbench.cli import main
from volbench.data import load_prices
from volbench.estimators import estimate_all
from volbench.memo import CAUTION, build_memo
from volbench.settings import OptionSettings, Settings


def pdf_text(path) -> tuple[str, str]:
    """Page 1's text and the whole document's text, whitespace collapsed."""
    pages = [re.sub(r"\s+", " ", p.extract_text() or "") for p in PdfReader(str(path)).pages]
    return pages[0], " ".join(pages)


def test_memo_text_holds_the_series_the_pricing_vol_and_the_core_numbers(sample_dir, tmp_path, capsys):
    src = sample_dir / "ironvale_mining.csv"
    out = tmp_path / "memo.pdf"
    assert main(["memo", str(src), "--pricing-vol", "0.25", "--days", "30", "--to", str(out)]) == 0
    assert f"wrote {out}" in capsys.readouterr().out
    first, every = pdf_text(out)
    assert "ironvale_mining" in first and "pricing vol 25.00%" in first and "Yang-Zhang" in first
    # agreement with the core, no external source: the memo's one window is the option's life (30)
    h = load_prices(src)[0]
    est = estimate_all(h, 30).estimates
    for key in ("close_to_close", "yang_zhang"):
        assert f"{100 * est[key].vol:.2f}%" in first
        assert f"{100 * est[key].ci_low:.2f}% to {100 * est[key].ci_high:.2f}%" in every
    assert h.sha256 in every.replace(" ", "")
    assert re.sub(r"\s+", " ", CAUTION) in every
    assert "Brownian scaling check" in every and "Comparison and price impact" in every
    assert "straddle" in every


def test_memo_refuses_to_overwrite_without_force_and_replaces_with_it(sample_dir, tmp_path, capsys):
    out = tmp_path / "memo.pdf"
    out.write_bytes(b"old")
    args = ["memo", str(sample_dir / "kestrel_orchards.csv"), "--pricing-vol", "0.2", "--days", "21", "--to", str(out)]
    assert main(args) == 2
    assert "already exists; pass --force" in capsys.readouterr().err
    assert out.read_bytes() == b"old"
    assert main([*args, "--force"]) == 0
    assert out.read_bytes().startswith(b"%PDF")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["memo.pdf"]  # no temporary file left


def test_memo_needs_a_pdf_name(sample_dir, tmp_path, capsys):
    code = main(["memo", str(sample_dir / "kestrel_orchards.csv"), "--pricing-vol", "0.2", "--days", "21",
                 "--to", str(tmp_path / "memo.txt")])
    assert code == 2
    assert "a memo is written as PDF" in capsys.readouterr().err


def test_memo_runs_headless_with_garch(sample_dir, tmp_path):
    out = tmp_path / "garch.pdf"
    env = {k: v for k, v in os.environ.items() if k not in ("QT_QPA_PLATFORM", "DISPLAY", "WAYLAND_DISPLAY")}
    r = subprocess.run([sys.executable, "-m", "volbench.cli", "memo", str(sample_dir / "ironvale_mining.csv"),
                        "--pricing-vol", "0.25", "--days", "30", "--with-garch", "--model", "garch", "--to", str(out)],
                       capture_output=True, text=True, env=env, timeout=120, check=False)
    assert r.returncode == 0, r.stderr
    _, every = pdf_text(out)
    assert "GARCH(1,1)" in every and "term structure" in every


def test_memo_content_uses_one_window_for_estimates_and_comparison(sample_dir):
    h = load_prices(sample_dir / "kestrel_orchards.csv")[0]
    memo = build_memo(h, Settings(option=OptionSettings(pricing_vol=0.25, days=30, window=40)))
    titles = [s.title for s in memo.sections]
    assert "Estimates over the last 40 bars (the memo's one window)" in titles
    comparison = next(s for s in memo.sections if s.title == "Comparison and price impact")
    rows = {r[0]: r for r in comparison.tables[0].rows}
    assert rows["Close-to-close"][1] == "40"
    # source: volbench.estimators.estimate_all, agreement check
    assert rows["Close-to-close"][2] == f"{100 * estimate_all(h, 40).estimates['close_to_close'].vol:.2f}%"
    assert memo.provenance["window"] == 40


def test_memo_without_an_option_says_what_to_give(sample_dir):
    from volbench.errors import VolbenchError

    h = load_prices(sample_dir / "kestrel_orchards.csv")[0]
    with pytest.raises(VolbenchError, match="a memo needs a pricing vol"):
        build_memo(h, Settings())


def test_memo_carries_the_decision_record_and_an_expiry(sample_dir, tmp_path, capsys):
    # agreement with the core's decision record, no external source
    src = sample_dir / "ironvale_mining.csv"
    out = tmp_path / "decision.pdf"
    assert main(["memo", str(src), "--pricing-vol", "0.28", "--expiry", "2024-12-20", "--decision-vol", "0.27",
                 "--rationale", "forecast over the life", "--prepared-by", "desk B", "--to", str(out)]) == 0
    capsys.readouterr()
    _, every = pdf_text(out)
    assert "Decision record" in every
    assert "chosen vol 27.00% for an option of 46 bars" in every  # 46 trading days to 2024-12-20
    assert "rationale: forecast over the life" in every and "prepared by: desk B" in every
    # without a decision the memo has no such section
    plain = tmp_path / "plain.pdf"
    assert main(["memo", str(src), "--pricing-vol", "0.28", "--expiry", "2024-12-20", "--to", str(plain)]) == 0
    assert "Decision record" not in pdf_text(plain)[1]
