"""File > Write vol memo: the window writes the memo of the series shown with its own settings."""

from __future__ import annotations

import re

import pytest
from pypdf import PdfReader
from PySide6.QtWidgets import QMessageBox

from volbench.gui.widgets import FrameTable


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


def test_the_window_writes_a_memo_with_the_numbers_on_screen(make_window, kestrel, tmp_path, qtbot):
    w = make_window(window=25, pricing_vol=0.27, days=40)
    w.open_files([kestrel])
    out = tmp_path / "memo.pdf"
    with qtbot.waitSignal(w.memo_written, timeout=60000):
        w.write_memo(out)
    text = re.sub(r"\s+", " ", " ".join(p.extract_text() for p in PdfReader(str(out)).pages))
    assert "kestrel_orchards" in text and "pricing vol 27.00%" in text
    assert "Estimates over the last 25 bars" in text  # the Window (linked), as on screen
    raw = w.findChild(FrameTable, "estimates_table").raw_frame().set_index("estimator")
    assert f"{100 * raw.loc['yang_zhang', 'vol']:.2f}%" in text  # agreement with the table shown
    assert "not advice" in text


def test_the_window_asks_before_replacing_a_memo(make_window, kestrel, tmp_path, answers):
    queue, asked = answers
    w = make_window()
    w.open_files([kestrel])
    out = tmp_path / "memo.pdf"
    out.write_bytes(b"old")
    queue.append(QMessageBox.StandardButton.No)
    w.write_memo(out)
    assert out.read_bytes() == b"old" and "memo.pdf already exists" in asked[0]
