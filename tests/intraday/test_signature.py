"""The signature plot: flat without noise, rising with bid-ask noise, and the suggested interval."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from volbench.errors import VolbenchError
from volbench.intraday.signature import signature_plot

ANNUAL_VAR = 0.2**2


def _noise_share(k, half_spread, bars=390):
    """Theoretical share of 2 n(k) omega^2 in E[RV(k)] = IV + 2 n(k) omega^2, omega = half-spread
    (Zhang, Mykland & Ait-Sahalia 2005; Bandi & Russell 2008; from memory)."""
    iv = ANNUAL_VAR / 252
    noise = 2 * math.ceil(bars / k) * half_spread**2
    return noise / (iv + noise)


def test_flat_without_noise_and_last_point_is_close_to_close(sim_intraday):
    h = sim_intraday(252, 78, 0.2, 31, overnight_share=0.2)
    s = signature_plot(h)
    t = s.table
    assert list(t["interval_seconds"]) == [300.0 * k for k in range(1, 13)] + [86400.0]
    assert list(t["kind"]) == ["intraday"] * 12 + ["close_to_close"]
    # without noise every point has the same expectation (Andersen, Bollerslev, Diebold & Labys 2000)
    np.testing.assert_allclose(t["annualized_vol"], 0.2, rtol=0.06)
    assert s.suggested_sampling_bars == 1 and s.suggested_interval_seconds == 300.0
    assert s.reason.startswith("flat")
    # the last point, computed directly: sqrt(252 x mean squared close-to-close return), same days
    closes = np.log(h.close[77::78])
    assert t["annualized_vol"].iloc[-1] == pytest.approx(math.sqrt(252 * np.mean(np.diff(closes) ** 2)), rel=1e-12)
    assert s.days == 251 and len(s.as_dict()["points"]) == 13


@pytest.mark.parametrize("half_spread, seed", [(0.0002, 32), (0.0004, 33)])
def test_planted_noise_makes_it_rise_and_the_suggestion_is_where_noise_stops_mattering(
        sim_intraday, half_spread, seed):
    # 60 days of 1-minute bars, trades at +-half_spread around a 20 % Brownian price (bid-ask bounce)
    h = sim_intraday(60, 390, 0.2, seed, bar_seconds=60, half_spread=half_spread)
    s = signature_plot(h)
    vol = s.table.set_index("sampling_bars")["annualized_vol"]
    assert vol[1] > vol[30] and vol[1] > vol[60]
    # at one minute the rise matches the theory: vol^2 ~ (IV + 2 n omega^2) x 252
    assert vol[1] ** 2 / ANNUAL_VAR - 1 == pytest.approx(_noise_share(1, half_spread) / (1 - _noise_share(1, half_spread)),
                                                         rel=0.35)
    assert s.noise_t > 2.33 and s.noise_variance == pytest.approx(half_spread**2, rel=0.25)
    k = s.suggested_sampling_bars
    # suggested where the planted noise no longer matters (at most ~2-3 % of variance), and not
    # far beyond: one minute shorter it still makes up more than 1 %
    assert _noise_share(k, half_spread) <= 0.03
    assert _noise_share(k - 1, half_spread) > 0.01
    assert "rises toward short intervals" in s.reason and f"from {k}-minute on" in s.reason


def test_smoothed_prices_make_it_fall(sim_intraday):
    # prices averaged over three ticks are positively autocorrelated: RV falls toward short intervals
    h = sim_intraday(60, 390, 0.2, 34, bar_seconds=60, with_open=False)
    lc = np.log(h.close)
    smooth = np.exp(np.convolve(lc, np.ones(3) / 3, mode="full")[: lc.size])
    smooth[:2] = h.close[:2]
    s = signature_plot(replace(h, close=smooth))
    assert s.noise_t < -2.33 and s.suggested_sampling_bars > 1
    assert "falls toward short intervals" in s.reason


def test_hourly_bars_cannot_judge_noise(sim_intraday):
    s = signature_plot(sim_intraday(30, 7, 0.2, 35, bar_seconds=3600))
    assert len(s.table) == 2 and s.suggested_sampling_bars == 1
    assert "only one sampling interval" in s.reason


def test_daily_history_is_refused(make_history):
    with pytest.raises(VolbenchError, match="the signature plot needs intraday bars"):
        signature_plot(make_history(100 * np.exp(np.linspace(0, 0.1, 30))))
