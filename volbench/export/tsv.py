"""Tab-separated text of a table, for pasting into a spreadsheet (the GUI puts it on the clipboard)."""

from __future__ import annotations

import datetime as _dt
import math
from numbers import Integral, Real

import numpy as np
import pandas as pd

from volbench.export.safety import neutralise


def cell_value(v):
    """A pandas/numpy cell as a plain Python value: ``None`` for missing, int, float, bool or str.

    NaN and infinities become ``None`` (an empty cell), never a number passed off as a result.
    """
    if v is None or v is pd.NA or v is pd.NaT:
        return None
    if isinstance(v, (bool, np.bool_)):
        return bool(v)
    if isinstance(v, Integral):
        return int(v)
    if isinstance(v, Real):
        f = float(v)
        return f if math.isfinite(f) else None
    if isinstance(v, (pd.Timestamp, _dt.datetime, np.datetime64)):
        ts = pd.Timestamp(v)
        return ts.strftime("%Y-%m-%d") if ts == ts.normalize() else ts.isoformat()
    if isinstance(v, _dt.date):
        return v.isoformat()
    if isinstance(v, (list, tuple)):
        return " ".join(str(x) for x in v)
    return str(v)


def _text(v) -> str:
    v = cell_value(v)
    if v is None:
        return ""
    if isinstance(v, bool):
        return "TRUE" if v else "FALSE"
    if isinstance(v, float):
        return repr(v)  # shortest text that reads back as the same double
    if isinstance(v, str):
        return neutralise(" ".join(v.replace("\t", " ").splitlines()))
    return " ".join(str(v).replace("\t", " ").splitlines())


def meaningful_index(df: pd.DataFrame) -> bool:
    """True when the index carries data (named, or not the default 0..n-1 range)."""
    idx = df.index
    if any(n is not None for n in idx.names):
        return True
    return not (isinstance(idx, pd.RangeIndex) and idx.start == 0 and idx.step == 1)


def table_to_tsv(df: pd.DataFrame, *, index: bool | None = None) -> str:
    """Tab-separated text of ``df`` with a header row, one line per row, ending in a newline.

    Parameters
    ----------
    df
        Any table.
    index
        Include the index as leading column(s). ``None`` (default): only when it is meaningful
        (named, e.g. the cone's ``window``, or not the default 0..n-1 range).

    Returns
    -------
    str
        Header and rows separated by tabs. Numbers carry full precision (the shortest text that
        reads back as the same double), vols stay decimals (0.2345, not 23.45 %), missing values
        are empty cells, booleans are TRUE/FALSE, and tabs or line breaks inside text become spaces
        so that every row stays one spreadsheet row.

    Notes
    -----
    Common practice, no source: spreadsheets split pasted text on tabs and line breaks, so no
    quoting is needed once text cells hold neither.
    """
    if index is None:
        index = meaningful_index(df)
    out = df.reset_index() if index else df
    if index:
        names = [str(n) if n is not None else ("index" if out.columns.nlevels == 1 else "") for n in df.index.names]
        out.columns = names + [str(c) for c in df.columns]
    header = "\t".join(_text(c) for c in out.columns)
    body = ["\t".join(_text(v) for v in row) for row in out.itertuples(index=False, name=None)]
    return "\n".join([header, *body]) + "\n"
