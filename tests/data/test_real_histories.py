"""Genuine market moves are not bad data: calibration on the real histories shipped with `arch`.

Source: the S&P 500 and NASDAQ Composite daily histories in the installed `arch` package
(`arch.data.sp500.load()`, `arch.data.nasdaq.load()`, 1999-2018). They are written to a temporary
CSV in each test so they go through the real import path; nothing is copied into the repository.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from volbench.data import load_prices

pytest.importorskip("arch.data.sp500")
from arch.data import nasdaq, sp500

HISTORIES = {"sp500": sp500, "nasdaq": nasdaq}


def _csv(tmp_path, name: str, frame: pd.DataFrame):
    p = tmp_path / f"{name}.csv"
    frame.to_csv(p, index_label="Date")
    return p


@pytest.mark.parametrize("name", sorted(HISTORIES))
@pytest.mark.parametrize("adjusted", [False, True])
def test_no_genuine_move_is_called_a_bad_price_or_split(tmp_path, check_accounts, name, adjusted):
    p = _csv(tmp_path, name, HISTORIES[name].load())
    (h,) = load_prices(p, use_adjusted=adjusted)
    serious = [(f.severity, f.kind, f.date) for f in h.findings if f.severity != "info"]
    assert serious == []
    moves = {f.date for f in h.findings if f.kind == "large_move"}
    # the largest daily moves of each index (arch data; e.g. 2008-10-13, +11 % on both) are noted
    assert "2008-10-13" in moves
    if name == "sp500":
        assert {"2008-09-29", "2008-10-15", "2008-10-28", "2008-12-01"} <= moves
    else:
        assert "2001-01-03" in moves
    check_accounts(p, [h])


def test_planted_bad_tick_and_split_are_still_caught(tmp_path):
    df = sp500.load()
    cols = ["Open", "High", "Low", "Close", "Adj Close"]
    bad = df.copy()
    tick = bad.index.get_loc(pd.Timestamp("2005-06-15"))
    bad.iloc[tick, bad.columns.get_loc("Close")] *= 10  # one print with a misplaced decimal point
    bad.iloc[tick, bad.columns.get_loc("High")] *= 10
    split = bad.index.get_loc(pd.Timestamp("2008-10-20"))  # in the most volatile stretch of the file
    bad.iloc[split:, [bad.columns.get_loc(c) for c in cols]] /= 2
    p = _csv(tmp_path, "planted", bad)
    (h,) = load_prices(p)
    jumps = {f.date: f.message for f in h.findings if f.kind == "jump"}
    assert sorted(jumps) == ["2005-06-15", "2008-10-20"]
    assert "looks like a bad tick" in jumps["2005-06-15"]
    assert "looks like an unadjusted 2:1 split" in jumps["2008-10-20"]
    (fixed,) = load_prices(p, adjust_splits=True, exclude_flagged=True)
    (ref,) = load_prices(_csv(tmp_path, "clean", df))
    r_fixed = np.diff(np.log(fixed.close))
    r_ref = np.diff(np.log(ref.close))
    # after repair, the vol of the whole history is the clean file's to 0.2 % (one bar fewer)
    assert np.std(r_fixed) == pytest.approx(np.std(r_ref), rel=2e-3)
