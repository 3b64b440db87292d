"""The guard against PySide6 builds that drop references to None/True on every Qt call."""

from __future__ import annotations

import sys

from PySide6.QtCore import QObject, Signal

from volbench.gui import _refguard


class _Pinger(QObject):
    ping = Signal()


def test_many_qt_calls_cannot_exhaust_none_or_true():
    # Theory: CPython aborts when the reference count of None or True reaches zero; each leaking
    # call removes one reference. After the guard, either the build does not leak (counts stay
    # put) or the singletons carry PIN extra references, far beyond any session's call count.
    obj = _Pinger()
    before = sys.getrefcount(None), sys.getrefcount(True)
    for _ in range(2000):
        obj.setObjectName("x")
        obj.ping.emit()
    after = sys.getrefcount(None), sys.getrefcount(True)
    if _refguard.PROTECTED:
        assert min(after) > _refguard.PIN // 2
    else:
        assert after[0] >= before[0] - 10 and after[1] >= before[1] - 10


def test_protect_is_skipped_where_objects_are_immortal(monkeypatch):
    monkeypatch.setattr(sys, "version_info", (3, 12, 0))
    assert _refguard.protect() is False
