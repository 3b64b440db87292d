"""Comparison of a proposed pricing vol with the history, and what the gap is worth on the option."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from volbench.candidates import Candidate, CandidateSet
from volbench.errors import VolbenchError
from volbench.estimators import point_estimate
from volbench.pricing.bsm import bsm_greeks, bsm_price
from volbench.pricing.compare import TABLE_COLUMNS, OptionSpec, compare, ordinal
from volbench.pricing.cone import vol_cone
from volbench.scaling import horizon_vol, scaling_check


@pytest.fixture
def hist(simulate_ohlc):
    return simulate_ohlc(600, 0.22, seed=42, steps=30, start_price=50.0, name="KESTREL-SIM")


def test_candidates_are_each_estimators_latest_vol_over_the_option_life(hist):
    c = compare(hist, 0.25, 30)
    est = c.table[c.table["source"] == "estimator"].set_index("key")
    assert list(est.index) == ["close_to_close", "parkinson", "garman_klass", "rogers_satchell", "yang_zhang", "ewma"]
    for key, row in est.iterrows():
        assert row["vol"] == pytest.approx(point_estimate(hist, key, 30).vol, rel=1e-14)
        assert row["window"] == 30
    assert c.window == 30 and c.unavailable == {}  # no other source was given
    assert tuple(c.table.columns) == TABLE_COLUMNS
    assert c.table.iloc[0]["source"] == "pricing" and c.table.iloc[0]["vol"] == 0.25
    assert (c.candidates["source"] != "pricing").all() and len(c.candidates) == 6


def test_window_override_and_days_one(hist):
    c = compare(hist, 0.25, 30, window=60)
    assert c.window == 60 and c.days == 30
    assert c.candidates.set_index("key").loc["yang_zhang", "vol"] == pytest.approx(point_estimate(hist, "yang_zhang", 60).vol)
    one = compare(hist, 0.25, 1)
    assert one.window == 2 and one.years == pytest.approx(1 / 252)
    assert one.candidates.set_index("key").loc["close_to_close", "note"] == (
        "window raised to 2 bars, the fewest a vol estimate needs")


def test_repricing_exact_and_vega_approximation(hist):
    # Black-Scholes-Merton (bsm module, checked against Hull and scipy in test_bsm); the exact and
    # first-order differences must agree to second order: |exact - approx| <= max|volga| gap^2 / 2
    # (Taylor's theorem), volga bounded here by a finite difference of vega over the gap range.
    opt = OptionSpec(strike=52.0, rate=0.03, dividend_yield=0.01, kind="put")
    c = compare(hist, 0.25, 45, option=opt)
    spot = float(hist.close[-1])
    t = 45 / 252
    assert c.spot == spot and c.strike == 52.0 and c.years == pytest.approx(t) and c.kind == "put"
    assert c.price == pytest.approx(bsm_price(spot, 52.0, t, 0.03, 0.25, 0.01, "put"), rel=1e-14)
    v0 = bsm_greeks(spot, 52.0, t, 0.03, 0.25, 0.01, "put").vega
    for row in c.table.itertuples():
        exact = bsm_price(spot, 52.0, t, 0.03, row.vol, 0.01, "put") - c.price
        assert row.price_diff == pytest.approx(exact, rel=1e-12, abs=1e-14)
        assert row.vega_approx_diff == pytest.approx(v0 * (row.vol - 0.25), rel=1e-12, abs=1e-14)
        assert row.gap_points == pytest.approx(100 * (row.vol - 0.25), rel=1e-12, abs=1e-12)
        assert row.vega_point == pytest.approx(row.vega / 100)
        vols = np.linspace(min(row.vol, 0.25), max(row.vol, 0.25), 21)
        vg = bsm_greeks(spot, 52.0, t, 0.03, vols, 0.01, "put").vega
        volga = np.max(np.abs(np.diff(vg) / np.diff(vols))) if row.vol != 0.25 else 0.0
        assert abs(row.price_diff - row.vega_approx_diff) <= 0.5 * volga * (row.vol - 0.25) ** 2 * 1.05 + 1e-12


def test_defaults_at_the_money_call_at_last_close(hist):
    c = compare(hist, 0.2, 20)
    assert c.spot == float(hist.close[-1]) == c.strike
    assert c.kind == "call" and c.rate == 0.0 and c.dividend_yield == 0.0
    assert c.as_of == hist.last_date


def test_cone_percentile_is_the_cone_placement(hist):
    c = compare(hist, 0.25, 30)
    cone = vol_cone(hist)
    assert c.cone_percentile == pytest.approx(cone.percentile_of(0.25, 30))
    assert c.cone.windows == (20, 40)
    other = compare(hist, 0.25, 30, cone_estimator="yang_zhang")
    assert other.cone_percentile == pytest.approx(vol_cone(hist, "yang_zhang").percentile_of(0.25, 30))


def test_a_cone_already_built_is_used_as_is_and_must_match_the_history(hist):
    # Agreement check, no external source: passing the cone a caller already has gives the same
    # placement as letting compare build it; a cone of other rows or settings is refused.
    built = compare(hist, 0.25, 30)
    given = compare(hist, 0.25, 30, cone=vol_cone(hist))
    assert given.cone == built.cone and given.cone_percentile == built.cone_percentile
    with pytest.raises(VolbenchError, match=r"the cone given was built for series 'KESTREL-SIM' .*"
                                            r"yang_zhang\): pass a cone of this history or none"):
        compare(hist, 0.25, 30, cone=vol_cone(hist), cone_estimator="yang_zhang")
    with pytest.raises(VolbenchError, match=r"\(400 rows, 252 bars/year, close_to_close\); this comparison"):
        compare(hist, 0.25, 30, cone=vol_cone(hist.take(np.arange(hist.n) < 400)))


def test_reading_says_where_the_vol_sits_and_what_the_gap_is_worth(hist):
    c = compare(hist, 0.25, 30)
    yz = c.candidates.set_index("key").loc["yang_zhang"]
    pct = round(c.cone_percentile)
    assert c.reading[0] == (f"pricing vol 25.0% sits at the {ordinal(pct)} percentile of 30-bar close-to-close vol, "
                            "interpolated between the 20- and 40-bar cone columns")
    gap = 25.0 - 100 * yz["vol"]
    assert c.reading[1] == (f"the pricing vol is {abs(gap):.1f} vol points {'above' if gap > 0 else 'below'} "
                            f"Yang-Zhang ({100 * yz['vol']:.1f}% over the last 30 bars; the reference estimator: the most "
                            "efficient one here that uses every price of the bar and allows for opening jumps)")
    worth = "less" if yz["price_diff"] < 0 else "more"
    assert c.reading[2].startswith(f"the call is worth {abs(yz['price_diff']):.2f} {worth} at Yang-Zhang's vol")
    assert c.reading[3].startswith("candidate vols run from ")


def test_reading_extremes():
    assert [ordinal(n) for n in (1, 2, 3, 4, 11, 12, 13, 21, 22, 82, 100, 111)] == [
        "1st", "2nd", "3rd", "4th", "11th", "12th", "13th", "21st", "22nd", "82nd", "100th", "111th"]


def test_reading_when_pricing_vol_is_above_everything(hist):
    c = compare(hist, 1.5, 30)
    assert "sits above every value in the history of 30-bar close-to-close vol" in c.reading[0]
    assert c.reading[3].endswith("the pricing vol is above all 6 of them")


def test_far_out_of_the_money_option_reading(hist):
    c = compare(hist, 0.25, 5, option=OptionSpec(strike=40.0, kind="put", spot=50.0))
    assert "the put is worth under 0.01 at every vol here" in c.reading[2]
    far = compare(hist, 0.25, 5, option=OptionSpec(strike=0.95, kind="put", spot=1150.0))
    assert far.reading[0] == "strike 0.95 is 0.0826% of spot 1150; check that both are in the same units"


class Offers:
    """A stand-in result that offers candidates through the protocol (what any source does)."""

    def __init__(self, *candidates, missing=None, title="model fit", what="forecast"):
        self.set = CandidateSet("model", tuple(candidates), missing or {}, title=title, what=what)
        self.asked = []

    def candidates(self, days):
        self.asked.append(days)
        return self.set


def test_sources_offer_candidates_through_the_protocol(hist):
    src = Offers(Candidate("model", "model:a", "Model A", 0.21, window=30, note="forward vol"),
                 Candidate("model", "model:b", "Model B", 0.23, window=30, headline=True, ci_low=0.2, ci_high=0.26),
                 missing={"model:c": "fit failed to converge"})
    c = compare(hist, 0.25, 30, sources=[src])
    assert src.asked == [30]
    g = c.table[c.table["source"] == "model"].set_index("key")
    assert list(g.index) == ["model:a", "model:b"]
    assert g.loc["model:a", "vol"] == 0.21 and g.loc["model:a", "note"] == "forward vol"
    assert g.loc["model:b", "gap_points"] == pytest.approx(-2.0)
    assert (g.loc["model:b", "ci_low"], g.loc["model:b", "ci_high"]) == (0.2, 0.26)
    assert np.isnan(g.loc["model:a", "ci_low"])
    assert c.unavailable["model:c"] == "fit failed to converge"
    # the headline candidate is named in the reading, whatever produced it
    assert "Model B forecast over 30 bars is 23.0%, 2.0 vol points below the pricing vol" in c.reading


def test_a_fallback_headline_is_named_as_a_fallback(hist):
    src = Offers(Candidate("model", "model:a", "Model A → EWMA fallback", 0.3, window=30, headline=True,
                           fallback="EWMA (lambda 0.94), because: no convergence"), title="model fit")
    c = compare(hist, 0.25, 30, sources=[src])
    assert ("no model fit gave a usable forecast, so the forecast over 30 bars is a fallback's: 30.0% from "
            "EWMA (lambda 0.94), because: no convergence; 5.0 vol points above the pricing vol") in c.reading


def test_a_missing_source_says_why_and_a_non_source_is_refused(hist):
    c = compare(hist, 0.25, 30, sources=[CandidateSet.missing("scaling", "not requested")])
    assert c.unavailable["scaling"] == "not requested"
    with pytest.raises(VolbenchError, match="a comparison source must offer candidates\\(days\\), got object"):
        compare(hist, 0.25, 30, sources=[object()])
    with pytest.raises(VolbenchError, match="candidate 'x': vol must be a finite number > 0, got nan"):
        Candidate("model", "x", "X", float("nan"))


def test_real_scaling_result_offers_its_horizon_vol(hist):
    result = scaling_check(hist)
    c = compare(hist, 0.25, 20, sources=[result])
    row = c.table[c.table["source"] == "scaling"].iloc[0]
    assert row["vol"] == pytest.approx(horizon_vol(result, 20)) and row["label"] == "Scaling check horizon vol"
    far = compare(hist, 0.25, 90, sources=[result])
    kept = int(result.horizons["h"].max())  # horizons with too few periods are dropped
    assert far.unavailable["scaling"] == ("option life of 90 bars is outside the scaling check's horizons "
                                          f"(horizons 1 to {kept} bars)")


def test_the_ewma_note_follows_its_lambda(hist):
    # half-life ln 0.5 / ln lambda (common practice, no source): 11.2 bars at 0.94, 22.8 at 0.97
    c = compare(hist, 0.25, 30)
    assert c.table.set_index("key").loc["ewma", "note"] == "all past returns, half-life 11.2 bars"
    slow = compare(hist, 0.25, 30, estimator_options={"lam": 0.97})
    assert slow.table.set_index("key").loc["ewma", "note"] == "all past returns, half-life 22.8 bars"
    assert slow.table.set_index("key").loc["ewma", "vol"] != c.table.set_index("key").loc["ewma", "vol"]


def test_missing_columns_and_short_history(make_history):
    rng = np.random.default_rng(5)
    h = make_history(100 * np.exp(np.cumsum(rng.standard_normal(10) * 0.01)))
    c = compare(h, 0.25, 5)
    assert list(c.candidates["key"]) == ["close_to_close", "ewma"]
    assert c.unavailable["parkinson"] == "needs high/low columns"
    assert c.unavailable["yang_zhang"] == "needs high/low/open columns"
    assert c.unavailable["cone"].startswith("test: no cone window fits")
    assert c.cone is None and c.cone_percentile is None
    assert c.reading[0].startswith("the pricing vol is ")  # no cone line; close-to-close is the reference
    assert "Close-to-close" in c.reading[0]


@pytest.mark.parametrize("kwargs,message", [
    ({"pricing_vol": 25}, r"pricing vol must be a decimal below 5 \(0.25 means 25%\), got 25; .*did you mean 0.25\?"),
    ({"pricing_vol": 0}, "pricing vol must be > 0"),
    ({"pricing_vol": float("nan")}, "pricing vol must be > 0"),
    ({"days": 0}, "days must be a whole number of bars >= 1, got 0"),
    ({"days": 2.5}, "days must be a whole number of bars >= 1, got 2.5"),
    ({"window": 1}, "window must be >= 2 bars, got 1"),
    ({"window": "all"}, "window must be a whole number of bars for a comparison, not 'all'"),
    ({"annualization": -1}, "annualization must be > 0 bars per year"),
    ({"option": OptionSpec(kind="straddle")}, "option type must be 'call' or 'put', got 'straddle'"),
    ({"option": OptionSpec(strike=-3)}, "strike must be a positive price, got -3"),
    ({"option": OptionSpec(spot=0)}, "spot must be a positive price, got 0"),
    ({"option": OptionSpec(rate=5)}, r"rate must be a decimal between -1 and 1 .*did you mean 0.05\?"),
    ({"option": OptionSpec(dividend_yield=float("inf"))}, "dividend yield must be a finite decimal"),
    ({"option": {"strike": 50}}, "option must be an OptionSpec, got dict"),
    ({"cone_estimator": "gk"}, "unknown estimator 'gk'; choose one of: close_to_close, parkinson"),
])
def test_validation(hist, kwargs, message):
    args = {"pricing_vol": 0.25, "days": 30} | kwargs
    with pytest.raises(VolbenchError, match=message):
        compare(hist, **args)


def test_as_dict_is_json_safe(hist):
    src = Offers(Candidate("model", "model:a", "Model A", 0.21, window=30, headline=True))
    d = compare(hist, 0.25, 30, sources=[src]).as_dict()
    text = json.dumps(d, allow_nan=False)
    assert d["candidates"][0]["window"] is None and d["candidates"][1]["window"] == 30
    assert d["pricing"]["vega_point"] == pytest.approx(d["pricing"]["vega"] / 100)
    assert d["cone"]["estimator"] == "close_to_close" and d["cone"]["windows"] == [20, 40]
    assert d["option"] == {"kind": "call", "spot": float(hist.close[-1]), "strike": float(hist.close[-1]),
                           "rate": 0.0, "dividend_yield": 0.0, "years": pytest.approx(30 / 252)}
    assert "NaN" not in text and math.isfinite(d["cone_percentile"])
