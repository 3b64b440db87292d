"""Issue 10 in the window: fallbacks, unavailable estimators, interval caveats, the family
false-alarm rate and the shared limits reach the panes as they reach the command line."""

from __future__ import annotations

import pandas as pd
import pytest
from PySide6.QtWidgets import QDoubleSpinBox, QLabel

from volbench import validate
from volbench.errors import VolbenchError
from volbench.gui.widgets import FrameTable


def table(w, name: str) -> pd.DataFrame:
    return w.findChild(FrameTable, name).table_model.display


@pytest.fixture
def padded(tmp_path, kestrel):
    df = pd.read_csv(kestrel)
    for col in ("Open", "High", "Low"):
        df[col] = df["Close"]
    p = tmp_path / "padded.csv"
    df.to_csv(p, index=False)
    return p


def test_a_garch_fallback_is_labelled_as_one_in_the_comparison_and_model_panes(make_window, kestrel):
    # Kestrel is constant-vol: GARCH(1,1) finds no clustering, so its number is the whole-history
    # close-to-close vol, and both panes say so (same label as 'volbench compare --with-garch').
    w = make_window()
    w.open_files([kestrel])
    comp = table(w, "comparison_table")
    row = comp[comp["candidate"].str.startswith("GARCH(1,1)")].iloc[0]
    assert row["candidate"] == "GARCH(1,1) → close-to-close fallback"
    assert "forward vol from close-to-close vol over the whole history, because: alpha on its bound" in row["note"]
    fits = table(w, "garch_fit_table")
    assert fits.loc[0, "model"].startswith("GARCH(1,1) → close-to-close fallback")
    reading = w.findChild(QLabel, "comparison_reading").text()
    assert "GARCH(1,1) forward vol" not in reading


def test_zero_range_bars_show_unavailable_not_zero_in_the_estimates_table(make_window, padded):
    w = make_window()
    w.open_files([padded])
    est = table(w, "estimates_table").set_index("estimator")
    for label in ("Parkinson", "Garman-Klass", "Rogers-Satchell", "Yang-Zhang"):
        assert est.loc[label, "vol"] == "n/a"
        assert est.loc[label, "interval method / why not"].startswith("no range on any bar of the window")
    comp = table(w, "comparison_table")
    assert "Parkinson" not in set(comp["candidate"]) and "Close-to-close" in set(comp["candidate"])


def test_the_interval_column_carries_the_discretisation_caveat(make_window, kestrel):
    w = make_window()
    w.open_files([kestrel])
    est = table(w, "estimates_table").set_index("estimator")
    assert "reads low on discretely traded prices" in est.loc["Parkinson", "interval method / why not"]
    assert "effective n" in est.loc["Yang-Zhang", "interval method / why not"]
    assert "discretely" not in est.loc["Close-to-close", "interval method / why not"]


def test_the_scaling_pane_states_how_often_chance_alone_gives_a_verdict(make_window, kestrel):
    w = make_window()
    w.open_files([kestrel])
    text = w.findChild(QLabel, "scaling_false_alarm").text()
    fa = w.results.get("scaling").family_false_alarm
    assert text.startswith("On a perfectly Brownian series of about this length")
    assert f"about {fa['not_consistent']:.0%} of the time at level 0.05" in text


def test_the_window_uses_the_same_limits_and_messages_as_the_command_line(make_window, kestrel):
    w = make_window()
    w.open_files([kestrel])
    spin = w.findChild(QDoubleSpinBox, "pricing_vol_spin")
    assert spin.maximum() == pytest.approx(100 * validate.PRICING_VOL_MAX - 0.01)
    with pytest.raises(VolbenchError, match=r"pricing vol must be a decimal below 5 \(0.25 means 25%\), got 7; "
                                            r"it looks like a percent: did you mean 0.07\?"):
        w.state.set("pricing_vol", 7)  # what 'volbench compare/export --pricing-vol 7' say
    with pytest.raises(VolbenchError, match=r"as-of date must look like YYYY-MM-DD, got '17/10/2024'"):
        w.state.set("as_of", "17/10/2024")
