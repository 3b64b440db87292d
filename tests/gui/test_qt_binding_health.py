"""The installed Qt binding must not leak references on ordinary calls.

PySide6-Essentials 6.12.0 on CPython 3.11 drops a reference to None on every Qt method returning
nothing and to True on every Signal.emit, so a long session aborts ("Fatal Python error:
none_dealloc"). pyproject.toml excludes that release; this test fails if such a build is installed.
"""

from __future__ import annotations

import sys

from PySide6.QtCore import QObject, Signal


class _Pinger(QObject):
    ping = Signal()


def test_qt_calls_and_signal_emits_keep_reference_counts_of_none_and_true():
    # Theory: a correct C extension returns new references, so the counts stay put (within noise
    # from the interpreter's own bookkeeping); the defective build loses one per call.
    obj = _Pinger()
    before = sys.getrefcount(None), sys.getrefcount(True)
    for _ in range(500):
        obj.setObjectName("x")
        obj.ping.emit()
    after = sys.getrefcount(None), sys.getrefcount(True)
    assert after[0] >= before[0] - 10, "Qt binding leaks references to None; install PySide6-Essentials < 6.12"
    assert after[1] >= before[1] - 10, "Qt binding leaks references to True; install PySide6-Essentials < 6.12"
