"""Every pane renders something real: a screenshot of each is saved and checked for content."""

from __future__ import annotations

import numpy as np
from PySide6.QtGui import QImage

from volbench.gui.panes import PANES


def distinct_colours(path) -> int:
    img = QImage(str(path)).convertToFormat(QImage.Format.Format_RGB32)
    ptr = img.constBits()
    arr = np.frombuffer(ptr, dtype=np.uint32, count=img.width() * img.height())
    return len(np.unique(arr))


def test_each_pane_screenshot_is_non_trivial(make_window, quillon, tmp_path, qtbot):
    w = make_window()
    w.show()
    qtbot.waitExposed(w)
    w.open_files([quillon])
    shots = {}
    for key in [cls.key for cls in PANES if cls.place == "tab"]:
        w.tabs.setCurrentWidget(w.panes[key])
        qtbot.wait(10)
        path = tmp_path / f"{key}.png"
        assert w.panes[key].grab().save(str(path))
        shots[key] = path
    path = tmp_path / "window.png"
    assert w.grab().save(str(path))
    shots["window"] = path
    for key, path in shots.items():
        img = QImage(str(path))
        assert img.width() >= 400 and img.height() >= 300, key
        assert distinct_colours(path) > 20, key  # text, lines, fills and swatches, not a blank card
