"""Loading files in the window: background reading with progress and Cancel, the import dialog,
split repair, and files that changed on disk (sessions and reloads)."""

from __future__ import annotations

import shutil
import threading

import pytest
from PySide6.QtWidgets import QFileDialog, QLabel, QMessageBox

from volbench.data import load as loading  # the core reader the window's load job calls
from volbench.data.load import Cancelled as LoadCancelled
from volbench.gui.import_dialog import ImportDialog
from volbench.gui.session import read_session
from volbench.gui.state import Choices
from volbench.gui.window import MainWindow


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


@pytest.fixture
def copy(tmp_path, sample_dir):
    def _copy(name, to=None):
        dest = (to or tmp_path) / name
        shutil.copy(sample_dir / name, dest)
        return dest

    return _copy


def test_files_load_in_the_background_with_progress(qtbot, settings, kestrel, quillon):
    w = MainWindow(synchronous=False, settings=settings, choices=Choices(garch_model="garch"))
    qtbot.addWidget(w)
    steps = []
    w.dispatcher.progress.connect(lambda kind, done, total, text: steps.append((kind, done, total, text)))
    with qtbot.waitSignal(w.files_loaded, timeout=20000) as blocker:
        assert w.open_files([kestrel, quillon]) == 0  # returns at once; the reading runs in a worker
    assert blocker.args == [2]
    assert [h.name for h in w.state.histories] == ["kestrel_orchards", "quillon_textiles"]
    loads = [s for s in steps if s[0] == "load"]
    assert loads and all(total == 8 for _, _, total, _ in loads)
    assert any("quillon_textiles.csv: reading" in text for *_, text in loads)
    w.dispatcher.cancel()
    w.dispatcher.wait()


def test_cancel_stops_reading_and_keeps_what_was_shown(qtbot, settings, kestrel, quillon, monkeypatch):
    w = MainWindow(synchronous=False, settings=settings, choices=Choices(garch_model="garch"))
    qtbot.addWidget(w)
    started = threading.Event()
    real = loading.load_prices

    def slow(path, options, progress=None, cancel=None):
        if "quillon" in str(path):
            started.set()
            while not cancel():  # a long read that checks its cancel flag between stages
                threading.Event().wait(0.01)
            raise LoadCancelled()
        return real(path, options, progress=progress, cancel=cancel)

    with qtbot.waitSignal(w.files_loaded, timeout=20000):
        w.open_files([kestrel])
    w.dispatcher.wait()
    monkeypatch.setattr(loading, "load_prices", slow)
    w.open_files([quillon])
    assert started.wait(10)
    assert w.dispatcher.is_running("load")
    w.cancel_work()
    w.dispatcher.wait()
    qtbot.wait(50)
    assert [h.name for h in w.state.histories] == ["kestrel_orchards"]
    assert w.status_label.text().startswith("Stopped reading the files")


def test_import_dialog_returns_choices_and_refuses_a_contradiction(qtbot):
    d = ImportDialog(Choices(decimal=",", adjust_splits=True), files=2)
    qtbot.addWidget(d)
    assert d.values() == {"delimiter": None, "decimal": ",", "thousands": None, "date_format": None,
                          "use_adjusted": False, "adjust_splits": True, "gap_days": 5, "session_break": None}
    d.thousands.setCurrentIndex(d.thousands.findData(","))
    d.accept()
    assert d.result() != ImportDialog.DialogCode.Accepted
    assert "cannot both be ','" in d.findChild(QLabel, "import_problem_label").text()
    d.thousands.setCurrentIndex(d.thousands.findData("."))
    d.delimiter.setCurrentIndex(d.delimiter.findData(";"))
    d.accept()
    assert d.result() == ImportDialog.DialogCode.Accepted
    assert d.options().delimiter == ";" and d.options().thousands == "."


def test_import_dialog_session_break_is_checked_and_reaches_the_load(make_window, sample_dir, monkeypatch, qtbot):
    # the dialog's "Session break" field is --session-break: validated like it, then the file is read with it
    d = ImportDialog(Choices(), files=1)
    qtbot.addWidget(d)
    d.session_break.setText("4 parsecs")
    d.accept()
    assert d.result() != ImportDialog.DialogCode.Accepted
    assert d.findChild(QLabel, "import_problem_label").text()
    d.session_break.setText("2h")
    assert d.values()["session_break"] == "2h"
    w = make_window()
    monkeypatch.setattr(ImportDialog, "exec", lambda self: (self.session_break.setText("2h"),
                                                            ImportDialog.DialogCode.Accepted)[1])
    values = w.ask_import_choices(1)
    w.open_files([sample_dir / "intraday" / "gullridge_energy_5min.csv"], import_choices=values)
    (h,) = w.state.histories
    assert w.state.choices.session_break == "2h" and h.intraday.layout.session_break_seconds == 7200.0


def test_open_dialog_choices_settle_an_ambiguous_file(make_window, tmp_path, monkeypatch, message_boxes):
    text = "Date;Close\n" + "".join(f"2021-03-{d:02d};4.{960 + d:03d}\n" for d in range(1, 20))
    p = tmp_path / "thousands.csv"
    p.write_text(text)
    w = make_window()
    monkeypatch.setattr(QFileDialog, "getOpenFileNames", staticmethod(lambda *a, **k: ([str(p)], "")))
    monkeypatch.setattr(ImportDialog, "exec", lambda self: ImportDialog.DialogCode.Accepted)
    w.ask_open_files()  # every value has three digits after '.': refused, with the options named
    assert len(message_boxes) == 1 and "pass --thousands ." in message_boxes[0][1]
    assert w.state.histories == ()

    def choose(self):
        self.decimal.setCurrentIndex(self.decimal.findData(","))
        self.thousands.setCurrentIndex(self.thousands.findData("."))
        return ImportDialog.DialogCode.Accepted

    monkeypatch.setattr(ImportDialog, "exec", choose)
    w.ask_open_files()
    (h,) = w.state.histories
    assert h.close[0] == 4961.0 and w.state.choices.thousands == "."


def test_adjust_splits_in_the_window_repairs_and_shows_the_adjustment(make_window, quillon):
    w = make_window()
    w.open_files([quillon])
    assert w.state.histories[0].adjustments == ()
    w.panes["data"].adjust_splits.setChecked(True)  # files are read again
    (h,) = w.state.histories
    assert [a.as_dict() for a in h.adjustments] == [{"date": "2022-06-15", "ratio": 2.0, "line": 903,
                                                     "label": "2:1 split"}]
    policy = w.findChild(QLabel, "policy_label").text()
    assert "Split adjusted: 2:1 split on 2022-06-15 (line 903), earlier prices divided by 2." in policy
    w.state.set("exclude_flagged", True)
    vol = w.results.get("estimates").estimates["close_to_close"].vol
    assert 0.2 < vol < 0.3  # the sample's generating vol is 25 % (sample_prices/PARAMETERS.json)


def test_opening_another_file_does_not_reread_the_loaded_ones(make_window, copy, sample_dir, message_boxes):
    k = copy("kestrel_orchards.csv")
    w = make_window()
    w.open_files([k])
    (first,) = w.state.histories
    k.write_text(k.read_text().replace("2019-01-02,42.0000", "2019-01-02,41.0000"))
    w.open_files([sample_dir / "ironvale_mining.csv"])
    assert w.state.histories[0] is first  # the series shown is not silently swapped
    assert message_boxes == []
    w.state.set("adjust_splits", True)  # a reading choice changed: every file is read again, and said
    assert w.state.histories[0].open[0] == 41.0
    ((_, text),) = message_boxes
    assert "kestrel_orchards.csv changed on disk since it was loaded" in text


def test_session_notices_a_changed_file_and_offers_the_new_version(make_window, copy, tmp_path, answers):
    k = copy("kestrel_orchards.csv")
    q = copy("quillon_textiles.csv")
    w = make_window()
    w.open_files([k, q])
    path = tmp_path / "desk.json"
    w.save_session(path)
    saved = read_session(path)
    assert [c.status for c in saved.checks] == ["same", "same"]
    k.write_text(k.read_text() + "2024-10-18,1,1,1,1,1\n")
    queue, asked = answers
    queue += [QMessageBox.StandardButton.No]
    other = make_window()
    assert other.open_session(path)
    assert len(asked) == 1 and "kestrel_orchards.csv changed since the session was saved" in asked[0]
    assert "SHA-256 differs" in asked[0] and "bytes" in asked[0]
    assert [h.name for h in other.state.histories] == ["quillon_textiles"]
    assert "kestrel_orchards.csv left out" in other.status_label.text()
    queue += [QMessageBox.StandardButton.Yes]
    third = make_window()
    third.open_session(path)
    assert [h.name for h in third.state.histories] == ["kestrel_orchards", "quillon_textiles"]
    assert third.state.histories[0].last_date == "2024-10-18"


def test_session_finds_a_moved_folder_and_says_so(make_window, copy, tmp_path, answers):
    here = tmp_path / "desk"
    here.mkdir()
    k = copy("kestrel_orchards.csv", here)
    w = make_window()
    w.open_files([k])
    w.save_session(here / "s.json")
    moved = tmp_path / "moved"
    here.rename(moved)
    other = make_window()
    assert other.open_session(moved / "s.json")
    assert [h.name for h in other.state.histories] == ["kestrel_orchards"]
    assert "moved since the session was saved; content unchanged" in other.status_label.text()
    assert answers[1] == []
