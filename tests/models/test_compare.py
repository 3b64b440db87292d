"""fit_models: BIC ranking and what is said about it."""

from __future__ import annotations

import json

import numpy as np
import pytest

from volbench.errors import VolbenchError
from volbench.models import evidence, fit_models
from volbench.settings import GarchSettings


def test_leverage_path_prefers_gjr_by_a_wide_bic_margin(arch_path):
    # Reference library: a GJR path with strong leverage (gamma 0.15) simulated by arch. BIC is
    # consistent (Schwarz 1978): with 4000 bars the likelihood gain of gamma far exceeds its
    # ln(n) penalty, so GJR wins and the gap is "very strong" on the Kass & Raftery (1995) scale.
    h, _ = arch_path("gjr", [0.03, 0.03, 0.02, 0.15, 0.88], 4000, seed=17)
    c = fit_models(h, GarchSettings(models=("garch", "gjr")))
    assert c.preferred == "gjr" and c.ranking == ("gjr", "garch")
    assert c.delta_bic == pytest.approx(c.fit("garch").bic - c.fit("gjr").bic)
    assert c.delta_bic > 10
    assert "GJR-GARCH(1,1,1) is preferred" in c.message and "very strong evidence" in c.message
    assert c.forward_vol(21) == c.fit("gjr").forward_vol(21)


def test_symmetric_path_does_not_prefer_the_extra_parameter(arch_path):
    # Reference library: a plain GARCH(1,1) path; GJR's gamma adds ln(n) to BIC for a negligible
    # likelihood gain, so BIC prefers GARCH (Schwarz 1978; holds with high probability).
    h, _ = arch_path("garch", [0.03, 0.03, 0.09, 0.89], 4000, seed=18)
    c = fit_models(h, GarchSettings(models=("gjr", "garch")))
    assert [f.model for f in c.fits] == ["gjr", "garch"]
    assert c.preferred == "garch"
    assert c.delta_bic > 0


def test_fits_with_warnings_are_ranked_but_never_preferred(make_history):
    rng = np.random.default_rng(1)
    h = make_history(100 * np.exp(np.cumsum(np.r_[0.0, rng.normal(0, 0.01, 59)])))
    c = fit_models(h, GarchSettings(models="all"))
    assert c.preferred is None and c.delta_bic is None and c.ranking == ()
    assert c.message == ("no model gave a usable fit; the forward vol is the fallback: EWMA (lambda 0.94), "
                         "because: too little data (59 returns, 250 needed)")
    assert c.forward_vol(10) == c.fits[0].fallback_vol
    json.dumps(c.as_dict(), allow_nan=False)


def test_evidence_scale():
    # Kass & Raftery (1995), JASA 90(430), 2 ln B scale (recalled from memory)
    assert [evidence(d) for d in (1.9, 2.0, 5.9, 6.0, 9.9, 10.0, 40.0)] == [
        "barely worth mentioning", "positive", "positive", "strong", "strong", "very strong", "very strong"]


def test_unknown_models_are_rejected(make_history):
    h = make_history(np.linspace(10, 12, 300))
    with pytest.raises(VolbenchError, match="unknown model 'figarch'; choose one of: garch, gjr, egarch"):
        fit_models(h, GarchSettings(models=("garch", "figarch")))
    with pytest.raises(VolbenchError, match="models must name at least one of: garch, gjr, egarch"):
        fit_models(h, GarchSettings(models=()))
    with pytest.raises(VolbenchError, match="test: model 'egarch' was not fitted; fitted: garch"):
        fit_models(h, GarchSettings(models="garch")).fit("egarch")
