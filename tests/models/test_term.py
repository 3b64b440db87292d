"""Forward-vol term structure: closed form vs arch's own forecasts, and Hull's continuous form."""

from __future__ import annotations

import numpy as np
import pytest
from arch import arch_model

from volbench.errors import VolbenchError
from volbench.models import fit_garch, term
from volbench.settings import GarchSettings

HORIZONS = (1, 2, 5, 10, 21, 42, 63, 126, 252)


@pytest.mark.parametrize("model,params,o", [
    ("garch", [0.03, 0.05, 0.08, 0.88], 0),
    ("gjr", [0.03, 0.05, 0.03, 0.10, 0.87], 1),
])
def test_closed_form_equals_average_of_arch_forecasts(arch_path, model, params, o):
    # Reference library: arch's analytic h-step variance forecasts; closed form from docs/METHODS.md, "GARCH and the vol over an option's life"
    # (V_L + p^(h-1)(s2_{t+1} - V_L), summed as a geometric series). Equal to rounding.
    h, _ = arch_path(model, params, 2000, seed=11)
    y = 100 * h.log_returns()  # exactly the returns fit_garch sees
    res = arch_model(y, vol="GARCH", p=1, o=o, q=1, rescale=False).fit(disp="off", show_warning=False)
    fc = res.forecast(horizon=252, reindex=False).variance.to_numpy()[-1]
    prm = res.params
    p = prm["alpha[1]"] + prm["beta[1]"] + (prm["gamma[1]"] / 2 if o else 0.0)
    vl = prm["omega"] / (1 - p)
    closed = term.garch_average_variance(fc[0], vl, p, HORIZONS)
    arch_avg = np.array([fc[:t].mean() for t in HORIZONS])
    np.testing.assert_allclose(closed, arch_avg, rtol=1e-10)
    # the per-bar path too (docs/METHODS.md, "GARCH and the vol over an option's life": h-step formula vs arch)
    np.testing.assert_allclose(term.garch_variance_path(fc[0], vl, p, 252), fc, rtol=1e-10)
    # and our fit reports the same term structure (same data, same optimizer), in decimals
    fit = fit_garch(h, model, GarchSettings(horizons=HORIZONS))
    assert fit.fallback is None
    np.testing.assert_allclose(fit.term_structure["vol"], np.sqrt(closed * 252) / 100, rtol=1e-8)
    np.testing.assert_allclose(fit.long_run_vol, np.sqrt(vl * 252) / 100, rtol=1e-8)
    np.testing.assert_allclose(fit.half_life, np.log(0.5) / np.log(p), rtol=1e-8)


def test_hull_continuous_form_agrees_to_order_one_over_t(arch_path):
    # Hull, Options, Futures and Other Derivatives (recalled from memory):
    # sigma(T)^2 = A [V_L + (1 - e^{-aT})/(aT) (V(0) - V_L)], a = ln(1/p). The discrete average
    # is a left Riemann sum of the same exponential, so |discrete - continuous| <= |V(0) - V_L| / T
    # and T x difference tends to a constant: the difference shrinks like O(1/T).
    h, y = arch_path("garch", [0.0, 0.04, 0.10, 0.86], 3000, seed=5)
    # forecast from the calmest 20-bar stretch of the second half, so V(0) sits well below V_L
    rv = np.convolve(y**2, np.ones(20), "valid")
    cut = 1500 + int(np.argmin(rv[1500:])) + 20
    h = h.take(np.arange(h.n) <= cut)
    horizons = (5, 10, 21, 63, 252, 1000, 2000)
    fit = fit_garch(h, "garch", GarchSettings(horizons=horizons))
    assert fit.fallback is None
    p = fit.persistence
    v0 = fit.variance_path[0]
    vl = fit.params["omega"] / (1 - p)
    assert abs(v0 - vl) / vl > 0.2  # a visible gap, else the check is vacuous
    t = np.array(horizons, dtype=float)
    discrete = fit.term_structure["vol"].to_numpy() ** 2 / 252
    hull = term.hull_average_variance(v0, vl, p, horizons)
    diff = np.abs(discrete - hull)
    assert np.all(diff <= abs(v0 - vl) / t * (1 + 1e-9))
    scaled = diff * t
    assert scaled[-1] == pytest.approx(scaled[-2], rel=0.02)
    assert np.all(np.diff(diff) < 0)
    # on annualized vols the two differ by well under a vol point at a year
    assert abs(np.sqrt(discrete[4] * 252) - np.sqrt(hull[4] * 252)) < 0.002


def test_term_structure_moves_monotonically_from_next_bar_to_long_run(arch_path):
    # GARCH(1,1) forecasts revert geometrically to V_L (Bollerslev 1986), so the average over a
    # longer life lies between the next-bar variance and V_L and moves monotonically toward V_L.
    h, _ = arch_path("garch", [0.0, 0.05, 0.09, 0.88], 2500, seed=2)
    fit = fit_garch(h, "garch")
    vols = fit.term_structure["vol"].to_numpy()
    step = np.sign(fit.long_run_vol - fit.next_bar_vol)
    assert np.all(np.sign(np.diff(vols)) == step)
    lo, hi = sorted((fit.next_bar_vol, fit.long_run_vol))
    assert np.all((vols >= lo - 1e-12) & (vols <= hi + 1e-12))


def test_average_of_a_path_matches_a_plain_loop():
    # common practice, no source: cumulative mean checked against an obvious loop
    rng = np.random.default_rng(0)
    v = rng.uniform(1e-5, 4e-4, 300)
    hz = (1, 7, 100, 300)
    loop = [sum(v[i] for i in range(t)) / t for t in hz]
    np.testing.assert_allclose(term.average_variance_path(v, hz), loop, rtol=1e-12)
    ts = term.term_structure(v, hz, 252.0)
    np.testing.assert_allclose(ts["vol"], np.sqrt(np.array(loop) * 252), rtol=1e-12)
    assert list(ts.columns) == ["horizon", "vol"]


def test_fractional_days_interpolate_total_variance():
    # our convention (common practice, no source): total variance linear within a bar
    v = np.array([1.0, 2.0, 3.0, 4.0])
    assert term.interpolate_average_variance(v, 2) == pytest.approx(1.5)
    assert term.interpolate_average_variance(v, 2.5) == pytest.approx((1 + 2 + 0.5 * 3) / 2.5)
    assert term.interpolate_average_variance(v, 0.4) == pytest.approx(1.0)
    with pytest.raises(VolbenchError, match="days must be a positive number of bars, got 0"):
        term.interpolate_average_variance(v, 0)
    with pytest.raises(VolbenchError, match="days must be at most 4 bars"):
        term.interpolate_average_variance(v, 4.5)


def test_half_life_formula():
    # docs/METHODS.md, "GARCH and the vol over an option's life": ln(0.5) / ln(p); p = 0.5 halves every bar
    assert term.half_life(0.5) == pytest.approx(1.0)
    assert term.half_life(0.98) == pytest.approx(np.log(0.5) / np.log(0.98))
    assert np.isnan(term.half_life(1.0)) and np.isnan(term.half_life(0.0))


@pytest.mark.parametrize("bad,msg", [
    ([], "at least one horizon"),
    ([0, 5], "between 1 and 2520 bars, got 0"),
    ([5, 3000], "between 1 and 2520 bars, got 3000"),
    ([5.5], "whole numbers of bars, got 5.5"),
    (["x"], "whole numbers of bars, got 'x'"),
    (5, "list of whole numbers of bars, got 5"),
])
def test_bad_horizons_are_rejected(bad, msg):
    with pytest.raises(VolbenchError, match=msg):
        term.check_horizons(bad)


def test_horizons_sorted_and_unique():
    assert term.check_horizons([63, 5, 21, 5, 10.0]) == (5, 10, 21, 63)


def test_closed_forms_refuse_persistence_at_one():
    with pytest.raises(VolbenchError, match=r"persistence in \[0, 1\), got 1.0"):
        term.garch_average_variance(1.0, 1.0, 1.0, [5])
    with pytest.raises(VolbenchError, match=r"persistence in \(0, 1\), got 1.0"):
        term.hull_average_variance(1.0, 1.0, 1.0, [5])
