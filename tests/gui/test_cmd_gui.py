"""``volbench gui``: one line and exit 2 without a display or without Qt; default sample files."""

from __future__ import annotations

import sys

import pytest

from volbench.cli import main
from volbench.cli.cmd_gui import display_problem
from volbench.samples import sample_files


@pytest.fixture
def no_display(monkeypatch):
    for var in ("DISPLAY", "WAYLAND_DISPLAY", "QT_QPA_PLATFORM"):
        monkeypatch.delenv(var, raising=False)
    monkeypatch.setattr(sys, "platform", "linux")


def test_gui_without_a_display_prints_one_line_and_exits_2(no_display, capsys):
    assert main(["gui"]) == 2
    out, err = capsys.readouterr()
    lines = (out + err).strip().splitlines()
    assert len(lines) == 1
    assert "no display available" in lines[0] and "'volbench estimate FILE...'" in lines[0]
    assert "Traceback" not in out + err


def test_gui_without_pyside6_prints_one_line_and_exits_2(monkeypatch, capsys):
    monkeypatch.setenv("QT_QPA_PLATFORM", "offscreen")
    monkeypatch.setitem(sys.modules, "PySide6.QtWidgets", None)  # the Qt binding now fails to import
    assert main(["gui", "x.csv"]) == 2
    out, err = capsys.readouterr()
    lines = (out + err).strip().splitlines()
    assert len(lines) == 1 and "cannot be imported" in lines[0] and "volbench estimate" in lines[0]


def _found(name):
    return f"lib{name}.so.0"


def _missing(name):
    return None


def _no_cursor_or_keysyms(name):
    return None if name in ("xcb-cursor", "xcb-keysyms") else _found(name)


NO_CURSOR = ("the Qt window needs system libraries that are not installed "
             "(Debian/Ubuntu: sudo apt-get install libxcb-cursor0 libxcb-keysyms1)")


@pytest.mark.parametrize(("env", "platform", "find", "expected"), [
    ({}, "linux", _found, "no display available (DISPLAY and WAYLAND_DISPLAY are not set)"),
    ({"DISPLAY": ":0"}, "linux", _found, None),
    ({"DISPLAY": ":0"}, "linux", _no_cursor_or_keysyms, NO_CURSOR),
    ({"DISPLAY": ":0", "QT_QPA_PLATFORM": "xcb"}, "linux", _no_cursor_or_keysyms, NO_CURSOR),
    ({"WAYLAND_DISPLAY": "wayland-0"}, "linux", _missing, None),
    ({"QT_QPA_PLATFORM": "offscreen"}, "linux", _missing, None),
    ({}, "darwin", _missing, None),
    ({}, "win32", _missing, None),
])
def test_display_problem(env, platform, find, expected):
    assert display_problem(env, platform, find) == expected


def test_gui_opens_the_window_with_the_given_files(monkeypatch):
    from volbench.gui import app

    opened = []
    monkeypatch.setenv("QT_QPA_PLATFORM", "offscreen")
    monkeypatch.setattr(app, "run", lambda files, samples_when_empty: opened.append((list(files), samples_when_empty))
                        or 0)
    assert main(["gui", "a.csv", "b.csv"]) == 0
    assert main(["gui"]) == 0
    assert opened[0] == (["a.csv", "b.csv"], True)
    assert opened[1] == ([], True)  # app.run reads sample_files() after the first paint


def test_default_files_are_the_bundled_samples(monkeypatch, sample_dir):
    monkeypatch.chdir(sample_dir.parent)
    files = sample_files()
    assert [f.rsplit("/", 1)[-1] for f in files] == sorted(p.name for p in sample_dir.glob("*.csv"))
