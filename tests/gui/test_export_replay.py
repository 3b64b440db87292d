"""An export made from the window records every setting it used: ``volbench replay`` rebuilds it
from the command line and every cell matches."""

from __future__ import annotations

import openpyxl
import pytest

from volbench.cli import main


@pytest.mark.slow
def test_a_window_export_with_non_default_settings_replays_identically(make_window, kestrel, tmp_path, qtbot,
                                                                       capsys):
    w = make_window(window=40, pricing_vol=0.3, days=21, garch_dist="t", gap_days=7, cone_estimator="parkinson",
                    kind="put", rate=0.02)
    w.open_files([kestrel])
    path = tmp_path / "window.xlsx"
    with qtbot.waitSignal(w.exported, timeout=60000):
        w.export_to(path)
    rows = list(openpyxl.load_workbook(path)["inputs"].iter_rows(values_only=True))
    record = {(r[0], r[2]): r[3] for r in rows}
    assert record[("effective setting", "import_options.quality.gap_days")] == 7
    assert record[("command", "typed")] == "(from the window)"
    assert "--gap-days 7" in record[("command", "equivalent")]
    assert record[("effective setting", "garch.dist")] == "t" and record[("section", "comparison")] == "included"
    assert record[("section", "garch")] == "included"
    capsys.readouterr()
    assert main(["replay", str(path)]) == 0, capsys.readouterr().out
    assert "identical" in capsys.readouterr().out


def test_the_decision_dialog_sets_the_record_the_export_carries(make_window, kestrel, tmp_path, qtbot, capsys):
    from volbench.gui.decision_dialog import DecisionDialog
    from volbench.settings import DecisionSettings

    dialog = DecisionDialog()
    qtbot.addWidget(dialog)
    assert dialog.decision() is None  # every field empty: no record
    dialog.vol.setText("24")
    dialog.accept()  # refused with the command line's message, the dialog stays open
    assert "decision vol must be a decimal below 5" in dialog.problem.text() and "did you mean 0.24" in \
        dialog.problem.text()
    dialog.vol.setText("0.24")
    dialog.prepared_by.setText("desk B")
    dialog.rationale.setPlainText("forecast over the option's life")
    assert dialog.decision() == DecisionSettings(vol=0.24, rationale="forecast over the option's life",
                                                 prepared_by="desk B")
    w = make_window(pricing_vol=0.3, days=21)
    w.open_files([kestrel])
    w.set_decision(dialog.decision())
    path = tmp_path / "decided.xlsx"
    with qtbot.waitSignal(w.exported, timeout=60000):
        w.export_to(path)
    rows = list(openpyxl.load_workbook(path)["decision"].iter_rows(values_only=True))
    header = rows[0]
    assert {r[header.index("decision_vol")] for r in rows[1:]} == {0.24}
    assert [r[header.index("text")] for r in rows[1:] if r[header.index("key")] == "prepared_by"] == ["desk B"]
    capsys.readouterr()
    assert main(["replay", str(path)]) == 0, capsys.readouterr().out
