"""Tab-separated text for the clipboard parses back with pandas read_csv(sep='\\t').

Exact equality of numbers: common practice, no source (the shortest repr of a double reads back
as the same double); reference reader: pandas read_csv (pandas 3 parses floats round-trip exactly by default).
"""

from __future__ import annotations

import io

import numpy as np
import pandas as pd

from volbench.export import table_to_tsv


def _read(text: str, **kw) -> pd.DataFrame:
    return pd.read_csv(io.StringIO(text), sep="\t", **kw)


def test_parses_back_with_full_precision():
    df = pd.DataFrame({"estimator": ["a", "b", "c"], "vol": [0.1 + 0.2, 1 / 3, np.nan], "n": [20, 21, 22]})
    back = _read(table_to_tsv(df))
    assert list(back.columns) == ["estimator", "vol", "n"]
    assert back["vol"].iloc[0] == 0.1 + 0.2 and back["vol"].iloc[1] == 1 / 3 and np.isnan(back["vol"].iloc[2])
    assert back["n"].tolist() == [20, 21, 22] and back["estimator"].tolist() == ["a", "b", "c"]


def test_default_index_left_out_named_index_kept():
    plain = pd.DataFrame({"x": [1.5, 2.5]})
    assert table_to_tsv(plain) == "x\n1.5\n2.5\n"
    cone = pd.DataFrame({"p50": [0.21, 0.22]}, index=pd.Index([10, 20], name="window"))
    back = _read(table_to_tsv(cone))
    assert back.columns.tolist() == ["window", "p50"] and back["window"].tolist() == [10, 20]
    assert table_to_tsv(cone, index=False) == "p50\n0.21\n0.22\n"


def test_text_with_tabs_and_line_breaks_stays_one_row():
    df = pd.DataFrame({"note": ["two\tcells?\nno", "ok"], "flag": [True, False]})
    text = table_to_tsv(df)
    assert text.count("\n") == 3
    back = _read(text)
    assert back["note"].tolist() == ["two cells? no", "ok"]
    assert back["flag"].tolist() == [True, False]


def test_real_export_table(make_bundle):
    est = make_bundle(scaling=None).table("estimates")
    back = _read(table_to_tsv(est), keep_default_na=False, na_values=[""])
    assert back.columns.tolist() == est.columns.tolist()
    assert np.array_equal(back["vol"].to_numpy(float), est["vol"].to_numpy(float), equal_nan=True)
    assert back["source_sha256"].fillna("").tolist() == est["source_sha256"].tolist()
