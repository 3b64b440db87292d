"""The invented sample quotes: committed file equals the generator, and the truth is recovered."""

from __future__ import annotations

import itertools
import json
import math
import shutil

import pytest

from volbench.data import load_prices
from volbench.estimators import estimate_all
from volbench.market import forward_variance, implied_surface, read_quotes, versus_history
from volbench.models import fit_garch
from volbench.pricing.bsm import bsm_greeks
from volbench.pricing.cone import vol_cone
from volbench.sample_quotes import QuoteParams, write_sample_quotes
from volbench.settings import GarchSettings


@pytest.fixture
def truth(sample_dir):
    meta = json.loads((sample_dir / "PARAMETERS.json").read_text())["option_quotes"]
    fields = set(QuoteParams.__dataclass_fields__)
    p = QuoteParams(**{k: tuple(v) if isinstance(v, list) else v for k, v in meta.items() if k in fields})
    return p, meta


@pytest.fixture
def surface(sample_dir, truth):
    p, _ = truth
    quotes = read_quotes(sample_dir / p.file)
    return implied_surface(quotes, spot=p.spot, rate=p.rate, as_of=p.as_of)


def test_committed_quotes_equal_the_generator_output(tmp_path, sample_dir, truth):
    shutil.copy(sample_dir / "ironvale_mining.csv", tmp_path / "ironvale_mining.csv")
    meta = write_sample_quotes(tmp_path)
    p, committed = truth
    assert (tmp_path / p.file).read_bytes() == (sample_dir / p.file).read_bytes(), (
        "the sample quotes differ from the generator; run 'make samples'")
    assert json.loads(json.dumps(meta)) == committed


def test_recovered_atm_vols_equal_the_generator_within_the_noise(surface, truth):
    # Common practice, no source: each ATM vol interpolates two quotes whose vols carry Gaussian
    # noise of s vol points, premiums rounded to the tick (vol error <= tick / (2 vega)), a
    # curvature bias <= c |k1 k2| from linear interpolation of a quadratic smile, and the skew times
    # the error of the parity forward in ln(F). Allow 4 s plus those bounds.
    p, meta = truth
    assert len(surface.expiries) == len(p.expiries)
    for e, atm in zip(surface.expiries, p.atm_vols):
        assert e.expiry in p.expiries and e.forward_source.startswith("put-call parity")
        true_f = meta["forwards"][e.expiry]
        k = e.smile.moneyness.to_numpy()
        below, above = k[k < 0].max(), k[k >= 0].min()
        vega = min(bsm_greeks(p.spot, true_f * math.exp(x), e.life.years, p.rate, atm, p.dividend_yield).vega
                   for x in (below, above))
        skew_t = abs(p.skew) * math.sqrt(0.25 / e.life.years)
        tol = (4 * p.noise_vol_points / 100 + p.tick / (2 * vega) + p.curvature * abs(below * above)
               + skew_t * abs(math.log(e.forward / true_f)))
        assert abs(e.atm_implied_vol - atm) < tol, (e.expiry, e.atm_implied_vol, atm, tol)
        assert abs(e.forward / true_f - 1) < 2e-3  # parity forward within a few ticks' worth


def test_forward_implied_variance_matches_the_formula(surface, truth):
    # docs/METHODS.md, "Implied vol and option quotes": (s2^2 T2 - s1^2 T1) / (T2 - T1).
    p, _ = truth
    es = surface.expiries
    assert es[0].forward_variance == pytest.approx(es[0].atm_implied_vol ** 2, rel=1e-14)
    for prev, cur in itertools.pairwise(es):
        fv = forward_variance(prev.atm_implied_vol, prev.life.years, cur.atm_implied_vol, cur.life.years)
        assert cur.forward_variance == pytest.approx(fv, rel=1e-12)
        assert cur.forward_implied_vol == pytest.approx(math.sqrt(fv), rel=1e-12)
        assert not cur.calendar_arbitrage  # the generator's term structure rises
        i = p.expiries.index(cur.expiry)
        true_fv = forward_variance(p.atm_vols[i - 1], prev.life.years, p.atm_vols[i], cur.life.years)
        err = 2 * (cur.atm_implied_vol * cur.life.years * 0.01 + prev.atm_implied_vol * prev.life.years * 0.01)
        assert abs(fv - true_fv) < err / (cur.life.years - prev.life.years)  # 1 vol point on each end


def test_versus_history_uses_the_core_functions_on_each_expirys_trading_days(sample_dir, surface):
    (h,) = load_prices(sample_dir / "ironvale_mining.csv")
    v = versus_history(surface, h)
    assert v.series == h.name and v.history_as_of == surface.as_of and v.notes == ()
    days = sorted(e.life.trading_days for e in surface.expiries)
    fit = fit_garch(h, "garch", GarchSettings(horizons=days))  # reference: the arch-based fit every command uses
    cone = vol_cone(h, "close_to_close")
    for row, e in zip(v.rows, surface.expiries):
        n = e.life.trading_days
        f = math.sqrt((n / 252) / e.life.years)
        assert row.basis_factor == pytest.approx(f, rel=1e-14)
        est = estimate_all(h, n)
        assert row.realized_estimator == "yang_zhang"
        assert row.realized_vol == pytest.approx(est.estimates["yang_zhang"].vol * f, rel=1e-12)
        assert row.realized["close_to_close"] == pytest.approx(est.estimates["close_to_close"].vol * f, rel=1e-12)
        assert row.forecast_vol == pytest.approx(fit.forward_vol(n) * f, rel=1e-9)
        assert row.forecast_source == "GARCH(1,1)"
        assert row.spread_points == pytest.approx(100 * (e.atm_implied_vol - row.forecast_vol), rel=1e-12)
        assert row.cone_percentile == pytest.approx(cone.place(e.atm_implied_vol / f, n).percentile, rel=1e-12)
        assert set(row.as_dict()) >= {"expiry", "atm_implied_vol", "realized_vol", "forecast_vol",
                                      "forecast_source", "cone_percentile", "spread_points"}


def test_versus_history_stops_at_the_quotes_as_of(sample_dir, surface):
    (h,) = load_prices(sample_dir / "ironvale_mining.csv")
    early = h.up_to("2024-09-30")
    v = versus_history(surface, early)
    assert any("days before the quotes' as-of date" in n for n in v.notes)
    longer = versus_history(surface, h.up_to(surface.as_of))
    assert longer.rows[0].realized_vol != v.rows[0].realized_vol
