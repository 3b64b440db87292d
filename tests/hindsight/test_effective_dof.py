"""Hindsight's prediction intervals count the same degrees of freedom as the estimates' own intervals."""

from __future__ import annotations

import numpy as np
import pytest

from volbench.data.load import load_prices
from volbench.estimators import point_estimate
from volbench.hindsight.forecasts import aligned, effective_dof


@pytest.mark.parametrize("key", ["close_to_close", "parkinson", "garman_klass", "rogers_satchell", "yang_zhang"])
def test_effective_dof_is_the_estimators_own(sample_dir, key):
    # reference: the estimator's own interval dof (volbench.estimators, from each spec's dof); common practice
    h = load_prices(sample_dir / "kestrel_orchards.csv")[0]
    vol = aligned(h, key, 60, 252.0)
    d = effective_dof(h, key, 60, vol, 252.0)
    own = point_estimate(h, key, 60).dof
    if key == "yang_zhang":  # per-window value (overnight share); hindsight takes the median over the bars
        assert np.isfinite(d) and 0.5 * own < d < 2 * own
    else:
        assert d == pytest.approx(own, rel=1e-12)


def test_ewma_dof_is_lambda_based(sample_dir):
    h = load_prices(sample_dir / "kestrel_orchards.csv")[0]
    assert effective_dof(h, "ewma", 30) == pytest.approx(1.94 / 0.06, rel=1e-12)  # (1+l)/(1-l), RiskMetrics
