"""Hindsight over a history: vectorised numbers equal a plain per-date loop, rankings behave as theory says."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.estimators import point_estimate
from volbench.events import make_calendar
from volbench.hindsight import HindsightCancelled, hindsight, qlike
from volbench.hindsight.forecasts import garch_forecast
from volbench.models import fit_garch
from volbench.pricing.bsm import bsm_price
from volbench.settings import GarchSettings

A = 252.0


def _close_only(r, name="sim", start="2010-01-04"):
    close = 30.0 * np.exp(np.concatenate(([0.0], np.cumsum(r))))
    return PriceHistory(name, None, pd.bdate_range(start, periods=close.size).to_numpy(), close)


def _garch_returns(n, seed, alpha=0.10, beta=0.88, vol=0.30):
    # GARCH(1,1) with normal innovations (Bollerslev 1986); the recursion is sequential by nature
    rng = np.random.default_rng(seed)
    v_long = vol**2 / A
    omega = v_long * (1 - alpha - beta)
    z = rng.standard_normal(n)
    r = np.empty(n)
    v = v_long
    for t in range(n):
        r[t] = math.sqrt(v) * z[t]
        v = omega + alpha * r[t] ** 2 + beta * v
    return r


def test_vectorised_scores_equal_a_plain_per_date_loop(simulate_ohlc):
    # reference: the registry's point estimate at each as-of date (volbench.estimators), the realized
    # vol and losses by hand, and scipy-backed bsm_price one option at a time (common practice, no source)
    h = simulate_ohlc(320, 0.25, seed=5, steps=50)
    res = hindsight(h, 10, windows=(20, 60), step=7)
    assert res.periods == len(range(60, 320 - 10, 7))  # close-to-close/Yang-Zhang at 60 need 61 bars
    r = np.diff(np.log(h.close))
    for rec in res.scores.to_dict(orient="records"):
        key, w = rec["key"], rec["window"]
        est_key = key.split(":")[0]
        fc, real, prices = [], [], []
        for date in res.dates:
            t = int(np.searchsorted(h.index, date))
            if est_key == "ewma":
                fc.append(point_estimate(h.up_to(date), "ewma").vol)
            else:
                fc.append(point_estimate(h.up_to(date), est_key, int(w)).vol)
            real.append(math.sqrt(A * np.mean(r[t:t + 10] ** 2)))
            s = h.close[t]
            prices.append((bsm_price(s, s, 10 / A, 0.0, fc[-1]), bsm_price(s, s, 10 / A, 0.0, real[-1])))
        fc, real = np.array(fc), np.array(real)
        assert np.allclose(res.forecasts[key].to_numpy(), fc, rtol=1e-10)
        assert np.allclose(res.realized, real, rtol=1e-10)
        assert rec["bias"] == pytest.approx(100 * np.mean(fc - real), rel=1e-9, abs=1e-12)
        assert rec["rmse"] == pytest.approx(100 * math.sqrt(np.mean((fc - real) ** 2)), rel=1e-9)
        assert rec["qlike"] == pytest.approx(np.mean(qlike(real**2, fc**2)), rel=1e-9)
        pe = np.array([abs(a - b) for a, b in prices])
        assert rec["price_error"] == pytest.approx(pe.mean(), rel=1e-9)
        assert rec["price_error_share"] == pytest.approx(np.mean(pe / np.array([b for _, b in prices])), rel=1e-9)
        lo, hi = res.lower[key].to_numpy(), res.upper[key].to_numpy()
        assert rec["coverage"] == pytest.approx(np.mean((real >= lo) & (real <= hi)))
    assert res.scores["qlike"].is_monotonic_increasing and res.best == res.scores["key"].iloc[0]
    assert math.isnan(res.scores["dm_p_value"].iloc[0]) and res.scores["dm_p_value"].iloc[1:].between(0, 1).all()


@pytest.mark.slow
def test_on_a_garch_series_ewma_and_garch_beat_a_long_window_by_qlike():
    # volatility clusters (Bollerslev 1986): forecasts that follow recent returns beat a 250-bar average
    # by QLIKE (Patton 2011); GARCH refitted every 250 bars with parameters reused in between
    h = _close_only(_garch_returns(3000, seed=21))
    res = hindsight(h, 21, windows=(20, 60, 250), step=5, with_garch=True, refit_every=250)
    q = res.scores.set_index("key")["qlike"]
    assert q["ewma"] < q["close_to_close:250"] and q["garch"] < q["close_to_close:250"]
    assert res.best in ("ewma", "garch", "close_to_close:20")
    assert any("refitted" in n for n in res.notes)


def test_on_constant_vol_the_long_window_ranks_first():
    # i.i.d. returns: the longest window has the smallest estimation error, so it forecasts best
    # (QLIKE, Patton 2011); the 20-bar window is significantly worse (Diebold & Mariano 1995)
    rng = np.random.default_rng(22)
    h = _close_only(rng.standard_normal(3000) * 0.22 / math.sqrt(A))
    res = hindsight(h, 21, windows=(20, 60, 250), keys=("close_to_close", "ewma"))
    assert res.best == "close_to_close:250"
    s = res.scores.set_index("key")
    assert s.loc["close_to_close:20", "dm_p_value"] < 0.01
    assert 0.90 <= s.loc["close_to_close:250", "coverage"] <= 0.99  # its 95 % prediction interval holds


def test_with_all_estimators_on_constant_vol_the_best_uses_the_long_window(simulate_ohlc):
    h = simulate_ohlc(1500, 0.22, seed=23, steps=100)
    res = hindsight(h, 21, windows=(20, 250), step=3)
    assert res.scores["window"].iloc[0] == 250


def test_event_aware_candidate_beats_the_blended_one_on_an_event_series():
    # planted quarterly event moves (Patell & Wolfson 1979, from memory): pricing the events due in
    # each period beats a blended close-to-close of the same window by QLIKE
    rng = np.random.default_rng(24)
    n = 2520
    r = rng.standard_normal(n - 1) * 0.2 / math.sqrt(A)
    bars = np.arange(30, n, 63)
    r[bars - 1] += rng.standard_normal(bars.size) * 0.06
    h = _close_only(r)
    cal = make_calendar([str(pd.Timestamp(h.dates[b]).date()) for b in bars])
    res = hindsight(h, 21, windows=(60,), keys=("close_to_close",), events=cal)
    q = res.scores.set_index("key")["qlike"]
    assert q["event_aware:60"] < q["close_to_close:60"]
    assert any("40 event bars" in n for n in res.notes)


def test_event_aware_forecasts_equal_a_plain_per_date_computation():
    # reference: at each as-of bar t, from the returns up to t only (common practice, no source): the
    # sample variance of the last W ordinary returns, the event move from the event bars up to t less
    # the variance of every ordinary return up to t (floored at 0), and the event bars among t+1..t+N
    rng = np.random.default_rng(29)
    n, w, days = 700, 40, 15
    r = rng.standard_normal(n - 1) * 0.012
    bars = np.arange(25, n, 45)
    r[bars - 1] += rng.standard_normal(bars.size) * 0.05
    h = _close_only(r)
    cal = make_calendar([str(pd.Timestamp(h.dates[b]).date()) for b in bars])
    res = hindsight(h, days, windows=(w,), keys=("close_to_close",), events=cal, step=13)
    is_event = np.zeros(n, bool)
    is_event[bars] = True
    for date, got in zip(res.dates, res.forecasts[f"event_aware:{w}"]):
        t = int(np.searchsorted(h.index, date))
        past = np.arange(1, t + 1)
        ordinary = r[past[~is_event[past]] - 1]
        events = r[past[is_event[past]] - 1]
        move = max(np.mean(events**2) - np.var(ordinary, ddof=1), 0.0)
        m = int(is_event[t + 1:t + days + 1].sum())
        want = math.sqrt(A * (np.var(ordinary[-w:], ddof=1) + m * move / days))
        assert got == pytest.approx(want, rel=1e-9)


def test_garch_path_matches_the_fit_at_refits_and_reuses_parameters_between(simulate_ohlc):
    # reference: arch's own forecast through fit_garch at the refit bar; between refits one step of
    # the GARCH(1,1) recursion with the refit's parameters (Bollerslev 1986)
    h = _close_only(_garch_returns(900, seed=25))
    refits = np.array([400, 600])
    calls = []
    fc, notes = garch_forecast(h, 21, refits, A, np.full(h.n, 0.3), progress=lambda d, t, m: calls.append((d, t)))
    assert calls == [(1, 2), (2, 2)] and "refitted 2 times" in notes[0]
    fit = fit_garch(h.take(np.arange(h.n) <= 400), "garch", GarchSettings(horizons=(21,)))
    assert fc.vol[400] == pytest.approx(fit.forward_vol(21), rel=1e-10)
    p = fit.params
    s2_next = fit.forward_vol(1) ** 2 / A  # variance of the return after bar 400
    r401 = math.log(h.close[401] / h.close[400])
    s2 = p["omega"] + p["alpha[1]"] * (r401 - p["mu"]) ** 2 + p["beta[1]"] * s2_next
    pers = p["alpha[1]"] + p["beta[1]"]
    vl = p["omega"] / (1 - pers)
    avg = vl + (s2 - vl) * (1 - pers**21) / ((1 - pers) * 21)
    assert fc.vol[401] == pytest.approx(math.sqrt(A * avg), rel=1e-10)
    assert np.isnan(fc.vol[399]) and np.isfinite(fc.vol[-1])


def test_garch_refits_can_be_cancelled():
    h = _close_only(_garch_returns(700, seed=26))
    answers = iter([False, True])
    with pytest.raises(HindsightCancelled, match="cancelled after 1 of 2 GARCH refits"):
        garch_forecast(h, 21, np.array([300, 500]), A, np.full(h.n, 0.3), cancel=lambda: next(answers))


def test_json_shape():
    rng = np.random.default_rng(27)
    h = _close_only(rng.standard_normal(400) * 0.01)
    d = hindsight(h, 10, windows=(20,)).as_dict()
    assert {"name", "days", "periods", "candidates", "best"} <= set(d)
    assert d["days"] == 10 and d["periods"] == h.n - 20 - 10  # as-of bars 20 .. n - 11
    keys = {"key", "label", "window", "bias", "rmse", "qlike", "coverage", "price_error", "dm_p_value"}
    assert all(keys <= set(c) for c in d["candidates"])
    assert d["candidates"][0]["key"] == d["best"] and d["candidates"][0]["dm_p_value"] is None
    assert {c["key"] for c in d["candidates"]} == {"close_to_close:20", "ewma"}
    assert d["unavailable"]["parkinson:20"] == "needs high/low columns"


@pytest.mark.parametrize("kwargs, match", [
    ({"days": 0}, "days must be a whole number of bars >= 1, got 0"),  # the one rule of volbench.validate
    ({"days": 2.5}, "days must be a whole number of bars >= 1, got 2.5"),
    ({"days": 21, "step": 0}, "step must be at least 1"),
    ({"days": 21, "windows": ()}, "windows must list at least one window"),
    ({"days": 21, "windows": (1,)}, "window must be >= 2 bars, got 1"),
    ({"days": 21, "keys": ("gk",)}, "unknown estimator 'gk'"),
    ({"days": 21, "windows": (190,)}, r"windows 190 and 21-bar periods needs at least 212 rows, history has 200"),
    ({"days": 21, "windows": (250,)}, r"no candidate can be computed \(close_to_close:250: window 250 needs 251 rows"),
])
def test_bad_settings_and_short_histories_are_refused(kwargs, match):
    rng = np.random.default_rng(28)
    h = _close_only(rng.standard_normal(199) * 0.01)
    days = kwargs.pop("days")
    with pytest.raises(VolbenchError, match=match):
        hindsight(h, days, keys=kwargs.pop("keys", ("close_to_close",)), **kwargs)
