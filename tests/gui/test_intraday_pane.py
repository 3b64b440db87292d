"""The window on an intraday file: it opens analysed by day, the estimator list gains the realized
measures, and the intraday pane shows the signature plot and marks the jump days."""

from __future__ import annotations

import json

import numpy as np

from volbench.data import load_prices
from volbench.estimators import estimate_all
from volbench.gui.widgets import Card, FrameTable, Plot
from volbench.intraday.days import by_days
from volbench.scaling import scaling_check


def _table(w, name):
    return w.findChild(FrameTable, name).table_model.display


def test_intraday_file_opens_by_day_with_signature_and_jump_marks(make_window, sample_dir, tmp_path):
    f = sample_dir / "intraday" / "gullridge_energy_5min.csv"
    w = make_window(window=20)
    assert w.open_files([f]) == 1
    meta = json.loads((sample_dir / "PARAMETERS.json").read_text())["intraday"]
    # the window shows the core's numbers for the history analysed by day (same path as the CLI)
    (h,) = load_prices(f)
    d = by_days(h)
    rep = estimate_all(d, 20)
    raw = w.findChild(FrameTable, "estimates_table").raw_frame().set_index("estimator")
    for key in ("close_to_close", "realized", "bipower"):
        assert raw.loc[key, "vol"] == rep.estimates[key].vol
    pane = w.panes["intraday"]
    assert w.findChild(Card, "intraday_card").currentIndex() == 0
    sig = scaling_check(d).intraday.signature.table
    pts = pane.sig_points
    np.testing.assert_allclose(pts.yData, 100 * sig[sig["kind"] == "intraday"]["annualized_vol"].to_numpy())
    jumps = _table(w, "jump_table")
    planted = {j["date"] for j in meta["planted_jumps"]}
    assert planted <= set(jumps["date"])
    assert len(pane.marks.data) == len(jumps)
    # the Prices chart marks the same jump days on the daily close
    price = w.panes["prices"]
    marked = {str(np.datetime64(int(x * 1e9), "ns").astype("datetime64[D]")) for x in price.jumps.xData}
    assert marked == set(jumps["date"])
    assert "5-minute bars, 78 a session" in pane.summary.text()
    assert len(_table(w, "verdict_table")) == 5
    w.tabs.setCurrentWidget(pane)
    out = tmp_path / "intraday_pane.png"
    pane.grab().save(str(out))
    assert out.stat().st_size > 0
    assert isinstance(w.findChild(Plot, "signature_plot"), Plot)


def test_daily_file_says_why_the_intraday_pane_is_empty(make_window, sample_dir):
    w = make_window()
    w.open_files([sample_dir / "kestrel_orchards.csv"])
    card = w.findChild(Card, "intraday_card")
    assert card.currentIndex() == 1 and "one bar a day" in card.message


def test_window_session_break_choice_reaches_the_load(make_window, sample_dir):
    # the window holds the same IntradaySettings group as the command line's --session-break
    from volbench.settings import IntradaySettings

    w = make_window(session_break="2h")
    assert w.state.choices.group("intraday") == IntradaySettings(session_break="2h")
    w.open_files([sample_dir / "intraday" / "gullridge_energy_5min.csv"])
    (h,) = w.state.histories
    assert h.intraday is not None and h.intraday.layout.session_break_seconds == 7200.0
    assert h.intraday.as_dict()["session_rule"] == "gap longer than 120-minute"
