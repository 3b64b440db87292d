"""Text cells that a spreadsheet could execute or choke on, made safe before they are written.

A cell beginning with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return is read by
spreadsheet programs as a formula; series names and findings carry text from the user's files, so
such a cell is written as plain text: in XLSX as a string cell (never a formula), in CSV and
tab-separated text with a leading apostrophe. Control characters that XML cannot hold and that
break terminals are written as visible escapes (``\\x01``), never dropped silently.
"""

from __future__ import annotations

import re

FORMULA_LEAD = ("=", "+", "-", "@", "\t", "\r")
"""First characters that make a spreadsheet treat a text cell as a formula."""
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")


def escape_controls(text: str) -> str:
    """Control characters (other than tab, line feed and carriage return) as ``\\xNN`` text."""
    return _CONTROL.sub(lambda m: f"\\x{ord(m.group()):02x}", text)


def neutralise(text: str) -> str:
    """Text safe to open in a spreadsheet from CSV or pasted text.

    Notes
    -----
    Common practice for spreadsheet formula injection, no source: prefix a single quote to a
    cell whose first character is one of :data:`FORMULA_LEAD`, so the program shows it as text.
    """
    text = escape_controls(text)
    return "'" + text if text.startswith(FORMULA_LEAD) else text
