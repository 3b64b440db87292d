"""Exchange holidays in the window: the trading-day count leaves them out, as ``--holidays`` does."""

from __future__ import annotations

import json

from volbench.cli import main


def test_a_holidays_file_changes_the_trading_days_as_the_command_line_does(make_window, sample_dir, tmp_path, capsys):
    # agreement with 'volbench compare --holidays', common practice, no source
    src = sample_dir / "kestrel_orchards.csv"
    hol = tmp_path / "holidays.txt"
    hol.write_text("2024-11-01\n2024-11-11\n", encoding="utf-8")
    w = make_window(days=30, day_basis="calendar")
    w.open_files([src])
    before = w.results.get("life").trading_days
    w.panes["life"].open_holidays(str(hol))
    life = w.results.get("life")
    assert main(["compare", str(src), "--pricing-vol", "0.25", "--days", "30", "--day-basis", "calendar",
                 "--holidays", str(hol), "--format", "json"]) == 0
    cli = json.loads(capsys.readouterr().out)
    assert life.trading_days == cli["trading_days"] < before  # the two holidays fall inside the life
    assert w.findChild(type(w.panes["life"].holidays), "holidays_button").text() == "holidays.txt"
    w.panes["life"].open_holidays(None)
    assert w.results.get("life").trading_days == before


def test_a_bad_holidays_file_is_refused_and_changes_nothing(make_window, sample_dir, tmp_path):
    w = make_window(days=30)
    w.open_files([sample_dir / "kestrel_orchards.csv"])
    told = []
    w.panes["life"].notice.connect(told.append)
    w.panes["life"].open_holidays(str(tmp_path / "missing.txt"))
    assert w.state.holidays_file is None and told and "missing.txt" in told[0]
