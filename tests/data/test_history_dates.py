"""ISO date strings of the price history: the fast path gives pandas' own text."""

from __future__ import annotations

import numpy as np
import pandas as pd

from volbench.data.history import _iso


def test_iso_dates_and_times_match_pandas():
    # Reference library: pandas.Timestamp strftime("%Y-%m-%d") at midnight, isoformat() otherwise.
    stamps = ["2020-01-02", "1970-01-01", "2262-04-10", "1678-01-02", "2020-01-02T09:30:00",
              "2020-01-02T00:00:00.000001", "1999-12-31T23:59:59.999999999"]
    for text in stamps:
        d = np.datetime64(text, "ns")
        ts = pd.Timestamp(d)
        expected = ts.strftime("%Y-%m-%d") if ts == ts.normalize() else ts.isoformat()
        assert _iso(d) == expected
        assert _iso(ts) == expected
        assert _iso(np.array([d])[0]) == expected
