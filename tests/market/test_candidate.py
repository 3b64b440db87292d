"""The market's at-the-money implied vol for the option's own expiry, as a comparison candidate."""

from __future__ import annotations

import math

import pandas as pd
import pytest

from volbench.market import implied_surface, read_quotes
from volbench.market.candidate import atm_for_life, market_view
from volbench.pricing.bsm import bsm_price
from volbench.pricing.daycount import option_life

AS_OF = "2025-01-15"
EXPIRIES = ("2025-02-21", "2025-04-17")


def _surface(tmp_path, atm_of_expiry, spot=50.0, rate=0.03):
    """Exact BSM premiums with a flat smile per expiry (vol = atm_of_expiry[expiry])."""
    rows = []
    for e, vol in atm_of_expiry.items():
        t = (pd.Timestamp(e) - pd.Timestamp(AS_OF)).days / 365
        for k in (40, 45, 48, 50, 52, 55, 60):
            for kind in ("call", "put"):
                rows.append(f"{e},{k},{kind},{bsm_price(spot, k, t, rate, vol, 0.0, kind)!r}")
    p = tmp_path / "q.csv"
    p.write_text("expiry,strike,type,mid\n" + "\n".join(rows) + "\n")
    return implied_surface(read_quotes(p), spot=spot, rate=rate, as_of=AS_OF)


def test_a_quoted_expiry_gives_its_own_atm_vol(tmp_path):
    s = _surface(tmp_path, {EXPIRIES[0]: 0.25, EXPIRIES[1]: 0.30})
    vol, how = atm_for_life(s, option_life(AS_OF, expiry=EXPIRIES[1]))
    # exact premiums at a flat 30 % smile give 30 % back (common practice, no source)
    assert vol == pytest.approx(0.30, abs=1e-9) and "quoted expiry 2025-04-17" in how


def test_between_expiries_total_variance_is_interpolated_linearly_in_act365_years(tmp_path):
    s = _surface(tmp_path, {EXPIRIES[0]: 0.25, EXPIRIES[1]: 0.30})
    life = option_life(AS_OF, expiry="2025-03-14")
    vol, how = atm_for_life(s, life)
    t1, t2, t = 37 / 365, 92 / 365, 58 / 365  # calendar days from 2025-01-15, by hand
    w = 0.25**2 * t1 + (0.30**2 * t2 - 0.25**2 * t1) * (t - t1) / (t2 - t1)  # common practice, no source
    assert life.years == t
    assert vol == pytest.approx(math.sqrt(w / t), abs=1e-9) and "interpolated in total variance" in how


def test_before_the_first_expiry_flat_and_after_the_last_refused(tmp_path):
    s = _surface(tmp_path, {EXPIRIES[0]: 0.25, EXPIRIES[1]: 0.30})
    vol, how = atm_for_life(s, option_life(AS_OF, expiry="2025-01-31"))
    assert vol == pytest.approx(0.25, abs=1e-9) and "first quoted expiry" in how
    vol, how = atm_for_life(s, option_life(AS_OF, expiry="2025-06-20"))
    assert vol is None and "does not extrapolate" in how
    cs = market_view(s, option_life(AS_OF, expiry="2025-06-20")).candidates(100)
    assert cs.items == () and "does not extrapolate" in cs.unavailable["market"]


def test_planted_calendar_arbitrage_is_not_interpolated_across(tmp_path):
    # total variance 0.40^2 x 37/365 = 0.0162 > 0.20^2 x 92/365 = 0.0101: it falls with expiry
    s = _surface(tmp_path, {EXPIRIES[0]: 0.40, EXPIRIES[1]: 0.20})
    assert s.expiries[1].calendar_arbitrage
    vol, how = atm_for_life(s, option_life(AS_OF, expiry="2025-03-14"))
    assert vol is None and "calendar arbitrage" in how


def test_the_candidate_is_on_the_pricing_basis_already(tmp_path):
    s = _surface(tmp_path, {EXPIRIES[0]: 0.25, EXPIRIES[1]: 0.30})
    cs = market_view(s, option_life(AS_OF, expiry=EXPIRIES[0])).candidates(27)
    (c,) = cs.items
    assert c.source == "market" and c.on_pricing_basis and c.headline
    assert c.vol == pytest.approx(0.25, abs=1e-9)
