"""Result tables built from typed numpy columns equal pandas' own constructor."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from volbench.frames import frame, labels


def test_frame_equals_the_plain_dataframe_constructor():
    # Reference library: pandas.DataFrame(dict) -- values, dtypes, labels and index identical.
    cols = {"h": np.arange(1, 8, dtype=np.int64), "variance": np.linspace(0.1, 0.7, 7),
            "flag": np.array([True, False] * 3 + [True]), "n": np.arange(7, dtype=np.int64) * 3}
    expected = pd.DataFrame(cols)
    for got in (frame(cols), frame(cols, labels(cols))):
        pd.testing.assert_frame_equal(got, expected, check_exact=True)
        assert list(got.dtypes) == list(expected.dtypes)
        assert got.columns.dtype == expected.columns.dtype
    idx = pd.Index(np.array([10, 20, 40, 60, 120, 250, 500], dtype=np.int64), name="window")
    pd.testing.assert_frame_equal(frame(cols, labels(cols), idx), pd.DataFrame(cols, index=idx), check_exact=True)
    got = frame(cols)
    got.loc[0, "variance"] = 9.0  # a table owns its data like any DataFrame
    assert expected.loc[0, "variance"] == pytest.approx(0.1)


def test_frame_rejects_columns_of_different_lengths():
    with pytest.raises(ValueError, match="same length"):
        frame({"a": np.zeros(3), "b": np.zeros(4)})
