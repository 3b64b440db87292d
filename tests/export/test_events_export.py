"""The export's events table and the event-aware comparison row carry the core's numbers
(agreement check with volbench.analysis.events_for, no external source)."""

from __future__ import annotations

import numpy as np

from volbench import analysis
from volbench.data.load import load_prices
from volbench.export import build_bundle
from volbench.settings import EventsSettings, OptionSettings, Settings


def test_events_table_and_candidate_row(sample_dir):
    h = load_prices(sample_dir / "ironvale_mining.csv")[0]
    s = Settings(events=EventsSettings(str(sample_dir / "events" / "ironvale_mining_events.csv")),
                 option=OptionSettings(0.3, 63))
    b = build_bundle([h], s)
    ref = analysis.events_for(h, s)
    t = b.table("events")
    ex = t[t["row"] == "ex_event"].set_index("key")
    for key, e in ref.ex_event.items():
        assert ex.loc[key, "vol"] == e.vol and ex.loc[key, "ci_low"] == e.ci_low and ex.loc[key, "n"] == e.n
    mv = t[t["row"] == "event_move"].iloc[0]
    assert mv["variance"] == ref.event_move.variance and mv["variance_ci_high"] == ref.event_move.ci_high
    assert np.isnan(mv["vol"])  # a variance row: no vol is passed off in the percent-formatted column
    aware = t[t["row"] == "event_aware"].set_index("key")
    assert aware.loc["events", "vol"] == ref.event_aware_vol
    comp = b.table("comparison").set_index("key")
    assert comp.loc["events", "vol"] == ref.event_aware_vol and comp.loc["events", "label"] == "ex-event + 1 event"
    assert b.sections["events"].status == "included"
    bands = b.table("price_bands")
    assert set(bands["key"]) >= {"pricing", "events"}
