"""The As of control ("latest" or a typed date, validated visibly) and the EWMA decay input."""

from __future__ import annotations

import pytest
from PySide6.QtWidgets import QDoubleSpinBox, QLabel, QLineEdit, QPushButton

from volbench import validate
from volbench.data import load_prices
from volbench.errors import VolbenchError
from volbench.estimators import estimate_all
from volbench.gui.widgets import FrameTable


def type_as_of(w, text: str) -> None:
    edit = w.findChild(QLineEdit, "as_of_edit")
    edit.setText(text)
    edit.editingFinished.emit()


def test_a_typed_date_applies_and_latest_goes_back(make_window, kestrel):
    w = make_window()
    w.open_files([kestrel])
    type_as_of(w, "2023-06-30")
    assert w.state.as_of == "2023-06-30"
    assert w.findChild(FrameTable, "estimates_table").raw_frame() is not None
    w.findChild(QPushButton, "as_of_latest_button").click()
    assert w.state.as_of is None
    assert w.findChild(QLineEdit, "as_of_edit").text() == "latest"


@pytest.mark.parametrize("text", ["2023-13-45", "yesterday", "1990-01-01"])
def test_a_bad_typed_date_is_shown_beside_the_control_and_changes_nothing(make_window, kestrel, text):
    w = make_window()
    w.open_files([kestrel])
    before = w.state.choices
    type_as_of(w, text)
    problem = w.findChild(QLabel, "as_of_problem")
    assert w.state.choices == before
    assert not problem.isHidden() and problem.text()
    # the same words as the command line (volbench.validate)
    with pytest.raises(VolbenchError) as exc:
        validate.as_of_for(load_prices(kestrel)[0], text)
    assert problem.text() == str(exc.value)
    assert w.findChild(QLineEdit, "as_of_edit").property("invalid") is True
    assert str(exc.value) in w.status_label.text()
    type_as_of(w, "latest")
    assert problem.isHidden()


def test_the_ewma_decay_input_changes_the_ewma_like_the_core(make_window, kestrel):
    w = make_window(window=20)
    w.open_files([kestrel])
    spin = w.findChild(QDoubleSpinBox, "ewma_lambda_spin")
    assert spin.value() == pytest.approx(0.94)
    spin.setValue(0.97)
    assert w.state.ewma_lambda == pytest.approx(0.97)
    raw = w.findChild(FrameTable, "estimates_table").raw_frame().set_index("estimator")
    # agreement check with the core's estimate_all at the same decay (volbench.estimators)
    core = estimate_all(load_prices(kestrel)[0], 20, lam=0.97).estimates["ewma"]
    assert raw.loc["ewma", "vol"] == core.vol
    shown = w.findChild(FrameTable, "estimates_table").table_model.display
    assert "EWMA (decay 0.97)" in list(shown["estimator"])


def test_help_names_the_ewma_by_its_standard_daily_decay():
    from volbench.gui.dialogs import help_html

    text = help_html()
    assert "EWMA (standard daily decay 0.94)" in text and "RiskMetrics" not in text
    assert "Yang-Zhang" in text
