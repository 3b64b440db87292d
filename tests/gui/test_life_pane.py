"""The option-life pane: days on a basis or an expiry, the counts they make, and the implied vol of a premium."""

from __future__ import annotations

import json

from PySide6.QtWidgets import QComboBox, QDoubleSpinBox, QLabel, QPushButton

from volbench.cli import main
from volbench.pricing.bsm import bsm_price


def _label(w, name) -> str:
    return w.findChild(QLabel, name).text()


def test_changing_days_and_basis_updates_the_counts_and_the_comparison(make_window, kestrel, capsys):
    w = make_window(days=30)
    w.open_files([kestrel])
    assert "2024-10-17 to 2024-11-28: 42 calendar days = 0.1151 years" in _label(w, "life_summary")
    assert "30 trading days" in _label(w, "life_summary")
    basis = w.findChild(QComboBox, "day_basis_combo")
    basis.setCurrentIndex(basis.findData("calendar"))  # the widget writes the state, the jobs follow
    assert w.state.day_basis == "calendar"
    assert "2024-10-17 to 2024-11-16: 30 calendar days = 0.0822 years" in _label(w, "life_summary")
    assert "21 trading days" in _label(w, "life_summary") and "Saturday" in _label(w, "life_summary")
    # the window's comparison equals 'volbench compare --days 30 --day-basis calendar' (same core, same numbers)
    # (the window's candidates read its Window, linked: one window per screen)
    code = main(["compare", str(kestrel), "--pricing-vol", "0.25", "--days", "30", "--day-basis", "calendar",
                 "--window", str(w.state.window), "--format", "json"])
    cli = json.loads(capsys.readouterr().out)
    comp = w.results.get("comparison")
    assert code == 0 and comp.years == cli["years"] and comp.days == cli["trading_days"] == 21
    ours = comp.table[comp.table["source"].isin(["pricing", "estimator"])]  # the window also fits GARCH
    assert list(ours["price"]) == [r["price"] for r in cli["candidates"]]
    assert list(ours["vol"]) == [r["vol"] for r in cli["candidates"]]


def test_switching_to_an_expiry_keeps_the_same_option(make_window, kestrel):
    w = make_window(days=30)
    w.open_files([kestrel])
    before = w.results.get("comparison")
    mode = w.findChild(QComboBox, "life_mode_combo")
    mode.setCurrentIndex(mode.findData("expiry"))
    assert w.state.expiry == "2024-11-28"
    after = w.results.get("comparison")
    assert after.life.given_as == "expiry" and after.price == before.price and after.years == before.years
    mode.setCurrentIndex(mode.findData("days"))
    assert w.state.expiry is None and w.results.get("comparison").life.given_as == "trading days"


def test_a_premium_is_solved_and_taken_as_the_pricing_vol_with_one_click(make_window, kestrel):
    w = make_window(days=30, strike=52.0, rate=0.03)
    w.open_files([kestrel])
    c = w.results.get("comparison")
    # a premium made by BSM at 31.5 % gives 31.5 % back (round trip; BSM pinned to Hull's example in
    # tests/pricing/test_bsm.py)
    premium = bsm_price(c.spot, 52.0, c.years, 0.03, 0.315, 0.0, "call")
    w.findChild(QDoubleSpinBox, "premium_spin").setValue(round(premium, 4))
    iv = w.results.get("implied")
    assert iv.ok and abs(iv.implied_vol - 0.315) < 1e-4  # the spin box keeps 4 decimals of the premium
    assert "Implied vol 31.5" in _label(w, "implied_result")
    button = w.findChild(QPushButton, "use_implied_button")
    assert button.isEnabled()
    button.click()
    assert w.state.pricing_vol == iv.implied_vol
    assert w.results.get("comparison").pricing_vol == iv.implied_vol


def test_a_premium_outside_the_bounds_shows_the_status_and_the_bounds(make_window, kestrel):
    w = make_window(days=30)
    w.open_files([kestrel])
    spot = w.results.get("comparison").spot
    w.findChild(QDoubleSpinBox, "premium_spin").setValue(spot + 1)  # a call is worth less than the spot
    iv = w.results.get("implied")
    assert iv.status == "above_upper_bound"
    text = _label(w, "implied_result")
    assert text.startswith("No implied vol (above upper bound)") and "Bounds:" in text
    assert not w.findChild(QPushButton, "use_implied_button").isEnabled()
