"""Guard against a reference-count defect in some PySide6 builds (seen with 6.12.0 on CPython 3.11).

In the affected builds every call of a Qt method returning nothing (``setVisible``, ``setText``,
...) and every ``Signal.emit`` hands back ``None`` or ``True`` without taking a reference for it.
Each call therefore removes one reference from those singletons; after enough calls CPython tries
to free ``None`` or ``True`` and aborts ("Fatal Python error: none_dealloc"), often at exit.

:func:`protect` probes for the defect with a few harmless calls and, only when it is present and
only on CPython before 3.12 (which has no immortal objects), adds a very large number of
references to ``None``, ``True`` and ``False``. Those objects are never freed in a healthy
interpreter anyway, so this only prevents the abort; CPython 3.12+ does the same thing by design
("immortal objects", PEP 683). Nothing else is changed.
"""

from __future__ import annotations

import ctypes
import platform
import sys

PROBE_CALLS = 16
PIN = 1 << 40


def _leaks() -> bool:
    from PySide6.QtCore import QObject, Signal

    class _Probe(QObject):
        ping = Signal()

    probe = _Probe()
    none_before, true_before = sys.getrefcount(None), sys.getrefcount(True)
    for _ in range(PROBE_CALLS):
        probe.setObjectName("probe")
        probe.ping.emit()
    lost_none = none_before - sys.getrefcount(None)
    lost_true = true_before - sys.getrefcount(True)
    return lost_none >= PROBE_CALLS // 2 or lost_true >= PROBE_CALLS // 2


def protect() -> bool:
    """Pin ``None``, ``True`` and ``False`` if this PySide6 build leaks them; True when applied."""
    if platform.python_implementation() != "CPython" or sys.version_info >= (3, 12):
        return False
    if not _leaks():
        return False
    for obj in (None, True, False):
        ctypes.c_ssize_t.from_address(id(obj)).value += PIN
    return True


PROTECTED = protect()
