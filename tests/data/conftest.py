"""Fixtures for the import tests: the row-accounting check, computed independently of the reader."""

from __future__ import annotations

from pathlib import Path

import pytest

from volbench.data.load import accounting
from volbench.data.reader import read_table

BLANK = " \t\r\x0b\x0c"


def content_lines(path: Path, delimiter: str, header_line: int) -> set[int]:
    """Lines after the header holding anything but white space, the delimiter and quote marks."""
    raw = path.read_bytes()
    if raw[:2] in (b"\xff\xfe", b"\xfe\xff"):
        text = raw.decode("utf-16")
    else:
        try:
            text = raw.decode("utf-8-sig")
        except UnicodeDecodeError:
            text = raw.decode("cp1252", errors="replace")
    text = text.replace("\r\n", "\n").replace("\r", "\n")
    return {i for i, line in enumerate(text.split("\n"), start=1)
            if i > header_line and line.strip(BLANK + delimiter + '"')}


@pytest.fixture
def check_accounts():
    """check_accounts(path, histories, **read_args): every data row is used or named as left out.

    Common practice, no source: data rows in the file = rows used + rows reported in findings.
    """

    def _check(path, histories, delimiter=None):
        table = read_table(path, delimiter)
        expected = content_lines(Path(path), table.delimiter, table.header_line)
        used, out = accounting(histories)
        assert not used & out, sorted(used & out)[:10]
        assert used | out == expected, (sorted((used | out) ^ expected)[:10])
        assert len(expected) == len(used) + len(out) == table.data_rows

    return _check
