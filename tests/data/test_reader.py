"""Reading price CSVs: header aliases, delimiters, case, and unreadable input."""

from __future__ import annotations

import re

import numpy as np
import pytest

from volbench.data import load_prices
from volbench.data.reader import ALIASES, find_header, normalise_header, read_table
from volbench.errors import VolbenchError

ROWS = [("2021-03-01", 10.0, 10.6, 9.8, 10.4, 1200), ("2021-03-02", 10.4, 10.9, 10.1, 10.7, 1500),
        ("2021-03-03", 10.7, 10.8, 10.2, 10.3, 900)]


def _write(tmp_path, text: str, name: str = "prices.csv"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def _csv(header: list[str], rows, delim: str = ",") -> str:
    return delim.join(header) + "\n" + "".join(delim.join(str(c) for c in r) + "\n" for r in rows)


@pytest.mark.parametrize("alias", ALIASES["date"])
def test_every_date_alias(tmp_path, alias):
    p = _write(tmp_path, _csv([alias, "Close"], [(r[0], r[4]) for r in ROWS]))
    (h,) = load_prices(p)
    assert h.first_date == "2021-03-01" and h.n == 3


@pytest.mark.parametrize("alias", ALIASES["close"])
def test_every_close_alias(tmp_path, alias):
    p = _write(tmp_path, _csv(["Date", alias], [(r[0], r[4]) for r in ROWS]))
    (h,) = load_prices(p)
    np.testing.assert_array_equal(h.close, [10.4, 10.7, 10.3])
    assert h.price_basis == "close"


@pytest.mark.parametrize("canon", ["open", "high", "low", "volume"])
def test_every_open_high_low_volume_alias(tmp_path, canon):
    col = {"open": 1, "high": 2, "low": 3, "volume": 5}[canon]
    for alias in ALIASES[canon]:
        p = _write(tmp_path, _csv(["Date", alias, "Close"], [(r[0], r[col], r[4]) for r in ROWS]))
        (h,) = load_prices(p)
        assert h.columns == {canon, "close"}, alias
        np.testing.assert_array_equal(getattr(h, canon), [r[col] for r in ROWS])


@pytest.mark.parametrize("alias", ALIASES["adj_close"])
def test_every_adjusted_close_alias(tmp_path, alias):
    rows = [(r[0], r[4], r[4] / 2) for r in ROWS]
    p = _write(tmp_path, _csv(["Date", "Close", alias], rows))
    (plain,) = load_prices(p)
    (adj,) = load_prices(p, use_adjusted=True)
    np.testing.assert_array_equal(plain.close, [10.4, 10.7, 10.3])
    np.testing.assert_array_equal(adj.close, [5.2, 5.35, 5.15])
    assert adj.price_basis == "adjusted close" and plain.price_basis == "close"


@pytest.mark.parametrize("alias", ALIASES["symbol"])
def test_every_symbol_alias_gives_a_long_layout(tmp_path, alias):
    rows = [("NORTHWIND", r[0], r[4]) for r in ROWS] + [("SOUTHGALE", r[0], 2 * r[4]) for r in ROWS]
    p = _write(tmp_path, _csv([alias, "Date", "Close"], rows))
    a, b = load_prices(p)
    assert (a.name, b.name) == ("NORTHWIND", "SOUTHGALE")
    np.testing.assert_array_equal(b.close, [20.8, 21.4, 20.6])


@pytest.mark.parametrize("header", [
    ["DATE", "OPEN", "HIGH", "LOW", "CLOSE", "VOLUME"],
    ["date", "open", "high", "low", "close", "volume"],
    ["Date", "oPeN", "High", "lOW", "Close", "Volume"],
    [" Trade_Date ", "Open Price", "High-Price", "Low.Price", "Close (EUR)", "Shares"],
])
def test_headers_match_case_insensitively_and_ignore_separators(tmp_path, header):
    p = _write(tmp_path, _csv(header, ROWS))
    (h,) = load_prices(p)
    assert h.columns == {"open", "high", "low", "close", "volume"}
    np.testing.assert_array_equal(h.high, [10.6, 10.9, 10.8])


def test_normalise_header():
    assert normalise_header('  "Adj_Close (USD)" ') == "adj close"
    assert normalise_header("Trade-Date") == "trade date"


def test_comma_delimiter(tmp_path):
    p = _write(tmp_path, _csv(["Date", "Open", "High", "Low", "Close"], [r[:5] for r in ROWS]))
    assert read_table(p).delimiter == ","
    (h,) = load_prices(p)
    np.testing.assert_array_equal(h.open, [10.0, 10.4, 10.7])


def test_semicolon_delimiter_with_decimal_commas(tmp_path):
    text = ("Date;Open;High;Low;Close\n"
            "2021-03-01;1.010,5;1.020,0;1.000,25;1.015,75\n"
            "2021-03-02;1.015,75;1.030,0;1.012,5;1.028,0\n")
    p = _write(tmp_path, text)
    assert read_table(p).delimiter == ";"
    (h,) = load_prices(p)
    np.testing.assert_array_equal(h.open, [1010.5, 1015.75])
    np.testing.assert_array_equal(h.low, [1000.25, 1012.5])
    np.testing.assert_array_equal(h.close, [1015.75, 1028.0])


def test_tab_delimiter_with_thousands_separators(tmp_path):
    p = _write(tmp_path, "Date\tClose\tVolume\n2021-03-01\t1,234.5\t1,000\n2021-03-02\t1,240.25\t2,000\n")
    assert read_table(p).delimiter == "\t"
    (h,) = load_prices(p)
    np.testing.assert_array_equal(h.close, [1234.5, 1240.25])
    np.testing.assert_array_equal(h.volume, [1000, 2000])


def test_semicolon_with_dot_decimals(tmp_path):
    p = _write(tmp_path, "Date;Close\n2021-03-01;10.5\n2021-03-02;10.75\n")
    (h,) = load_prices(p)
    np.testing.assert_array_equal(h.close, [10.5, 10.75])


def test_forced_delimiter(tmp_path):
    p = _write(tmp_path, "Date|Close\n2021-03-01|10\n")
    with pytest.raises(VolbenchError, match="no date column among headers 'Date|Close'"):
        load_prices(p)
    assert list(read_table(p, "|").columns["close"]) == [10.0]


@pytest.mark.parametrize(("text", "delim"), [
    ("Date;Close\n2021-03-01;10,5\n", ";"),            # the commas are decimal marks, not separators
    ("Date\tClose\n2021-03-01\t1,234.5\n", "\t"),
])
def test_delimiter_is_the_one_that_splits_the_header_into_date_and_close(tmp_path, text, delim):
    # common practice, no source: the header names the columns, so it fixes the separator
    p = _write(tmp_path, text)
    assert find_header(p, text.encode(), None)[1] == delim


def test_utf8_bom_and_windows_line_endings(tmp_path):
    p = tmp_path / "bom.csv"
    p.write_bytes("\ufeffDate,Close\r\n2021-03-01,10\r\n2021-03-02,11\r\n".encode())
    (h,) = load_prices(p)
    assert h.n == 2 and list(h.lines) == [2, 3]


def test_line_numbers_count_blank_lines_and_multiline_quotes(tmp_path):
    text = 'Date,Close\n2021-03-01,10\n\n2021-03-02,"1\n1"\n2021-03-03,12\n'
    p = _write(tmp_path, text)
    (h,) = load_prices(p)
    assert list(h.lines) == [2, 6]
    (f,) = h.findings  # a quoted cell over two lines is never a price: the record is left out
    assert (f.severity, f.kind, f.line, f.lines) == ("error", "quote_span", 4, (4, 5))
    assert f.message.startswith("line 4: a quoted cell runs over 2 lines (to line 5), swallowing 1 line;")


# ------------------------------------------------------------------------- unreadable input
def _err(path):
    return re.escape(str(path))


def test_missing_file(tmp_path):
    p = tmp_path / "nowhere.csv"
    with pytest.raises(VolbenchError, match=_err(p) + ": file not found; check the path"):
        load_prices(p)


def test_empty_file(tmp_path):
    p = _write(tmp_path, "")
    with pytest.raises(VolbenchError, match=_err(p) + ": file is empty; export the price history again"):
        load_prices(p)


def test_whitespace_only_file(tmp_path):
    p = _write(tmp_path, "\n  \n\t\n")
    with pytest.raises(VolbenchError, match=_err(p) + ": file is empty"):
        load_prices(p)


def test_header_only(tmp_path):
    p = _write(tmp_path, "Date,Close\n")
    with pytest.raises(VolbenchError, match=_err(p) + ": header found but no data rows; the file holds no prices"):
        load_prices(p)


def test_no_date_column(tmp_path):
    p = _write(tmp_path, "Day of week,Close\nMon,10\n")
    with pytest.raises(VolbenchError, match=_err(p) + r": line 1: no date column among headers 'Day of week', "
                                                       r"'Close'; name one column Date \(or Time/Timestamp\)"):
        load_prices(p)


def test_no_close_column(tmp_path):
    p = _write(tmp_path, "Date,Open,High\n2021-03-01,10,11\n")
    with pytest.raises(VolbenchError, match=_err(p) + r": line 1: no close column among headers 'Date', 'Open', "
                                                       r"'High'; name one column Close"):
        load_prices(p)


def test_binary_garbage_with_nul_bytes(tmp_path):
    p = tmp_path / "image.csv"
    p.write_bytes(bytes(range(256)) * 8)
    with pytest.raises(VolbenchError, match=_err(p) + r": looks like a binary file, not a CSV \(contains NUL bytes\)"):
        load_prices(p)


def test_binary_garbage_without_nul_bytes(tmp_path):
    p = tmp_path / "blob.csv"
    p.write_bytes(bytes(range(1, 32)) * 20)
    with pytest.raises(VolbenchError, match=_err(p) + r": looks like a binary file, not a CSV \(\d+ control characters\)"):
        load_prices(p)


def test_a_folder(tmp_path):
    d = tmp_path / "prices"
    d.mkdir()
    with pytest.raises(VolbenchError, match=_err(d) + ": is a folder, not a CSV file"):
        load_prices(d)


def test_cp1252_text_is_read(tmp_path):
    p = tmp_path / "latin.csv"
    p.write_bytes("Date,Close (\u20ac)\n2021-03-01,10\n2021-03-02,11\n".encode("cp1252"))
    (h,) = load_prices(p)
    assert h.n == 2
