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
