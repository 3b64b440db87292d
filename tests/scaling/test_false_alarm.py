"""Verdicts respect chance: on pure Brownian series each property is non-"consistent" about alpha of
the time, and the stated family false-alarm rate matches a fresh simulation.

docs/METHODS.md, "Brownian-scaling check": each status comes from its test at the stated level
(Holm across the five properties for "rejected", the fifth being the low-power jump screen on
daily returns); the four-property rate comes from the seeded table in
volbench/scaling/false_alarm_table.py, extended to the fifth by
volbench.scaling.continuity.five_property_false_alarm.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from volbench.scaling import scaling_check
from volbench.scaling.calibrate import brownian_history
from volbench.scaling.false_alarm import family_false_alarm
from volbench.scaling.verdicts import PROPERTIES


def _rates(n_returns: int, series: int, seed: int):
    rng = np.random.default_rng(seed)
    not_consistent = np.zeros((series, 5), dtype=bool)
    rejected = np.zeros(series, dtype=bool)
    for i in range(series):
        res = scaling_check(brownian_history(rng, n_returns))
        assert [v.property for v in res.verdicts] == [*PROPERTIES, "continuous_paths"]
        not_consistent[i] = [v.status != "consistent" for v in res.verdicts]
        rejected[i] = any(v.status == "rejected" for v in res.verdicts)
    return not_consistent.mean(axis=0), not_consistent.any(axis=1).mean(), rejected.mean(), res


@pytest.mark.slow
@pytest.mark.parametrize(("n_returns", "series"), [(252, 500), (2520, 300)])
def test_pure_brownian_series_are_non_consistent_at_about_the_nominal_rate(n_returns, series):
    # Target of issue "verdicts that respect chance": each property's non-"consistent" rate <= the
    # level + 2 points (each test has size alpha: t-test exact; Jarque-Bera, Chow-Denning and the
    # Bonferroni Ljung-Box conservative or close; Lo & MacKinlay 1988, Chow & Denning 1993; the daily
    # jump screen's p-value read from its simulated jump-free null, Lee & Mykland 2008 from memory).
    # "rejected" anywhere <= alpha + 2 points (Holm 1979 bounds it by alpha). Seeded.
    each, anyone, rejected, last = _rates(n_returns, series, seed=n_returns)
    assert np.all(each <= 0.05 + 0.02), each
    assert rejected <= 0.05 + 0.02, rejected
    # The stated family rate (seeded table, another seed, extended to the fifth property as
    # 1 - (1 - rate4)(1 - alpha)) agrees with this fresh run within 3 binomial standard deviations.
    stated = last.family_false_alarm["not_consistent"]
    sd = math.sqrt(stated * (1 - stated) / series)
    assert abs(anyone - stated) <= 3 * sd, (anyone, stated)


def test_family_false_alarm_is_stated_with_its_method():
    fa = family_false_alarm(252, 0.05)
    assert fa["length_bucket"] == 252 and fa["rejected_at_most"] == 0.05 and fa["bonferroni_bound"] == 0.2
    # With four near-independent tests of size 5 %, about 1 - 0.95^4 = 18.5 % (independence
    # approximation, common practice) and never above the Bonferroni bound of 20 %.
    assert 0.10 <= fa["not_consistent"] <= 0.20
    assert fa["method"].startswith("simulated")
    assert "about" in fa["sentence"] and "Holm" in fa["sentence"]
    outside = family_false_alarm(252, 0.3)  # level outside the table: stated approximation
    assert outside["not_consistent"] == pytest.approx(1 - 0.7**4)
    assert outside["method"].startswith("independence approximation")
    assert family_false_alarm(3000, 0.05)["length_bucket"] == 2520
