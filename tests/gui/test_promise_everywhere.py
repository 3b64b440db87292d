"""The price-promise numbers are the same in ``volbench compare --format json``, the XLSX export and
the window (agreement check, no external source: one core call, three front ends)."""

from __future__ import annotations

import json

import pandas as pd

from volbench.cli import main
from volbench.gui.widgets import FrameTable


def test_bands_and_straddle_are_identical_in_cli_json_export_and_window(make_window, kestrel, tmp_path, capsys):
    # the window compares every estimator, the scaling check and every GARCH model: so do the commands
    argv = [str(kestrel), "--pricing-vol", "0.25", "--days", "30", "--with-garch"]
    # one window per screen: the window's candidates read its 20-bar Window, so the commands are told so
    assert main(["compare", *argv, "--window", "20", "--with-scaling", "--format", "json"]) == 0
    d = json.loads(capsys.readouterr().out)
    xlsx = tmp_path / "out.xlsx"
    assert main(["export", *argv, "--candidate-window", "20", "--to", str(xlsx)]) == 0
    capsys.readouterr()
    sheets = pd.read_excel(xlsx, sheet_name=None, engine="openpyxl")
    bands, bes = sheets["price_bands"].set_index(["key", "sigmas"]), sheets["breakevens"]
    w = make_window(window=20, pricing_vol=0.25, days=30, annualization=252.0, garch_model="all")
    w.open_files([kestrel])
    promises = w.results.get("comparison").promises
    shown = w.findChild(FrameTable, "promise_table").raw_frame().set_index("key")
    summary = w.results.get("promise")
    assert summary is not None and summary.verdict == d["price_promise"]["verdict"]

    for key, rows in d["bands_by_candidate"].items():
        for b in rows:
            k = b["sigmas"]
            xl = bands.loc[(key, k)]
            win = promises.bands[(promises.bands["key"] == key) & (promises.bands["sigmas"] == k)].iloc[0]
            for col in ("low_price", "high_price", "promised", "observed", "observed_below", "observed_above"):
                assert b[col] == xl[col] == win[col], (key, k, col)  # bit-identical: same numbers, no rounding
            assert list(b["observed_ci"]) == [xl["observed_ci_low"], xl["observed_ci_high"]]
            assert b["windows"] == xl["windows"] == win["windows"]
            assert shown.loc[key, f"observed_{k:g}"] == b["observed"]
            assert shown.loc[key, f"promised_{k:g}"] == b["promised"]
    assert d["bands"] == d["bands_by_candidate"]["pricing"]
    st = d["straddle"]
    xl = bes[(bes["key"] == "pricing") & (bes["option"] == "straddle")].iloc[0]
    win = promises.straddles.iloc[0]
    for col in ("premium", "breakeven_move", "promised_share_beyond", "observed_share_beyond"):
        assert st[col] == xl[col] == win[col], col
    assert shown.loc["pricing", "straddle_observed"] == st["observed_share_beyond"]
