"""The start frame is painted before the core's heavy libraries are imported."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

_PROBE = """
import json, os, sys
os.environ["QT_QPA_PLATFORM"] = "offscreen"
from PySide6.QtWidgets import QApplication
from volbench.gui.startup import StartFrame
app = QApplication([])
frame = StartFrame()
frame.show_now(app)
painted = frame.painted_at is not None
roots = sorted({m.split('.')[0] for m in sys.modules})
from volbench.gui.app import application
application()
after = sorted({m.split('.')[0] for m in sys.modules})
print(json.dumps({"painted": painted, "title": frame.windowTitle(), "roots": roots, "after": after}))
"""


def test_the_frame_paints_before_pandas_scipy_arch_statsmodels_load():
    done = subprocess.run([sys.executable, "-c", _PROBE], check=False, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    result = json.loads(done.stdout)
    assert result["painted"]
    assert result["title"].startswith("volbench")
    heavy = {"pandas", "scipy", "arch", "statsmodels", "pyqtgraph"}
    assert heavy & set(result["roots"]) == set()
    assert {"pandas", "scipy"} <= set(result["after"])  # the probe sees imports: the settings load the core


def test_the_frame_has_the_window_title_and_default_size(qtbot, make_window):
    from volbench.gui import window as window_module
    from volbench.gui.startup import SIZE, TITLE, StartFrame

    frame = StartFrame()
    qtbot.addWidget(frame)
    window = make_window()
    assert frame.windowTitle() == TITLE == window.windowTitle()
    # the default size, shrunk to the screen's available area like the window's
    assert (frame.width(), frame.height()) == window_module.fitted_size(*SIZE)
    assert "self.resize(*fitted_size(1360, 900))" in Path(window_module.__file__).read_text()  # the window's default
