"""Window actions: export, sessions, copying tables, saving plots, help, remembered settings."""

from __future__ import annotations

import csv
import io
import json
import math

import pytest
from PySide6.QtGui import QAction, QGuiApplication
from PySide6.QtWidgets import QFileDialog, QMessageBox, QTextBrowser

from volbench.data import load_prices
from volbench.estimators import REGISTRY, estimate_all
from volbench.export import table_to_tsv
from volbench.gui.dialogs import CAUTIONS, HelpDialog, install_excepthook
from volbench.gui.session import SESSION_VERSION
from volbench.gui.state import Choices
from volbench.gui.widgets import FrameTable, Plot
from volbench.models import MODEL_REGISTRY
from volbench.names import estimator_name


@pytest.fixture
def save_dialog(monkeypatch):
    """Make QFileDialog.getSaveFileName return the path the test sets in ``target[0]``."""
    target: list[str] = [""]

    def answer(*args, **kwargs):
        return target[0], "Excel workbook (*.xlsx)"

    monkeypatch.setattr(QFileDialog, "getSaveFileName", staticmethod(answer))
    return target


@pytest.fixture
def answers(monkeypatch):
    """QMessageBox.question returns the queued answers (and records the question)."""
    queue: list = []
    asked: list[str] = []

    def question(parent, title, text, *args, **kwargs):
        asked.append(text)
        return queue.pop(0)

    monkeypatch.setattr(QMessageBox, "question", staticmethod(question))
    return queue, asked


def test_export_action_writes_a_json_file_that_reads_back_equal(make_window, kestrel, tmp_path, save_dialog,
                                                                qtbot):
    w = make_window(window=20, pricing_vol=0.3, days=21)
    w.open_files([kestrel])
    save_dialog[0] = str(tmp_path / "sheet.json")
    with qtbot.waitSignal(w.exported, timeout=20000):
        w.findChild(QAction, "export_action").trigger()
    doc = json.loads((tmp_path / "sheet.json").read_text(encoding="utf-8"))
    rows = {r["estimator"]: r for r in doc["tables"]["estimates"]}
    # Round trip against the core (volbench.estimators.estimate_all), agreement check: the export
    # holds exactly the numbers the window shows (JSON keeps the shortest round-trip float text)
    report = estimate_all(load_prices(kestrel)[0], 20)
    for key, est in report.estimates.items():
        assert rows[key]["vol"] == est.vol and rows[key]["n"] == est.n
        assert rows[key]["flagged_rows"] == "kept"
    comparison = [r for r in doc["tables"]["comparison"] if r["series"] == "kestrel_orchards"]
    shown = w.findChild(FrameTable, "comparison_table").raw_frame()
    assert [r["vol"] for r in comparison] == list(shown["vol"])
    assert doc["provenance"]["settings"]["pricing"]["pricing_vol"] == 0.3


def test_export_csv_matches_the_estimates_table(make_window, kestrel, tmp_path, qtbot):
    w = make_window(window=30)
    w.open_files([kestrel])
    path = tmp_path / "sheet.csv"
    with qtbot.waitSignal(w.exported, timeout=20000):
        w.export_to(path)
    rows = list(csv.DictReader(io.StringIO(path.read_text(encoding="utf-8"))))
    shown = w.findChild(FrameTable, "estimates_table").raw_frame().set_index("estimator")
    for r in rows:
        assert r["window"] == "30"
        if r["estimator"] in ("realized", "bipower"):  # a daily file: no intraday bars, no number
            assert r["vol"] == "" and math.isnan(shown.loc[r["estimator"], "vol"])
            continue
        assert float(r["vol"]) == shown.loc[r["estimator"], "vol"]


def test_export_asks_before_overwriting_and_keeps_the_file_on_no(make_window, kestrel, tmp_path, answers, qtbot):
    queue, asked = answers
    w = make_window()
    w.open_files([kestrel])
    path = tmp_path / "sheet.json"
    path.write_text("old", encoding="utf-8")
    queue.append(QMessageBox.StandardButton.No)
    w.export_to(path)
    assert path.read_text(encoding="utf-8") == "old"
    assert "sheet.json already exists" in asked[0]
    queue.append(QMessageBox.StandardButton.Yes)
    with qtbot.waitSignal(w.exported, timeout=20000):
        w.export_to(path)
    assert json.loads(path.read_text(encoding="utf-8"))["tables"]["estimates"]


def test_export_with_an_unknown_suffix_shows_the_core_message(make_window, kestrel, tmp_path, message_boxes):
    w = make_window()
    w.open_files([kestrel])
    w.export_to(tmp_path / "sheet.ods")
    assert len(message_boxes) == 1
    assert ".ods" in message_boxes[0][1] and not (tmp_path / "sheet.ods").exists()


def test_session_save_and_reopen_restores_files_selection_and_choices(make_window, sample_dir, tmp_path):
    w = make_window()
    w.open_files([sample_dir / "kestrel_orchards.csv", sample_dir / "quillon_textiles.csv"])
    w.state.update(selected="quillon_textiles", window=45, exclude_flagged=True, pricing_vol=0.31, days=63,
                   strike=9.5, rate=0.02, kind="put", garch_dist="t", as_of="2023-12-29",
                   estimators=("close_to_close", "yang_zhang"))
    path = tmp_path / "desk.json"
    assert w.save_session(path) == path
    saved = json.loads(path.read_text(encoding="utf-8"))
    assert saved["version"] == SESSION_VERSION and saved["kind"] == "volbench-session"

    other = make_window()
    assert other.open_session(path)
    assert [h.name for h in other.state.histories] == ["kestrel_orchards", "quillon_textiles"]
    assert other.state.selected == "quillon_textiles"
    assert other.state.choices == w.state.choices
    controls = other.panes["controls"]
    assert other.findChild(type(controls.window), "window_spin").value() == 45
    assert controls.kind.currentData() == "put"
    report = other.results.get("estimates")
    assert report.window == 45 and report.history.exclude_flagged and report.as_of == "2023-12-29"


@pytest.mark.parametrize(("content", "message"), [
    ("{not json", r"line 1: the session file is damaged \(not valid JSON"),
    (json.dumps({"kind": "volbench-session", "version": SESSION_VERSION + 1, "files": []}),
     r"saved by a newer volbench \(session version 2; this one reads up to 1\); update volbench"),
    (json.dumps({"hello": 1}), r"not a volbench session"),
    (json.dumps({"kind": "volbench-session", "version": 1, "choices": {"window": "wide"}}),
     r"window must be a whole number of bars or 'all', got 'wide'"),
])
def test_a_corrupt_or_newer_session_gives_a_clear_dialog(make_window, tmp_path, message_boxes, content, message):
    import re

    path = tmp_path / "bad.json"
    path.write_text(content, encoding="utf-8")
    w = make_window()
    assert not w.open_session(path)
    assert len(message_boxes) == 1
    assert re.search(message, message_boxes[0][1]), message_boxes[0][1]
    assert "bad.json" in message_boxes[0][1]
    assert w.state.histories == ()


def test_copy_table_puts_tab_separated_text_on_the_clipboard(make_window, kestrel):
    w = make_window()
    w.open_files([kestrel])
    t = w.findChild(FrameTable, "estimates_table")
    text = t.copy_to_clipboard()
    assert QGuiApplication.clipboard().text() == text == table_to_tsv(t.raw_frame())
    header, first = text.splitlines()[:2]
    assert header.split("\t")[:2] == ["estimator", "vol"]
    assert first.split("\t")[0] == "close_to_close"


@pytest.mark.parametrize("suffix", [".png", ".svg"])
def test_any_plot_saves_as_png_or_svg(make_window, kestrel, tmp_path, suffix):
    w = make_window()
    w.open_files([kestrel])
    for plot in w.findChildren(Plot):
        out = plot.save_image(tmp_path / f"{plot.objectName()}{suffix}")
        data = out.read_bytes()
        assert len(data) > 1000
        assert data.startswith(b"\x89PNG") if suffix == ".png" else b"<svg" in data[:2000]


def test_saving_a_plot_with_another_suffix_is_refused(make_window, tmp_path):
    from volbench.errors import VolbenchError

    w = make_window()
    with pytest.raises(VolbenchError, match=r"plots are saved as .png or .svg, got '.bmp'"):
        w.findChild(Plot, "rolling_plot").save_image(tmp_path / "x.bmp")


def test_help_lists_the_cautions_and_what_each_estimator_assumes(qtbot):
    dialog = HelpDialog()
    qtbot.addWidget(dialog)
    text = dialog.findChild(QTextBrowser, "help_text").toPlainText()
    for caution in CAUTIONS:
        assert caution.split(":")[0] in text
    for spec in REGISTRY.values():  # full names; the EWMA by its standard daily decay
        assert spec.assumes in text and estimator_name(spec.key) in text
    for model in MODEL_REGISTRY.values():  # every registered GARCH-type model, from its spec
        assert model.label in text and model.source in text
    assert "not advice" in text.lower() or "nothing here is advice" in text.lower()


def test_unexpected_exception_shows_a_dialog_without_a_traceback(message_boxes, monkeypatch, capsys):
    import sys

    monkeypatch.setattr(sys, "excepthook", sys.excepthook)
    install_excepthook(lambda: None)
    try:
        raise ZeroDivisionError("division by zero")
    except ZeroDivisionError:
        sys.excepthook(*sys.exc_info())
    assert len(message_boxes) == 1
    assert "Something went wrong inside volbench (ZeroDivisionError" in message_boxes[0][1]
    assert "Traceback" not in message_boxes[0][1]


def test_settings_and_layout_are_remembered_between_runs(make_window, kestrel):
    first = make_window(window=33, pricing_vol=0.27)
    first.open_files([kestrel])
    first.resize(700, 520)
    first.close()
    from volbench.gui.window import MainWindow

    second = MainWindow(synchronous=True, settings=first.settings)
    try:
        assert second.state.window == 33 and second.state.pricing_vol == 0.27
        assert (second.size().width(), second.size().height()) == (700, 520)
        assert second.settings.recent_files() == [str(kestrel)]
    finally:
        second.close()
        second.deleteLater()


def test_settings_with_an_unknown_schema_fall_back_to_defaults(settings):
    settings.q.setValue("schema", 99)
    settings.q.setValue("choices", json.dumps({"window": 77}))
    assert settings.load_choices() is None
    settings.save_choices(Choices(window=77))
    assert settings.load_choices() == Choices(window=77)


def test_fit_every_series_fills_the_batch_table(make_window, sample_dir):
    w = make_window()
    w.open_files([sample_dir / "kestrel_orchards.csv", sample_dir / "ironvale_mining.csv"])
    w.fit_all_series()
    batch = w.findChild(FrameTable, "garch_batch_table").table_model.display
    assert list(batch["series"]) == ["kestrel_orchards", "ironvale_mining"]
    assert all(v.endswith("%") for v in batch["forward vol"])


def test_export_xlsx_reads_back_equal_with_openpyxl(make_window, kestrel, tmp_path, qtbot):
    from openpyxl import load_workbook

    w = make_window(window=20)
    w.open_files([kestrel])
    path = tmp_path / "sheet.xlsx"
    with qtbot.waitSignal(w.exported, timeout=20000):
        w.export_to(path)
    sheet = load_workbook(path, read_only=True)["estimates"]
    rows = list(sheet.iter_rows(values_only=True))
    header = list(rows[0])
    got = {r[header.index("estimator")]: r[header.index("vol")] for r in rows[1:]}
    shown = w.findChild(FrameTable, "estimates_table").raw_frame().set_index("estimator")
    # openpyxl reads back the stored double exactly (reference library: openpyxl)
    # (a daily file: the realized estimators have no number, an empty cell read back as None)
    assert got == {k: (None if math.isnan(shown.loc[k, "vol"]) else shown.loc[k, "vol"]) for k in shown.index}


def test_recent_files_menu_lists_and_reopens_files(make_window, kestrel, sample_dir):
    w = make_window()
    w.open_files([kestrel])
    w.open_files([sample_dir / "ironvale_mining.csv"])
    w.recent_menu.aboutToShow.emit()
    entries = [a.text() for a in w.recent_menu.actions() if a.text()]
    assert entries[:2] == [str(sample_dir / "ironvale_mining.csv"), str(kestrel)]
    w.state.set_histories([], [])
    next(a for a in w.recent_menu.actions() if a.text() == str(kestrel)).trigger()
    assert [h.name for h in w.state.histories] == ["kestrel_orchards"]


def test_the_stylesheet_ships_with_the_package_and_is_applied(qapp):
    from volbench.gui import theme

    text = theme.stylesheet()
    assert "QTableView" in text and "QTabBar::tab:selected" in text
    theme.apply(qapp)
    assert qapp.styleSheet() == text
