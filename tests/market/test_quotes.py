"""Reading option-quotes files: aliases, delimiters, and a finding with its line for every bad row."""

from __future__ import annotations

import numpy as np
import pytest

from volbench.errors import VolbenchError
from volbench.market import read_quotes


def _write(tmp_path, text, name="quotes.csv"):
    p = tmp_path / name
    p.write_text(text)
    return p


def test_aliases_case_insensitive_and_bid_ask_mid(tmp_path):
    p = _write(tmp_path, "EXPIRATION DATE,Strike Price,Call/Put,Bid,Offer,Mark,Underlying\n"
                         "2025-03-21,40,C,2.9,3.1,,VHX\n"
                         "2025-03-21,40,p,0.9,1.1,1.02,VHX\n"
                         "2025-03-21,42,Call,,,1.75,VHX\n")
    q = read_quotes(p)
    assert q.headers == {"expiry": "EXPIRATION DATE", "strike": "Strike Price", "type": "Call/Put", "bid": "Bid",
                         "ask": "Offer", "mid": "Mark"}
    t = q.table
    assert t.line.tolist() == [2, 3, 4]
    assert t.type.tolist() == ["call", "put", "call"]
    # common practice, no source: the mid when given, else (bid + ask) / 2
    assert t.premium.tolist() == [3.0, 1.02, 1.75]
    assert t.premium_from.tolist() == ["bid/ask", "mid", "mid"]
    assert q.findings == () and q.rows == 3 and len(q.sha256) == 64


def test_semicolon_file_with_decimal_commas_and_blank_lines(tmp_path):
    p = _write(tmp_path, "\n\nexpiry;strike;type;mid\n21/03/2025;40,5;put;1,25\n\n21/03/2025;42;call;2,5\n")
    q = read_quotes(p, date_format="%d/%m/%Y")
    assert q.table.strike.tolist() == [40.5, 42.0] and q.table.premium.tolist() == [1.25, 2.5]
    assert q.table.line.tolist() == [4, 6]
    assert str(q.table.expiry.iloc[0].date()) == "2025-03-21"


def test_every_unusable_row_is_a_finding_with_its_line(tmp_path):
    p = _write(tmp_path, "expiry,strike,type,bid,ask,mid\n"
                         "2025-03-21,40,call,2.9,3.1,\n"          # 2 ok
                         ",40,put,0.9,1.1,\n"                     # 3 empty expiry
                         "next month,40,put,0.9,1.1,\n"           # 4 unreadable expiry
                         "2025-03-21,,put,0.9,1.1,\n"             # 5 empty strike
                         "2025-03-21,forty,put,0.9,1.1,\n"        # 6 non-numeric strike
                         "2025-03-21,-40,put,0.9,1.1,\n"          # 7 non-positive strike
                         "2025-03-21,41,straddle,0.9,1.1,\n"      # 8 bad type
                         "2025-03-21,41,put,1.2,1.1,\n"           # 9 crossed
                         "2025-03-21,41,put,0.9,,\n"              # 10 no premium
                         "2025-03-21,41,put,,,-1\n"               # 11 negative mid
                         "2025-03-21,42,put,0,0.1,\n"             # 12 zero bid: kept, warning
                         "2025-03-21,43,put,1.0,1.2,1.5\n"        # 13 mid outside spread: kept, warning
                         "2025-03-21,40,call,2.8,3.0,\n")         # 14 repeats line 2: line 2 left out
    q = read_quotes(p)
    got = [(f.severity, f.kind, f.line, f.column) for f in q.findings]
    assert got == [
        ("warning", "duplicate_quote", 2, "strike"),
        ("error", "missing_value", 3, "expiry"),
        ("error", "bad_date", 4, "expiry"),
        ("error", "missing_value", 5, "strike"),
        ("error", "non_numeric", 6, "strike"),
        ("error", "non_positive", 7, "strike"),
        ("error", "bad_type", 8, "type"),
        ("error", "crossed_quote", 9, "bid"),
        ("error", "missing_value", 10, "mid"),
        ("error", "non_positive", 11, "mid"),
        ("warning", "zero_bid", 12, "bid"),
        ("warning", "mid_outside_spread", 13, "mid"),
    ]
    assert q.table.line.tolist() == [12, 13, 14]
    msgs = {f.line: f.message for f in q.findings}
    assert msgs[2].startswith("line 2: call 40 expiring 2025-03-21 repeats on line 14")
    assert msgs[4] == ("line 4, column 'expiry': expiry 'next month' cannot be read; row left out (write dates "
                       "as YYYY-MM-DD or pass the format, e.g. --date-format %d/%m/%Y)")
    assert "'straddle' is neither call nor put" in msgs[8]
    assert "bid 1.2 is above ask 1.1" in msgs[9]
    assert q.table.premium.tolist() == [0.05, 1.5, 2.9]
    assert q.rows == 13


def test_header_and_structure_errors(tmp_path):
    with pytest.raises(VolbenchError, match=r"no type column among headers 'expiry', 'strike', 'mid'"):
        read_quotes(_write(tmp_path, "expiry,strike,mid\n2025-03-21,40,1\n"))
    with pytest.raises(VolbenchError, match=r"no premium column.*give a Mid \(or Premium/Price\) column, or both Bid"):
        read_quotes(_write(tmp_path, "expiry,strike,type,bid\n2025-03-21,40,call,1\n"))
    with pytest.raises(VolbenchError, match=r"header found but no data rows"):
        read_quotes(_write(tmp_path, "expiry,strike,type,mid\n\n"))
    with pytest.raises(VolbenchError, match=r"line 3 has 5 cells but the header has 4"):
        read_quotes(_write(tmp_path, "expiry,strike,type,mid\n2025-03-21,40,call,1\n2025-03-21,41,call,1,9\n"))
    with pytest.raises(VolbenchError, match=r"no usable quote in 2 rows \(line 2, column 'type'"):
        read_quotes(_write(tmp_path, "expiry,strike,type,mid\n2025-03-21,40,x,1\n2025-03-21,41,y,1\n"))
    with pytest.raises(VolbenchError, match="file not found"):
        read_quotes(tmp_path / "missing.csv")


def test_trailing_empty_cells_are_tolerated(tmp_path):
    q = read_quotes(_write(tmp_path, "expiry,strike,type,mid\n2025-03-21,40,call,1,,\n"))
    assert q.n == 1 and q.findings == ()
    assert np.isnan(q.table.bid.iloc[0])
