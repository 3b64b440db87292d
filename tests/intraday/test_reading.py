"""Intraday files through the one loader: timestamps, separate date and time columns, bad rows as findings."""

from __future__ import annotations

import numpy as np
import pandas as pd

from volbench.data import load_prices
from volbench.intraday import infer_layout


def _frame(sim_intraday, days=3):
    h = sim_intraday(days, 78, 0.2, 71)
    ts = pd.DatetimeIndex(h.dates)
    return h, pd.DataFrame({"Date": ts.strftime("%Y-%m-%d"), "Time": ts.strftime("%H:%M"), "Open": h.open,
                            "High": h.high, "Low": h.low, "Close": h.close})


def test_date_and_time_columns_are_joined(tmp_path, sim_intraday):
    # common practice, no source: a bar is labelled by its date and time of day
    h, f = _frame(sim_intraday)
    path = tmp_path / "bars.csv"
    f.to_csv(path, index=False, float_format="%.6f")
    (got,) = load_prices(path)
    np.testing.assert_array_equal(got.dates, h.dates)
    np.testing.assert_allclose(got.close, h.close, rtol=1e-6)
    assert got.lines[0] == 2 and got.name == "bars" and got.has("open", "high", "low")
    assert not any(x.kind == "duplicate_date" for x in got.findings)
    assert infer_layout(got.dates).bar_interval_seconds == 300


def test_unreadable_rows_are_findings_not_silent(tmp_path, sim_intraday):
    h, f = _frame(sim_intraday)
    f = f.astype({"Close": object, "Time": object})
    f.loc[5, "Close"] = "n/a"
    f.loc[9, "Time"] = "9h35"
    path = tmp_path / "stamps.csv"
    f.to_csv(path, index=False)
    (got,) = load_prices(path)
    assert got.n == h.n - 2
    lines = {x.line for x in got.findings if x.severity == "error"}
    assert {7, 11} <= lines


def test_decimal_commas_in_a_semicolon_file(tmp_path, sim_intraday):
    h, f = _frame(sim_intraday, days=1)
    text = f.to_csv(index=False, sep=";", float_format="%.4f").replace(".", ",")
    path = tmp_path / "eu.csv"
    path.write_text(text)
    (got,) = load_prices(path)
    np.testing.assert_allclose(got.close, h.close, atol=6e-5)
