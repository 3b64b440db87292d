"""The market pane: a quotes file beside the prices, smiles and term structure, and one click to price at ATM implied."""

from __future__ import annotations

import json

from PySide6.QtWidgets import QLabel, QPushButton

from volbench.cli import main
from volbench.gui.widgets import Plot


def test_a_quotes_file_adds_the_atm_implied_candidate_as_the_command_line_does(make_window, sample_dir, capsys):
    prices, quotes = sample_dir / "ironvale_mining.csv", sample_dir / "quotes" / "ironvale_mining_quotes.csv"
    w = make_window(expiry=None, days=46, rate=0.03)
    w.open_files([prices])
    assert w.results.get("comparison").unavailable.get("quotes") == "not requested"
    w.panes["market"].open_quotes(str(quotes))
    comp = w.results.get("comparison")
    row = comp.table[comp.table["key"] == "market:atm_implied"].iloc[0]
    # 'volbench compare ... --quotes' gives the same implied vol for the same option (same core)
    code = main(["compare", str(prices), "--pricing-vol", "0.25", "--days", "46", "--rate", "0.03", "--quotes",
                 str(quotes), "--format", "json"])
    cli = json.loads(capsys.readouterr().out)
    assert code == 0 and cli["expiry"] == "2024-12-20" == comp.life.expiry
    assert row["vol"] == next(r["vol"] for r in cli["candidates"] if r["key"] == "market:atm_implied")
    market = w.results.get("market")
    assert market.atm_implied_vol == row["vol"] and "variance risk premium" in w.findChild(QLabel,
                                                                                           "market_reading").text()
    smile, term = w.findChild(Plot, "smile_plot"), w.findChild(Plot, "term_plot")
    assert len(smile.getPlotItem().listDataItems()) == 5  # one smile per quoted expiry
    assert any("ATM implied" in (i.name() or "") for i in term.getPlotItem().listDataItems())
    button = w.findChild(QPushButton, "use_atm_button")
    assert button.isEnabled()
    button.click()
    assert w.state.pricing_vol == market.atm_implied_vol
    assert w.results.get("comparison").pricing_vol == market.atm_implied_vol


def test_a_bad_quotes_file_is_refused_with_the_reason(make_window, sample_dir, tmp_path, qtbot):
    w = make_window()
    w.open_files([sample_dir / "ironvale_mining.csv"])
    bad = tmp_path / "bad.csv"
    bad.write_text("Expiry,Strike\n2024-12-20,40\n")
    with qtbot.waitSignal(w.panes["market"].notice) as blocker:
        w.panes["market"].open_quotes(str(bad))
    assert "no type column" in blocker.args[0]
    assert w.state.quotes_file is None
