"""Result tables: numpy columns wrapped in a pandas DataFrame once, at the end of a computation.

``pandas.DataFrame(dict_of_arrays)`` spends about 130 microseconds on a table of a dozen short
columns (inferring the type of every column and of the labels), which made table construction
a large share of a scaling check or a cone. :func:`frame` builds the same DataFrame from arrays
whose types are already right, skipping that inference; the tests check the result equals the
plain constructor's, dtypes included.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import pandas as pd

_FROM_ARRAYS = getattr(pd.DataFrame, "_from_arrays", None)
"""pandas' own constructor behind ``DataFrame(dict)`` once inputs are checked (present from pandas
0.23 to 3.x); when a pandas release drops it, :func:`frame` uses the public constructor."""


def labels(names) -> pd.Index:
    """Column labels as pandas itself would make them from a dict's keys (build once, reuse)."""
    return pd.Index(list(names))


def frame(columns: Mapping[str, np.ndarray], names: pd.Index | None = None,
          index: pd.Index | None = None) -> pd.DataFrame:
    """A DataFrame of 1-D numpy ``columns`` of equal length, equal to ``pandas.DataFrame(columns, index=index)``.

    Parameters
    ----------
    columns
        Column name -> 1-D numpy array (float64, int64 or bool; no object arrays).
    names
        The labels, prebuilt with :func:`labels` (in ``columns`` order), to skip building them.
    index
        Row index (default: 0 .. n - 1).
    """
    arrays = [np.asarray(a) for a in columns.values()]
    if _FROM_ARRAYS is None or any(a.ndim != 1 or a.dtype == object for a in arrays):
        return pd.DataFrame(dict(columns), index=index)
    n = arrays[0].shape[0] if arrays else 0
    if any(a.shape[0] != n for a in arrays):
        raise ValueError("all columns of a table must have the same length")
    return _FROM_ARRAYS(arrays, columns=names if names is not None else labels(columns),
                        index=index if index is not None else pd.RangeIndex(n), verify_integrity=False)
