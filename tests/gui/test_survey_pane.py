"""The survey pane: a folder surveyed in the background with the window's settings, a sortable
and filterable table whose numbers are the survey's (the command line's), double-click to open."""

from __future__ import annotations

import shutil

import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QTableWidget

from volbench.gui.jobs import survey_settings
from volbench.survey import run_survey


@pytest.fixture
def book(tmp_path, sample_dir):
    for name in ("kestrel_orchards.csv", "quillon_textiles.csv", "vell_harbour_index.csv"):
        shutil.copy(sample_dir / name, tmp_path / name)
    (tmp_path / "broken.csv").write_text("date,close\n2020-01-01,1\n")
    return tmp_path


def _rows(table: QTableWidget) -> list[list[str]]:
    return [[table.item(r, c).text() for c in range(table.columnCount())] for r in range(table.rowCount())]


def test_survey_a_folder_shows_every_series_with_the_survey_numbers(make_window, book):
    w = make_window(window=30, days=21, pricing_vol=0.25)
    pane = w.panes["survey"]
    pane.survey([book])
    result = w.results.get("survey")
    assert result is not None and w.results.problem("survey") is None
    table = pane.findChild(QTableWidget, "survey_table")
    assert table.rowCount() == 4
    # the same numbers as the core's survey with the settings the window's choices make
    expected = run_survey([book], survey_settings(w.state.choices.settings()), jobs=1)
    assert [r.as_dict() for r in result.records] == [r.as_dict() for r in expected.records]
    assert result.settings.estimate_window == 30 and result.settings.days == 21
    by_name = {row[0]: row for row in _rows(table)}
    k = next(r for r in expected.records if r.name == "kestrel_orchards")
    row = by_name["kestrel_orchards"]
    assert row[3] == f"{100 * k.estimates['close_to_close'].vol:.2f}%"
    assert row[6] == f"{k.cone_percentile:.0f}" and row[7] == f"{k.pricing_vol_percentile:.0f}"
    assert table.horizontalHeaderItem(3).text() == "vol (30 bars)"
    assert [r[0] for r in _rows(table)] == sorted(by_name)  # sorted by name at first
    assert "no estimate possible" in by_name["broken"][-1]


def test_sorting_and_filters(make_window, book):
    w = make_window()
    pane = w.panes["survey"]
    pane.survey([book])
    table = pane.table
    table.sortItems(6, Qt.SortOrder.AscendingOrder)  # cone percentile, numbers first, blanks last
    pcts = [pane.record_at(r).cone_percentile for r in range(table.rowCount())]
    numbers = [p for p in pcts if p is not None]
    assert numbers == sorted(numbers) and pcts[-1] is None
    pane.filter_combo.setCurrentText("failed")
    shown = [pane.record_at(r).name for r in range(table.rowCount()) if not table.isRowHidden(r)]
    assert shown == ["broken"]
    assert pane.shown_label.text() == "1 of 4 series shown"
    pane.filter_combo.setCurrentText("every series")
    low = sorted(numbers)[1]
    pane.low_spin.setValue(int(low) if low == int(low) else int(low) + 1)
    shown = {pane.record_at(r).name for r in range(table.rowCount()) if not table.isRowHidden(r)}
    assert shown == {pane.record_at(r).name for r in range(table.rowCount())
                     if pane.record_at(r).cone_percentile is not None
                     and pane.record_at(r).cone_percentile >= pane.low_spin.value()}
    assert 0 < len(shown) < 4


def test_double_click_opens_the_series_in_the_other_panes(make_window, book, qtbot):
    w = make_window()
    pane = w.panes["survey"]
    pane.survey([book])
    row = next(r for r in range(pane.table.rowCount()) if pane.record_at(r).name == "quillon_textiles")
    pane._on_double_click(row, 0)  # not loaded yet: its file is opened, then it is selected
    qtbot.waitUntil(lambda: w.state.selected == "quillon_textiles", timeout=20000)
    row = next(r for r in range(pane.table.rowCount()) if pane.record_at(r).name == "kestrel_orchards")
    w.open_files([str(book / "kestrel_orchards.csv")])
    qtbot.waitUntil(lambda: w.state.loaded("kestrel_orchards") is not None, timeout=20000)
    pane._on_double_click(row, 0)
    assert w.state.selected == "kestrel_orchards"


def test_a_failed_survey_says_why(make_window, tmp_path):
    w = make_window()
    pane = w.panes["survey"]
    pane.survey([])
    assert "Nothing to survey" in pane.status.text()
    pane.survey([tmp_path / "no_such_folder"])
    result = w.results.get("survey")
    assert result is not None and result.records[0].error and pane.table.rowCount() == 1


def test_the_survey_saves_as_the_command_line_writes_it(make_window, book, tmp_path_factory, capsys):
    import csv
    import json

    from volbench.cli import main
    from volbench.survey.report import survey_csv

    tmp_path = tmp_path_factory.mktemp("saved")  # not inside the surveyed folder
    w = make_window()
    pane = w.panes["survey"]
    assert pane.save(tmp_path / "none.csv") is None  # nothing surveyed yet
    pane.survey([book])
    result = w.results.get("survey")
    written = pane.save(tmp_path / "book.json")
    data = json.loads(written.read_text())
    assert [s["name"] for s in data["series"]] == [r.name for r in result.records]
    assert pane.save(tmp_path / "book.json") is None  # never over an existing file without consent
    table = pane.save(tmp_path / "book.csv").read_text()
    assert table == survey_csv(result)
    # the command line's CSV of the same survey (settings from the same groups): the same rows
    c = w.state.choices
    assert main(["survey", str(book), "--window", str(c.window), "--days", str(c.days), "--pricing-vol",
                 str(c.pricing_vol), "--jobs", "1", "--format", "csv"]) == 0
    cli_rows = list(csv.reader(capsys.readouterr().out.splitlines()))
    assert cli_rows == list(csv.reader(table.splitlines()))
