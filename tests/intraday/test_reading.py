"""Loading intraday bars: one timestamp column through the loader, separate date and time columns here."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from volbench.data import load_prices
from volbench.errors import VolbenchError
from volbench.intraday.reading import date_time_columns, load_bars


def _frame(sim_intraday, days=3):
    h = sim_intraday(days, 78, 0.2, 71)
    ts = pd.DatetimeIndex(h.dates)
    return h, pd.DataFrame({"Date": ts.strftime("%Y-%m-%d"), "Time": ts.strftime("%H:%M"), "Open": h.open,
                            "High": h.high, "Low": h.low, "Close": h.close})


def test_date_and_time_columns_are_joined(tmp_path, sim_intraday):
    h, f = _frame(sim_intraday)
    path = tmp_path / "bars.csv"
    f.to_csv(path, index=False, float_format="%.6f")
    (got,) = load_bars(path)
    np.testing.assert_array_equal(got.dates, h.dates)
    np.testing.assert_allclose(got.close, h.close, rtol=1e-6)
    assert got.lines[0] == 2 and got.name == "bars" and got.sha256 and got.has("open", "high", "low")
    # today's loader reads the date column alone: every bar of a day shares one date
    (plain,) = load_prices(path)
    assert plain.n == 3 and any(f.kind == "duplicate_date" for f in plain.findings)


def test_one_timestamp_column_goes_through_the_loader(tmp_path, sim_intraday):
    h, f = _frame(sim_intraday)
    f = f.assign(Timestamp=f["Date"] + " " + f["Time"]).drop(columns=["Date", "Time"]).astype({"Close": object})
    f.loc[5, "Close"] = "n/a"
    path = tmp_path / "stamps.csv"
    f.to_csv(path, index=False)
    (got,) = load_bars(path)
    assert got.n == h.n - 1 and any(x.kind == "non_numeric" and x.line == 7 for x in got.findings)


def test_header_detection():
    assert date_time_columns(["Date", "Time", "Close"]) == (0, 1)
    assert date_time_columns(["Trade Date", "Open", "Bar Time", "Close"]) == (0, 2)
    assert date_time_columns(["Timestamp", "Close"]) is None
    assert date_time_columns(["Date", "Close"]) is None


@pytest.mark.parametrize("row, cell, msg", [
    (4, ("Time", "9h35"), r"line 6, columns 'Date'/'Time': cannot read '2024-01-02' '9h35'"),
    (4, ("Close", "-1"), r"line 6, column 'Close': '-1' is not a positive price"),
    (4, ("Time", "09:30"), r"line 6: timestamp 2024-01-02 09:30 is not after the previous row's; sort the file"),
])
def test_unusable_rows_stop_the_strict_reader(tmp_path, sim_intraday, row, cell, msg):
    _, f = _frame(sim_intraday)
    f = f.astype({"Close": object})
    f.loc[row, cell[0]] = cell[1]
    path = tmp_path / "bad.csv"
    f.to_csv(path, index=False)
    with pytest.raises(VolbenchError, match=msg):
        load_bars(path)


def test_symbol_column_with_separate_time_is_refused(tmp_path, sim_intraday):
    _, f = _frame(sim_intraday)
    f.insert(0, "Symbol", "VELL-FICT")
    path = tmp_path / "long.csv"
    f.to_csv(path, index=False)
    with pytest.raises(VolbenchError, match="separate date and time columns with a symbol column are not read yet"):
        load_bars(path)


def test_decimal_commas_in_a_semicolon_file(tmp_path, sim_intraday):
    h, f = _frame(sim_intraday, days=1)
    text = f.to_csv(index=False, sep=";", float_format="%.4f").replace(".", ",")
    path = tmp_path / "eu.csv"
    path.write_text(text)
    (got,) = load_bars(path)
    np.testing.assert_allclose(got.close, h.close, atol=6e-5)
