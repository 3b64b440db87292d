"""The decision record, and what the comparison's reading says about its reference, repeated
fallback numbers and rejected scaling verdicts."""

from __future__ import annotations

import pytest

from volbench.candidates import Candidate, CandidateSet
from volbench.data import load_prices
from volbench.errors import VolbenchError
from volbench.estimators import point_estimate
from volbench.pricing.compare import compare
from volbench.pricing.cone import vol_cone
from volbench.pricing.decision import DECISION_COLUMNS, decision_record
from volbench.scaling import scaling_check
from volbench.settings import DecisionSettings


@pytest.fixture
def hist(simulate_ohlc):
    return simulate_ohlc(600, 0.22, seed=42, steps=30, start_price=50.0, name="KESTREL-SIM")


def test_the_record_sets_the_chosen_vol_against_every_candidate_and_its_interval(hist):
    comp = compare(hist, 0.25, 30)
    cone = vol_cone(hist, "close_to_close", (10, 20, 40, 60))
    rec = decision_record(hist.name, DecisionSettings(vol=0.24, rationale="lean on Yang-Zhang", prepared_by="desk B"),
                          comp, cone=cone)
    assert len(rec.candidates) == len(comp.candidates)
    for c in rec.candidates:
        # common practice, no source: gap in vol points and interval membership by definition
        assert c["gap_points"] == pytest.approx(100 * (0.24 - c["vol"]), rel=1e-12)
        assert c["within_interval"] == (c["ci_low"] <= 0.24 <= c["ci_high"])
    assert rec.cone_percentile == pytest.approx(cone.place(0.24, 30).percentile)
    inside = sum(bool(c["within_interval"]) for c in rec.candidates)
    assert f"it lies inside {inside} of the 6 candidate intervals" in rec.lines[1]
    assert rec.lines[-2:] == ("rationale: lean on Yang-Zhang", "prepared by: desk B")
    table = rec.table()
    assert tuple(table.columns) == DECISION_COLUMNS
    assert list(table["kind"]).count("candidate") == 6 and table["kind"].iloc[-1] == "caution"
    assert rec.as_dict()["caution"].startswith("Volatility estimates are statistical")


def test_a_record_without_a_comparison_or_a_vol_says_so(hist):
    rec = decision_record(hist.name, DecisionSettings(rationale="no view yet"))
    assert rec.vol is None and rec.candidates == ()
    assert "no comparison" in rec.unavailable["candidates"]
    assert rec.lines[0].startswith("no vol chosen")
    with pytest.raises(VolbenchError, match="decision vol must be a decimal below 5.*did you mean 0.25"):
        DecisionSettings(vol=25)
    with pytest.raises(VolbenchError, match="decision must be DecisionSettings"):
        decision_record(hist.name, object())


def test_a_fallback_repeating_ewma_is_counted_once(hist):
    ewma = point_estimate(hist, "ewma", 30).vol
    fallback = CandidateSet("garch", (Candidate("garch", "garch:garch", "GARCH(1,1) → EWMA fallback", ewma,
                                                window=30, headline=True, fallback="EWMA (lambda 0.94)"),),
                            title="GARCH-family fit", what="forward vol")
    c = compare(hist, 0.5, 30, sources=[fallback])
    line = next(t for t in c.reading if t.startswith("candidate vols run from"))
    # 7 rows, 6 distinct numbers: the fallback repeats EWMA's
    assert line.endswith("the pricing vol is above all 6 distinct vols (1 repeating another candidate's number, "
                         "such as a fallback, counted once)")
    plain = compare(hist, 0.5, 30)
    assert next(t for t in plain.reading if t.startswith("candidate")).endswith("above all 6 of them")


def test_rejected_scaling_verdicts_reach_the_reading(sample_dir):
    h = load_prices(sample_dir / "ironvale_mining.csv")[0]
    s = scaling_check(h)
    rejected = [v for v in s.verdicts if v.status == "rejected"]
    assert rejected  # this sample's returns cluster (common practice, no source: Ljung-Box on squares)
    c = compare(h, 0.3, 21, sources=[s])
    for v in rejected:
        assert f"the scaling check rejects {v.property.replace('_', ' ')}: {v.message}" in c.reading
