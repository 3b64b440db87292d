"""Loading: layouts, dates, ordering, adjusted close, flagged-row policy and the history object."""

from __future__ import annotations

import hashlib

import numpy as np
import pytest

from volbench.data import PriceHistory, load_many, load_prices
from volbench.errors import VolbenchError
from volbench.estimators import estimate_all, point_estimate


def _write(tmp_path, text: str, name: str = "prices.csv"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


OHLC = (
    "Date,Open,High,Low,Close,Volume\n"
    "2021-03-01,10.0,10.6,9.8,10.4,1200\n"
    "2021-03-02,10.4,10.9,10.1,10.7,1500\n"
    "2021-03-03,10.7,10.8,10.2,10.3,900\n"
    "2021-03-04,10.3,10.5,9.9,10.0,1100\n"
)


def test_one_series_per_file_named_after_the_file(tmp_path):
    p = _write(tmp_path, OHLC, "harbour_tug_co.csv")
    (h,) = load_prices(p)
    assert h.name == "harbour_tug_co" and h.source == p
    assert h.n == 4 and h.first_date == "2021-03-01" and h.last_date == "2021-03-04"
    assert h.columns == {"open", "high", "low", "close", "volume"}
    assert list(h.lines) == [2, 3, 4, 5]
    assert h.findings == ()
    assert h.sha256 == hashlib.sha256(p.read_bytes()).hexdigest()
    assert h.provenance()["flagged_rows"] == "kept" and h.provenance()["price_basis"] == "close"


def test_history_arrays_are_read_only(tmp_path):
    (h,) = load_prices(_write(tmp_path, OHLC))
    with pytest.raises(ValueError, match="read-only"):
        h.close[0] = 1.0
    with pytest.raises(AttributeError):
        h.name = "other"


def test_close_only_file_is_valid(tmp_path):
    (h,) = load_prices(_write(tmp_path, "Date,Close\n2021-03-01,10\n2021-03-02,11\n2021-03-03,10.5\n"))
    assert h.columns == {"close"} and h.open is None and h.high is None
    rep = estimate_all(h)
    assert set(rep.estimates) == {"close_to_close", "ewma"}
    assert rep.unavailable["parkinson"] == "needs high/low columns"


def test_iso_dates_with_times_and_explicit_format(tmp_path):
    (iso,) = load_prices(_write(tmp_path, "Date,Close\n2021-03-01T00:00:00,10\n2021-03-02T00:00:00,11\n"))
    assert iso.first_date == "2021-03-01"
    text = "Date,Close\n01/03/2021,10\n02/03/2021,11\n15/03/2021,12\n"
    (eu,) = load_prices(_write(tmp_path, text, "eu.csv"), date_format="%d/%m/%Y")
    assert [eu.first_date, eu.last_date] == ["2021-03-01", "2021-03-15"]


def test_time_zone_offsets_keep_the_local_date(tmp_path):
    text = "Date,Close\n2021-03-01T00:00:00+01:00,10\n2021-03-02T00:00:00+01:00,11\n2021-03-03T00:00:00-05:00,12\n"
    (h,) = load_prices(_write(tmp_path, text))
    assert [h.first_date, h.last_date] == ["2021-03-01", "2021-03-03"] and h.n == 3


def test_non_iso_dates_without_format_explain_what_to_do(tmp_path):
    p = _write(tmp_path, "Date,Close\n01/03/2021,10\n02/03/2021,11\n")
    with pytest.raises(VolbenchError, match=r"line 2, column 'Date': cannot read date '01/03/2021'; dates are not "
                                            r"ISO \(YYYY-MM-DD\); pass the format, e.g. --date-format %d/%m/%Y"):
        load_prices(p)
    with pytest.raises(VolbenchError, match=r"cannot read date '01/03/2021'; the date format '%Y/%m/%d' does not match"):
        load_prices(p, date_format="%Y/%m/%d")


def test_out_of_range_date_is_a_bad_date_not_a_wrapped_one(tmp_path):
    text = "Date,Close\n2021-03-01,10\n9999-01-01,11\n2021-03-02,12\n2021-03-03,12.5\n"
    (h,) = load_prices(_write(tmp_path, text))
    assert h.n == 3 and h.last_date == "2021-03-03"
    (f,) = [f for f in h.findings if f.kind == "bad_date"]
    assert (f.line, f.date, f.column) == (3, None, "date")


def test_descending_file_is_sorted_and_says_so(tmp_path):
    text = "Date,Close\n2021-03-03,12\n2021-03-02,11\n2021-03-01,10\n"
    (h,) = load_prices(_write(tmp_path, text))
    np.testing.assert_array_equal(h.close, [10, 11, 12])
    assert list(h.lines) == [4, 3, 2]
    (f,) = h.findings
    assert (f.severity, f.kind, f.message) == ("info", "sorted", "rows were in descending date order; sorted ascending")


def test_shuffled_file_is_sorted_and_says_so(tmp_path):
    (h,) = load_prices(_write(tmp_path, "Date,Close\n2021-03-02,11\n2021-03-03,12\n2021-03-01,10\n"))
    np.testing.assert_array_equal(h.close, [10, 11, 12])
    assert h.findings[0].message == "rows were not in date order; sorted ascending"


def test_long_layout_with_symbol_column(tmp_path):
    text = ("Ticker,Date,Close\n"
            "MARLOW-FISH,2021-03-01,10\n"
            "ORRIN-RAIL,2021-03-01,50\n"
            "MARLOW-FISH,2021-03-02,11\n"
            "ORRIN-RAIL,2021-03-02,abc\n"
            "ORRIN-RAIL,2021-03-03,52\n"
            "MARLOW-FISH,2021-03-03,12\n"
            ",2021-03-04,13\n")
    a, b = load_prices(_write(tmp_path, text))
    assert (a.name, b.name) == ("MARLOW-FISH", "ORRIN-RAIL")
    np.testing.assert_array_equal(a.close, [10, 11, 12])
    np.testing.assert_array_equal(b.close, [50, 52])
    assert list(a.lines) == [2, 4, 7] and list(b.lines) == [3, 6]
    # each series carries only its own row findings; the unnamed row is reported once
    assert [(f.kind, f.line, f.column) for f in b.findings] == [("non_numeric", 5, "close")]
    assert [(f.kind, f.line, f.column) for f in a.findings] == [("missing_value", 8, "symbol")]
    assert "symbol is empty; row left out" in a.findings[0].message


def test_long_layout_with_every_symbol_empty(tmp_path):
    p = _write(tmp_path, "Symbol,Date,Close\n,2021-03-01,10\n,2021-03-02,11\n")
    with pytest.raises(VolbenchError, match=r"column 'Symbol' is empty in every row; fill in the series name"):
        load_prices(p)


def test_adjusted_close_scales_open_high_low(tmp_path):
    text = ("Date,Open,High,Low,Close,Adj Close\n"
            "2021-03-01,10.0,10.6,9.8,10.4,5.2\n"
            "2021-03-02,10.4,10.9,10.1,10.7,10.7\n")
    p = _write(tmp_path, text)
    (raw,) = load_prices(p)
    (adj,) = load_prices(p, use_adjusted=True)
    np.testing.assert_array_equal(raw.close, [10.4, 10.7])
    np.testing.assert_allclose(adj.close, [5.2, 10.7])
    # factor adj / close = 0.5 on the first row, 1 on the second
    np.testing.assert_allclose(adj.open, [5.0, 10.4])
    np.testing.assert_allclose(adj.high, [5.3, 10.9])
    np.testing.assert_allclose(adj.low, [4.9, 10.1])
    assert adj.price_basis == "adjusted close" and adj.provenance()["price_basis"] == "adjusted close"


def test_adjusted_close_only_is_used(tmp_path):
    (h,) = load_prices(_write(tmp_path, "Date,Adj Close\n2021-03-01,10\n2021-03-02,11\n"))
    assert h.price_basis == "adjusted close"
    np.testing.assert_array_equal(h.close, [10, 11])


def test_adjustment_needs_the_raw_close(tmp_path):
    text = "Date,Open,Close,Adj Close\n2021-03-01,10,10,5\n2021-03-02,11,,5.5\n2021-03-03,12,12,6\n"
    (h,) = load_prices(_write(tmp_path, text), use_adjusted=True)
    assert h.n == 2
    (f,) = h.findings
    assert (f.severity, f.kind, f.line, f.column) == ("error", "non_positive", 3, "close")
    assert "adjustment factor cannot be applied" in f.message


def test_load_many_makes_names_unique(tmp_path):
    d1, d2 = tmp_path / "a", tmp_path / "b"
    d1.mkdir()
    d2.mkdir()
    p1 = _write(d1, OHLC, "tern_shipping.csv")
    p2 = _write(d2, OHLC, "tern_shipping.csv")
    p3 = _write(tmp_path, OHLC, "gull_foods.csv")
    names = [h.name for h in load_many([p1, p2, p3])]
    assert names == ["tern_shipping", "tern_shipping (tern_shipping)", "gull_foods"]


def test_load_many_stops_at_a_bad_file(tmp_path):
    good = _write(tmp_path, OHLC)
    with pytest.raises(VolbenchError, match="missing.csv: file not found"):
        load_many([good, tmp_path / "missing.csv"])


FLAGGED = (
    "Date,Open,High,Low,Close\n"
    "2021-03-01,10.0,10.6,9.8,10.4\n"
    "2021-03-02,10.4,10.9,10.1,10.7\n"
    "2021-03-03,10.7,10.2,10.8,10.3\n"   # line 4: high below low
    "2021-03-04,10.3,10.5,9.9,10.0\n"
    "2021-03-05,10.0,10.4,9.7,10.2\n"
    "2021-03-08,10.2,10.3,9.9,11.5\n"    # line 7: close above high
    "2021-03-09,10.1,10.4,9.8,10.1\n"
)


def test_keep_flagged_rows_by_default(tmp_path):
    (h,) = load_prices(_write(tmp_path, FLAGGED))
    assert h.n == 7 and not h.exclude_flagged and h.excluded_lines == ()
    assert h.flagged_lines == {4, 7}
    assert {(f.kind, f.line) for f in h.findings} == {("high_below_low", 4), ("outside_range", 7)}


def test_exclude_flagged_rows_changes_numbers_and_records_the_choice(tmp_path):
    p = _write(tmp_path, FLAGGED)
    (kept,) = load_prices(p)
    (excl,) = load_prices(p, exclude_flagged=True)
    assert excl.n == 5 and excl.exclude_flagged and excl.excluded_lines == (4, 7)
    assert list(excl.lines) == [2, 3, 5, 6, 8]
    assert set(kept.findings) <= set(excl.findings)  # the findings stay visible
    # each left-out bar between kept bars is named: the return across it spans two bars
    notes = [(f.kind, f.line, f.message) for f in excl.findings if f not in kept.findings]
    assert notes == [
        ("excluded_gap", 5, "line 4 left out as flagged: the return from 2021-03-02 to 2021-03-04 spans 2 bars"),
        ("excluded_gap", 8, "line 7 left out as flagged: the return from 2021-03-05 to 2021-03-09 spans 2 bars"),
    ]
    prov = excl.provenance()
    assert prov["flagged_rows"] == "excluded" and prov["excluded_lines"] == [4, 7]
    rep_k, rep_e = estimate_all(kept), estimate_all(excl)
    assert rep_e.as_dict()["flagged_rows"] == "excluded" and rep_k.as_dict()["flagged_rows"] == "kept"
    for key in ("close_to_close", "parkinson", "garman_klass"):
        assert rep_k.estimates[key].vol != pytest.approx(rep_e.estimates[key].vol, rel=1e-3), key
    # excluded equals a file without those rows (same arithmetic, rows simply absent)
    lines = FLAGGED.splitlines()
    clean = "\n".join(line for i, line in enumerate(lines, start=1) if i not in (4, 7)) + "\n"
    (ref,) = load_prices(_write(tmp_path, clean, "clean.csv"))
    assert point_estimate(excl, "parkinson").vol == point_estimate(ref, "parkinson").vol
    assert point_estimate(excl, "close_to_close").vol == point_estimate(ref, "close_to_close").vol


def test_select_is_one_way(tmp_path):
    (h,) = load_prices(_write(tmp_path, FLAGGED))
    excl = h.select(True)
    assert excl.select(True) is excl and h.select(False) is h
    with pytest.raises(VolbenchError, match="flagged rows were already excluded; select from the history as loaded"):
        excl.select(False)


def test_excluding_when_every_row_is_flagged_says_so(tmp_path):
    text = "Date,Open,High,Low,Close\n" + "".join(
        f"2021-03-0{d},10.0,9.0,11.0,10.0\n" for d in range(1, 5))  # high below low on every row
    (h,) = load_prices(_write(tmp_path, text))
    assert h.n == 4 and h.flagged_lines == {2, 3, 4, 5}
    with pytest.raises(VolbenchError, match=r"every one of its 4 rows is flagged .* keep flagged rows or correct the file"):
        h.select(True)


def test_price_history_validates_its_arrays():
    d = np.array(["2021-03-01", "2021-03-02"], dtype="datetime64[ns]")
    with pytest.raises(VolbenchError, match="x: column open has 1 values, close has 2"):
        PriceHistory("x", None, d, np.array([1.0, 2.0]), open=np.array([1.0]))
    with pytest.raises(VolbenchError, match="x: dates must be strictly increasing"):
        PriceHistory("x", None, d[::-1], np.array([1.0, 2.0]))
    with pytest.raises(VolbenchError, match="x: 2 dates but 3 closes"):
        PriceHistory("x", None, d, np.array([1.0, 2.0, 3.0]))


def test_up_to_is_inclusive_of_the_as_of_day(tmp_path):
    (h,) = load_prices(_write(tmp_path, OHLC))
    assert h.up_to("2021-03-02").last_date == "2021-03-02"
    assert h.up_to("2021-03-02").n == 2
    assert h.up_to(None) is h


def test_no_usable_rows(tmp_path):
    p = _write(tmp_path, "Date,Close\n2021-03-01,0\n2021-03-02,-5\n2021-03-03,x\n")
    with pytest.raises(VolbenchError, match=r"prices.csv: series 'prices' has no usable rows \(3 rows, all with "
                                            r"missing, non-numeric or non-positive prices\)"):
        load_prices(p)


def test_up_to_with_a_time_of_day(tmp_path):
    text = "Date,Close\n2021-03-01 10:00,10\n2021-03-01 15:00,11\n2021-03-02 10:00,12\n2021-03-03 10:00,13\n"
    (h,) = load_prices(_write(tmp_path, text))
    assert h.up_to("2021-03-01").n == 2  # a plain date covers the whole day
    assert h.up_to("2021-03-01 12:00").n == 1  # a time of day is an instant
    assert h.up_to("2021-03-02 09:59").n == 2


def test_extreme_adjustment_factor_is_reported_not_overflowed(tmp_path):
    text = ("Date,Open,Close,Adj Close\n"
            "2021-03-01,1e300,1e-10,1\n"   # factor 1e10 pushes open past the float limit
            "2021-03-02,10,0,1\n"          # raw close 0: no factor
            "2021-03-03,10,10,5\n"
            "2021-03-04,10,10,5\n")
    (h,) = load_prices(_write(tmp_path, text), use_adjusted=True)
    assert h.n == 2 and np.isfinite(h.open).all()
    assert [(f.kind, f.line, f.column) for f in h.findings] == [("non_numeric", 2, "open"), ("non_positive", 3, "close")]
    assert h.findings[0].message == ("line 2: adjusted open is out of the range of numbers (factor adjusted/raw "
                                     "close too extreme); row left out")
