"""fit_garch: parameter recovery, unit conversions, scale invariance, honest failure."""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd
import pytest
from arch import arch_model
from arch.univariate import Normal

from volbench.errors import VolbenchError
from volbench.estimators import point_estimate
from volbench.models import FALLBACK, MIN_RETURNS, fit_garch
from volbench.models.checks import diagnose
from volbench.settings import GarchSettings

LN1E4 = math.log(1e4)


def _decimal_truth(model, names, params):
    """True parameters from arch's percent scale to decimal units (mu / 100, omega / 100^2;
    EGARCH omega - (1 - beta) ln 100^2)."""
    t = dict(zip(names, params))
    if "mu" in t:
        t["mu"] /= 100
    t["omega"] = t["omega"] - (1 - t["beta[1]"]) * LN1E4 if model == "egarch" else t["omega"] / 1e4
    return t


@pytest.mark.parametrize("model,names,params,dist", [
    ("garch", ["mu", "omega", "alpha[1]", "beta[1]"], [0.03, 0.02, 0.08, 0.90], "normal"),
    ("gjr", ["mu", "omega", "alpha[1]", "gamma[1]", "beta[1]"], [0.03, 0.02, 0.04, 0.10, 0.88], "normal"),
    ("garch", ["mu", "omega", "alpha[1]", "beta[1]", "nu"], [0.03, 0.02, 0.08, 0.90, 6.0], "t"),
    ("egarch", ["mu", "omega", "alpha[1]", "gamma[1]", "beta[1]"], [0.03, 0.01, 0.15, -0.08, 0.97], "normal"),
])
def test_parameter_recovery_on_arch_simulated_paths(arch_path, model, names, params, dist):
    # Reference library: arch simulates a long path from known parameters; the MLE is
    # consistent and asymptotically normal (Bollerslev & Wooldridge 1992 for the QMLE s.e.),
    # so each estimate lies within 4 reported standard errors of the truth (two-sided
    # probability of a miss about 6e-5 per parameter).
    h, _ = arch_path(model, params, 10_000, seed=2024, dist=dist)
    fit = fit_garch(h, model, GarchSettings(models=(model,), dist=dist))
    assert fit.converged and fit.fallback is None, fit.warnings
    truth = _decimal_truth(model, names, params)
    assert list(fit.params) == names
    for k, v in truth.items():
        se = fit.std_errors[k]
        assert np.isfinite(se) and se > 0
        assert abs(fit.params[k] - v) <= 4 * se, (k, fit.params[k], v, se)
    if model == "garch":
        true_lr = math.sqrt(truth["omega"] / (1 - params[2] - params[3]) * 252)
        assert fit.long_run_vol == pytest.approx(true_lr, rel=0.15)


@pytest.mark.parametrize("model,o,vol", [("garch", 0, "GARCH"), ("gjr", 1, "GARCH"), ("egarch", 1, "EGARCH")])
def test_decimal_parameters_reproduce_arch_on_decimal_returns(arch_path, model, o, vol):
    # Percent vs decimal returns. Reference library: arch's fixed-parameter evaluation on
    # *decimal* returns with our decimal parameters gives exactly our conditional vol, and our
    # log-likelihood (arch's percent-scale value + n ln 100, the Jacobian of y = 100 r).
    params = [0.02, 0.05, 0.07, 0.05, 0.88] if o else [0.02, 0.05, 0.08, 0.88]
    if model == "egarch":
        params = [0.02, 0.02, 0.12, -0.05, 0.96]
    h, _ = arch_path(model, params, 2000, seed=9)
    fit = fit_garch(h, model)
    assert fit.fitted and fit.converged
    r = h.log_returns()
    fixed = arch_model(r, vol=vol, p=1, o=o, q=1, rescale=False).fix(list(fit.params.values()))
    np.testing.assert_allclose(np.asarray(fixed.conditional_volatility) * math.sqrt(252),
                               fit.conditional_vol.to_numpy(), rtol=1e-9)
    assert fixed.loglikelihood == pytest.approx(fit.loglik, rel=1e-10)
    assert fit.conditional_vol.index[0] == h.index[1] and fit.conditional_vol.index[-1] == h.index[-1]


def test_return_scale_seen_by_the_optimizer_does_not_change_the_vols(arch_path):
    # Scale invariance of the GARCH likelihood (common practice; the reason arch advises
    # rescaling is numerical conditioning only). Reference library: arch fitted on returns in
    # other units (per mille, and decimals with arch's own automatic rescaling) gives the same
    # annualized conditional vol and term structure as our percent fit, within optimizer tolerance.
    h, _ = arch_path("garch", [0.02, 0.05, 0.08, 0.88], 2000, seed=4)
    fit = fit_garch(h, "garch")
    r = h.log_returns()
    for scale in (1000.0, 1.0):
        res = arch_model(r * scale, vol="GARCH", p=1, q=1, rescale=scale == 1.0).fit(disp="off", show_warning=False)
        total = scale * res.scale
        cv = np.asarray(res.conditional_volatility) / total * math.sqrt(252)
        np.testing.assert_allclose(cv, fit.conditional_vol.to_numpy(), rtol=1e-3)
        fc = res.forecast(horizon=252, reindex=False).variance.to_numpy()[-1] / total**2
        avg = np.array([fc[:t].mean() for t in fit.term_structure["horizon"]])
        np.testing.assert_allclose(np.sqrt(avg * 252), fit.term_structure["vol"], rtol=1e-3)


def test_multiplying_prices_by_a_constant_changes_nothing(arch_path, percent_history):
    # Log returns are unchanged by a price rescale (common practice, no source).
    h, y = arch_path("gjr", [0.02, 0.05, 0.05, 0.08, 0.88], 1500, seed=6)
    a = fit_garch(h, "gjr")
    b = fit_garch(percent_history(y, start_price=100.0 * 1234.5), "gjr")
    for k in a.params:
        assert b.params[k] == pytest.approx(a.params[k], rel=1e-6, abs=1e-12)
    np.testing.assert_allclose(b.term_structure["vol"], a.term_structure["vol"], rtol=1e-6)
    assert b.loglik == pytest.approx(a.loglik, rel=1e-9)


def test_egarch_uses_a_seeded_simulation_forecast(arch_path):
    h, _ = arch_path("egarch", [0.02, 0.02, 0.12, -0.05, 0.96], 2000, seed=3)
    a = fit_garch(h, "egarch", GarchSettings(seed=7, simulations=500))
    b = fit_garch(h, "egarch", GarchSettings(seed=7, simulations=500))
    c = fit_garch(h, "egarch", GarchSettings(seed=8, simulations=500))
    assert a.forecast_method == "simulation" and a.simulations == 500 and a.seed == 7
    np.testing.assert_array_equal(a.variance_path, b.variance_path)
    assert not np.array_equal(a.variance_path[1:], c.variance_path[1:])
    # the one-step forecast is deterministic (no simulation needed), so every seed agrees
    assert a.variance_path[0] == pytest.approx(c.variance_path[0], rel=1e-12)
    # reference library: the EGARCH recursion evaluated by arch gives the same one-step variance
    y = 100 * h.log_returns()
    res = arch_model(y, vol="EGARCH", p=1, o=1, q=1, rescale=False).fit(disp="off", show_warning=False)
    one = res.forecast(horizon=1, reindex=False).variance.to_numpy()[-1, 0] / 1e4
    assert a.variance_path[0] == pytest.approx(one, rel=1e-8)
    assert any("exp(omega / (1 - beta))" in n for n in a.notes)
    # reference library: arch's own simulation forecast, fed the same seeded generator, gives
    # the same expected variance path
    rng = Normal(seed=np.random.default_rng(7)).simulate([])
    sim = res.forecast(horizon=252, method="simulation", simulations=500, rng=rng, reindex=False)
    np.testing.assert_allclose(a.variance_path, sim.variance.to_numpy()[-1] / 1e4, rtol=1e-12)


def test_information_criteria_follow_their_definitions(arch_path):
    # Akaike (1974): AIC = -2 loglik + 2k; Schwarz (1978): BIC = -2 loglik + k ln n.
    h, _ = arch_path("garch", [0.02, 0.05, 0.08, 0.88], 1500, seed=1)
    fit = fit_garch(h, "garch", GarchSettings(dist="t"))
    k = len(fit.params)
    assert fit.aic == pytest.approx(-2 * fit.loglik + 2 * k, rel=1e-12)
    assert fit.bic == pytest.approx(-2 * fit.loglik + k * math.log(fit.nobs), rel=1e-12)
    assert fit.nobs == h.n - 1


# ------------------------------------------------------------------------------ forward_vol / as_dict
def test_forward_vol_matches_the_term_structure_and_interpolates(arch_path):
    # consistency of our own API (no external source): forward_vol(T) is the term-structure vol
    h, _ = arch_path("garch", [0.02, 0.05, 0.08, 0.88], 1500, seed=12)
    fit = fit_garch(h, "garch")
    ts = dict(zip(fit.term_structure["horizon"], fit.term_structure["vol"]))
    assert fit.forward_vol(21) == pytest.approx(ts[21], rel=1e-12)
    lo, hi = sorted((fit.forward_vol(21), fit.forward_vol(22)))
    assert lo <= fit.forward_vol(21.5) <= hi
    assert fit.max_days == 252
    with pytest.raises(VolbenchError, match="days must be at most 252 bars"):
        fit.forward_vol(300)
    with pytest.raises(VolbenchError, match="days must be a positive number of bars, got -1"):
        fit.forward_vol(-1)


def test_as_dict_is_json_safe_with_the_issue_shape(arch_path, make_history):
    h, _ = arch_path("garch", [0.02, 0.05, 0.08, 0.88], 600, seed=13)
    for fit in (fit_garch(h, "garch", GarchSettings(horizons=(5, 21))), fit_garch(make_history(np.linspace(10, 11, 40)))):
        d = fit.as_dict()
        json.dumps(d, allow_nan=False)
        for key in ("model", "dist", "converged", "params", "std_errors", "loglik", "aic", "bic",
                    "persistence", "long_run_vol", "half_life", "term_structure", "warnings"):
            assert key in d
        assert all(set(row) == {"horizon", "vol"} for row in d["term_structure"])


# ------------------------------------------------------------------------------ honest failure
def test_constant_series_is_refused_not_a_zero_vol(make_history):
    # common practice, no source: constant prices have zero return variance; a forward vol of 0 %
    # would be a number passed off as a result, so the fit is refused with the reason.
    h = make_history(np.full(400, 50.0), name="flat")
    with pytest.raises(VolbenchError, match=r"flat: returns do not vary \(all 399 equal 0\): there is no "
                                            "volatility to model; check the price column"):
        fit_garch(h, "garch")


def test_thirty_bars_fall_back_to_ewma_and_say_how_many_are_needed(make_history):
    rng = np.random.default_rng(3)
    close = 100 * np.exp(np.cumsum(np.r_[0.0, rng.normal(0, 0.015, 29)]))
    h = make_history(close)
    fit = fit_garch(h, "gjr", GarchSettings(horizons=(5, 21, 63)))
    assert fit.fallback == FALLBACK
    assert f"29 returns, at least {MIN_RETURNS} are needed" in fit.warnings[0]
    # RiskMetrics (1996) EWMA, lambda 0.94, seeded with the sample variance of the first 20
    # returns (docs/METHODS.md, "Estimators"), written as a plain loop
    r = np.diff(np.log(close))
    v = np.var(r[:20], ddof=1)
    for x in r[20:]:
        v = 0.94 * v + 0.06 * x * x
    ewma = math.sqrt(v * 252)
    np.testing.assert_allclose(fit.term_structure["vol"], ewma, rtol=1e-12)
    assert fit.forward_vol(400) == pytest.approx(ewma, rel=1e-12)
    assert fit.fallback_vol == pytest.approx(point_estimate(h, "ewma").vol, rel=1e-12)
    assert any("falls back to EWMA (lambda 0.94)" in w for w in fit.warnings)


def test_integrated_paths_warn_and_fall_back_or_note_near_unit_persistence(arch_path):
    # IGARCH paths (alpha + beta = 1) simulated by arch. Theory: with the truth on the
    # stationarity boundary the constrained MLE lands on it with probability near 1/2 (Andrews
    # 1999, Econometrica 67(6), boundary estimation; recalled from memory), and otherwise lies
    # within about one standard error of it. So each fit either reports persistence at 1 and
    # falls back, or notes that persistence is not significantly below 1; and among eight paths
    # both outcomes appear (each has probability about 1/2).
    at_bound = 0
    for seed in range(8):
        h, _ = arch_path("garch", [0.02, 0.10, 0.90], 2000, seed=seed, mean="zero", initial_value_vol=1.0)
        fit = fit_garch(h, "garch")
        if fit.fallback:
            at_bound += 1
            assert fit.fallback == FALLBACK
            assert any("is at or above 1" in w and "no long-run vol" in w for w in fit.warnings)
            assert np.isnan(fit.long_run_vol) and np.isnan(fit.half_life)
            assert fit.term_structure["vol"].nunique() == 1
        else:
            assert any("not significantly below 1" in n for n in fit.notes), fit.notes
    assert 1 <= at_bound <= 7


def test_non_convergence_is_reported_and_falls_back(arch_path):
    h, _ = arch_path("garch", [0.02, 0.05, 0.08, 0.88], 1000, seed=21)
    fit = fit_garch(h, "garch", GarchSettings(max_iterations=2))
    assert fit.fitted and not fit.converged
    assert fit.fallback == FALLBACK
    assert any("the optimizer did not converge (arch flag 9: Iteration limit reached)" in w for w in fit.warnings)


def test_diagnose_flags_parameters_on_bounds():
    # our rules (BOUND_TOL = 1e-4), on arch's parameter names and percent scale
    cov = None
    _, _, warn, _ = diagnose("garch", {"mu": 0.0, "omega": 0.1, "alpha[1]": 0.0, "beta[1]": 0.9}, cov,
                             convergence_flag=0, optimizer_message="ok")
    assert any("standard errors could not be computed" in w for w in warn)
    assert any("alpha[1] = 0 is on its lower bound 0" in w for w in warn)

    names = ["mu", "omega", "alpha[1]", "beta[1]", "nu"]
    ok_cov = pd.DataFrame(np.eye(5) * 1e-4, index=names, columns=names)
    p, _, warn, notes = diagnose("garch", dict(zip(names, [0.0, 0.1, 0.1, 0.0, 2.05])), ok_cov,
                                 convergence_flag=0, optimizer_message="ok")
    assert p == pytest.approx(0.1)
    assert any("beta[1] = 0 is on its lower bound 0" in w for w in warn)
    assert any("nu = 2.05 is on its lower bound 2.05" in w for w in warn)
    _, _, warn, notes = diagnose("garch", dict(zip(names, [0.0, 0.1, 0.1, 0.85, 500.0])), ok_cov,
                                 convergence_flag=0, optimizer_message="ok")
    assert warn == [] and any("nu = 500 is on its upper bound" in n for n in notes)
    gjr = ["mu", "omega", "alpha[1]", "gamma[1]", "beta[1]"]
    gcov = pd.DataFrame(np.eye(5) * 1e-4, index=gjr, columns=gjr)
    _, _, warn, notes = diagnose("gjr", dict(zip(gjr, [0.0, 0.1, 0.0, 0.12, 0.85])), gcov,
                                 convergence_flag=0, optimizer_message="ok")
    assert warn == [] and any("only falling returns raise the variance" in n for n in notes)


def test_too_few_returns_for_any_volatility_raise(make_history):
    with pytest.raises(VolbenchError, match=r"test: 1 return \(from 2 prices\); a volatility needs at least 2 returns"):
        fit_garch(make_history([10.0, 10.5]))


@pytest.mark.parametrize("kwargs,msg", [
    ({"model": "arch"}, "unknown model 'arch'; choose one of: garch, gjr, egarch"),
    ({"dist": "skewt"}, "unknown distribution 'skewt'; choose one of: normal, t"),
    ({"mean": "ar"}, "unknown mean 'ar'; choose one of: constant, zero"),
    ({"annualization": 0}, "annualization must be > 0"),
    ({"simulations": 5}, "simulations must be a whole number between 100 and 100000, got 5"),
    ({"seed": -1}, "seed must be a whole number >= 0, got -1"),
    ({"horizons": (0,)}, "horizons must be between 1 and 2520 bars, got 0"),
    ({"max_iterations": 0}, "max_iterations must be a whole number >= 1 or None, got 0"),
])
def test_bad_settings_are_rejected(make_history, kwargs, msg):
    h = make_history(np.linspace(10, 12, 300))
    model = kwargs.pop("model", "garch")
    annualization = kwargs.pop("annualization", 252)
    with pytest.raises(VolbenchError, match=msg):
        fit_garch(h, model, GarchSettings(models=("garch",), **kwargs), annualization=annualization)


def test_an_unadjusted_split_gets_a_note_naming_its_date(arch_path, percent_history):
    # common practice, no source: a return 10+ robust s.d. (1.4826 x MAD) from the median is a
    # data suspect; a 2:1 split is ln(0.5) = -69% in log terms on a ~1% daily-vol path
    _, y = arch_path("garch", [0.0, 0.02, 0.08, 0.90], 800, seed=30)
    y = y.copy()
    y[500] += 100 * np.log(0.5)
    h = percent_history(y)
    fit = fit_garch(h, "garch")
    day = str(h.index[501].date())
    assert any(f"the return on {day} (" in n and "unadjusted split or a bad tick" in n for n in fit.notes)
    clean = fit_garch(percent_history(np.delete(y, 500)), "garch")
    assert not any("robust standard deviations" in n for n in clean.notes)


def test_oversized_egarch_simulation_is_refused(make_history):
    h = make_history(np.linspace(10, 12, 300))
    with pytest.raises(VolbenchError, match=r"would simulate 100000 paths x 2520 bars, more than 20,000,000"):
        fit_garch(h, "egarch", GarchSettings(models=("garch",), simulations=100_000, horizons=(2520,)))
    with pytest.raises(VolbenchError, match=r"the EGARCH forecast would simulate 100000 paths"):
        GarchSettings(simulations=100_000, horizons=(2520,))  # every model, EGARCH among them
    settings = GarchSettings(models=("garch",), simulations=100_000, horizons=(2520,))  # nothing simulated
    fit_garch(h, "garch", settings)
