"""Volatility cone: percentiles, current value and rank, Hodges-Tompkins, placement, ranges, errors."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from volbench.errors import VolbenchError
from volbench.estimators import rolling_vol
from volbench.pricing.cone import (
    DEFAULT_CONE_WINDOWS,
    PERCENTILES,
    hodges_tompkins_factor,
    percentile_rank,
    select_range,
    vol_cone,
)


@pytest.fixture
def gbm(make_history):
    def _make(n=800, sigma=0.25, seed=7):
        rng = np.random.default_rng(seed)
        r = rng.standard_normal(n - 1) * sigma / math.sqrt(252)
        return make_history(100 * np.exp(np.concatenate(([0.0], np.cumsum(r)))))
    return _make


def test_percentiles_match_numpy_on_pandas_rolling_std(gbm):
    # Reference libraries: pandas rolling std (divisor n - 1) for the rolling close-to-close vol,
    # numpy.percentile (linear) for the cone columns (Burghardt & Lane 1990 define the cone).
    h = gbm()
    cone = vol_cone(h)
    r = pd.Series(np.diff(np.log(h.close)))
    assert cone.windows == DEFAULT_CONE_WINDOWS
    for w in DEFAULT_CONE_WINDOWS:
        ref = (r.rolling(w).std() * math.sqrt(252)).dropna().to_numpy()
        row = cone.table.loc[w]
        expected = np.percentile(ref, list(PERCENTILES.values()))
        np.testing.assert_allclose(row[list(PERCENTILES)].to_numpy(float), expected, rtol=1e-10)
        assert row["min"] == pytest.approx(ref.min(), rel=1e-10)
        assert row["max"] == pytest.approx(ref.max(), rel=1e-10)
        assert row["mean"] == pytest.approx(ref.mean(), rel=1e-10)
        assert row["current"] == pytest.approx(ref[-1], rel=1e-10)
        assert row["n_windows"] == len(ref) == (h.n - 1) - w + 1
        assert row["n_independent"] == (h.n - 1) // w


def test_percentiles_match_numpy_on_rolling_vol_for_range_estimator(simulate_ohlc):
    # Reference library: numpy.percentile on the rolling series from volbench.estimators.rolling_vol.
    h = simulate_ohlc(400, 0.3, seed=3, steps=20)
    cone = vol_cone(h, "parkinson", (5, 21, 63), annualization=365)
    for w in (5, 21, 63):
        vals = rolling_vol(h, "parkinson", w, annualization=365).values.to_numpy()
        np.testing.assert_allclose(cone.table.loc[w, list(PERCENTILES)].to_numpy(float),
                                   np.percentile(vals, list(PERCENTILES.values())), rtol=1e-12)
        assert cone.table.loc[w, "n_independent"] == h.n // w  # range estimators use every bar
    assert cone.annualization == 365


def test_current_percentile_inverts_numpy_percentile(gbm):
    # Common practice, no source: the rank is the p with numpy.percentile(values, p) == value.
    cone = vol_cone(gbm(seed=11))
    for w in cone.windows:
        vals = cone.rolling[w].to_numpy()
        p = cone.table.loc[w, "current_percentile"]
        assert 0 <= p <= 100
        assert np.percentile(vals, p) == pytest.approx(vals[-1], rel=1e-10)


def test_percentile_rank_edges_and_ties():
    x = np.array([0.1, 0.2, 0.2, 0.2, 0.5])
    assert percentile_rank(x, 0.05) == 0.0
    assert percentile_rank(x, 0.9) == 100.0
    assert percentile_rank(x, 0.1) == 0.0
    assert percentile_rank(x, 0.5) == 100.0
    assert percentile_rank(x, 0.2) == pytest.approx(50.0)  # middle of the tied run (positions 1..3)
    assert percentile_rank(x, 0.35) == pytest.approx(87.5)  # halfway between positions 3 and 4 of 0..4
    assert np.percentile(x, 87.5) == pytest.approx(0.35)
    np.testing.assert_allclose(percentile_rank(x, np.array([0.05, 0.35])), [0.0, 87.5])


@pytest.mark.parametrize("w,n", [(10, 1502), (20, 281), (250, 1262), (60, 60), (3, 2)])
def test_hodges_tompkins_factor_equals_paper_formula(w, n):
    # Hodges & Tompkins (2002), J. of Derivatives 10(1) (formula from the paper as recalled, from memory):
    # m = 1 / sqrt(1 - h/n + (h^2 - 1) / (3 n^2)), n the number of overlapping windows, h <= n.
    assert hodges_tompkins_factor(w, n) == pytest.approx(1 / math.sqrt(1 - w / n + (w * w - 1) / (3 * n * n)),
                                                        rel=1e-14)


def test_hodges_tompkins_factor_short_sample_case_is_continuous():
    # Our derivation for n < h, ratio (n^2 - 1) / (3 h n); it must meet the paper's formula at n = h.
    assert hodges_tompkins_factor(50, 21) == pytest.approx(1 / math.sqrt((21**2 - 1) / (3 * 50 * 21)), rel=1e-14)
    assert hodges_tompkins_factor(50, 49) == pytest.approx(hodges_tompkins_factor(50, 50), rel=0.02)
    assert hodges_tompkins_factor(20, 10**7) == pytest.approx(1.0, abs=1e-5)
    with pytest.raises(VolbenchError, match="needs window >= 1 and at least 2 overlapping windows, got window 20 and 1"):
        hodges_tompkins_factor(20, 1)


@pytest.mark.parametrize("h,T", [(20, 300), (50, 70)])
def test_hodges_tompkins_factor_by_simulation(h, T):
    # Theory: the n = T - h + 1 overlapping means X_i of h i.i.d. squared N(0,1) returns each have
    # variance V = 2/h; their dispersion about their own mean (divisor n) has expectation V / m^2.
    # Averaging over 4,000 seeded paths estimates that ratio to about 1%.
    rng = np.random.default_rng(2002)
    z2 = rng.standard_normal((4000, T)) ** 2
    c = np.concatenate((np.zeros((4000, 1)), np.cumsum(z2, axis=1)), axis=1)
    x = (c[:, h:] - c[:, :-h]) / h
    disp = x.var(axis=1, ddof=0)
    ratio = disp.mean() / (2.0 / h)
    se = disp.std(ddof=1) / math.sqrt(len(disp)) / (2.0 / h)
    expected = hodges_tompkins_factor(h, T - h + 1) ** -2
    assert abs(ratio - expected) < 4 * se
    assert abs(ratio - 1.0) > 8 * se  # the overlap effect is real at these sizes


def test_hodges_tompkins_columns_stretch_around_the_mean(gbm):
    # Adjusted = mean + factor x (value - mean), floored at 0 (documented construction).
    h = gbm(n=300)
    raw = vol_cone(h, windows=(10, 60, 200))
    adj = vol_cone(h, windows=(10, 60, 200), hodges_tompkins=True)
    assert "ht_factor" not in raw.table and "p50_adj" not in raw.table
    for w in (10, 60, 200):
        row = adj.table.loc[w]
        f = hodges_tompkins_factor(w, int(row["n_windows"]))
        assert row["ht_factor"] == pytest.approx(f)
        for k in PERCENTILES:
            assert row[f"{k}_adj"] == pytest.approx(max(0.0, row["mean"] + f * (row[k] - row["mean"])), rel=1e-12)
        assert row["p10_adj"] <= row["p10"] and row["p90_adj"] >= row["p90"]
    assert any("window 200: only 1 independent" in n for n in adj.notes)


def test_place_interpolates_between_bracketing_windows(gbm):
    # Common practice, no source: linear interpolation in days between the two cone columns.
    cone = vol_cone(gbm(n=1000))
    v = 0.27
    r20, r40 = cone.rank(v, 20), cone.rank(v, 40)
    assert cone.percentile_of(v, 20) == pytest.approx(r20)
    assert cone.percentile_of(v, 30) == pytest.approx(0.5 * r20 + 0.5 * r40)
    pl = cone.place(v, 25)
    assert pl.percentile == pytest.approx(0.75 * r20 + 0.25 * r40)
    assert pl.windows == (20, 40) and pl.weights == pytest.approx((0.75, 0.25)) and not pl.clamped
    assert pl.note == "25-bar close-to-close vol, interpolated between the 20- and 40-bar cone columns"


def test_place_clamps_outside_the_windows(gbm):
    cone = vol_cone(gbm(n=1000))
    short = cone.place(0.2, 5)
    assert short.clamped and short.windows == (10,) and short.percentile == pytest.approx(cone.rank(0.2, 10))
    assert "option life of 5 bars is shorter than the shortest cone window, so the 10-bar column is used" in short.note
    long = cone.place(0.2, 400)
    assert long.clamped and long.windows == (250,)
    assert "longer than the longest cone window" in long.note
    assert cone.percentile_of(10.0, 30) == 100.0
    assert cone.percentile_of(1e-4, 30) == 0.0


def test_place_uses_the_adjusted_distribution_under_hodges_tompkins(gbm):
    h = gbm(n=400)
    cone = vol_cone(h, windows=(20, 120), hodges_tompkins=True)
    row = cone.table.loc[120]
    # the adjusted p75 sits at the 75th percentile of the adjusted distribution
    assert cone.percentile_of(row["p75_adj"], 120) == pytest.approx(75.0, abs=1e-9)
    assert cone.place(0.25, 120).adjusted
    assert "Hodges-Tompkins adjusted" in cone.place(0.25, 120).note


@pytest.mark.parametrize("vol,days,message", [
    (0, 20, "vol must be a positive decimal such as 0.25, got 0"),
    (-0.1, 20, "vol must be a positive decimal such as 0.25, got -0.1"),
    (0.2, 0, "days must be a whole number of bars >= 1, got 0"),
    (0.2, 2.5, "days must be a whole number of bars >= 1, got 2.5"),
    (0.2, "thirty", "days must be a whole number of bars >= 1, got 'thirty'"),
])
def test_place_validation(gbm, vol, days, message):
    cone = vol_cone(gbm(n=300), windows=(10, 20))
    with pytest.raises(VolbenchError, match=message):
        cone.place(vol, days)


def test_rank_unknown_window(gbm):
    with pytest.raises(VolbenchError, match="window 30 is not in this cone; windows: 10, 20"):
        vol_cone(gbm(n=300), windows=(10, 20)).rank(0.2, 30)


def test_date_range_selects_rows_inclusive(gbm):
    h = gbm(n=600)
    start, end = "2020-06-01", "2021-03-31"
    cone = vol_cone(h, windows=(10, 40), start=start, end=end)
    dates = pd.DatetimeIndex(h.dates)
    mask = (dates >= start) & (dates <= end)
    ref = vol_cone(h.take(np.asarray(mask)), windows=(10, 40))
    pd.testing.assert_frame_equal(cone.table, ref.table)
    assert cone.start == "2020-06-01" and cone.end == "2021-03-31" and cone.rows == int(mask.sum())
    only_start = vol_cone(h, windows=(10,), start="2021-01-04")
    assert only_start.start == "2021-01-04" and only_start.end == h.last_date


def test_short_range_drops_windows_with_reasons(gbm):
    h = gbm(n=600)
    cone = vol_cone(h, start="2020-01-01", end="2020-05-29")  # 108 business days
    assert cone.windows == (10, 20, 40, 60)
    assert cone.dropped == {120: "window 120 needs 121 rows, history has 108",
                            250: "window 250 needs 251 rows, history has 108"}
    one = vol_cone(h.take(np.arange(h.n) < 61), windows=(10, 60))
    assert one.dropped[60] == ("window 60 gives 1 rolling value; a cone column needs at least 2, "
                               "i.e. 62 rows, history has 61")


@pytest.mark.parametrize("kwargs,message", [
    ({"estimator": "gk"}, "unknown estimator 'gk'; choose one of: close_to_close"),
    ({"windows": (1, 20)}, "window must be >= 2 bars, got 1"),
    ({"windows": (20, 10, 20)}, "cone windows must not repeat; 20 given twice"),
    ({"windows": ()}, "windows must be a non-empty list of bar counts"),
    ({"windows": 20}, "windows must be a non-empty list of bar counts"),
    ({"windows": (10, "all")}, "cone windows must be bar counts, not 'all'"),
    ({"annualization": 0}, "annualization must be > 0 bars per year"),
    ({"start": "2021-05-01", "end": "2021-01-01"}, "start date 2021-05-01 is after end date 2021-01-01"),
    ({"start": "yesterday-ish"}, "start date must look like YYYY-MM-DD, got 'yesterday-ish'"),
    ({"start": "2030-01-01"}, "test: no rows between 2030-01-01 and the end; the file covers 2020-01-01 to"),
    ({"windows": (500, 600)}, (r"test: no cone window fits the 300 rows .*\(window 500 needs 501 rows, "
                               r"history has 300; window 600 needs 601 rows, history has 300\); "
                               r"use shorter windows or a longer range")),
    ({"estimator": "parkinson"}, (r"no Parkinson cone: the Parkinson estimator needs high/low columns and this "
                                  r"series has close only; choose one it supports \(Close-to-close, EWMA")),
])
def test_errors_are_clear(gbm, kwargs, message):
    with pytest.raises(VolbenchError, match=message):
        vol_cone(gbm(n=300), **kwargs)


def test_select_range_whole_history_is_identity(gbm):
    h = gbm(n=50)
    assert select_range(h) is h
    assert select_range(h, "2000-01-01", h.last_date) is h
    with pytest.raises(VolbenchError, match=r"end date 2100-01-01 is outside the data, which runs from"):
        select_range(h, "2000-01-01", "2100-01-01")
    with pytest.raises(VolbenchError, match=r"end date must look like YYYY-MM-DD, got '31/12/2021'"):
        select_range(h, None, "31/12/2021")


def test_ewma_cone_carries_a_note(gbm):
    cone = vol_cone(gbm(n=300), "ewma", (10, 20))
    assert any(n.startswith("EWMA weighs every past return") for n in cone.notes)


def test_as_dict_is_json_safe(gbm):
    import json

    d = vol_cone(gbm(n=300), hodges_tompkins=True).as_dict()
    text = json.dumps(d, allow_nan=False)
    assert d["windows"][0]["window"] == 10 and "p50_adj" in d["windows"][0]
    assert d["dropped"] == {} and d["windows"][-1]["window"] == 250 and "NaN" not in text
    assert d["adjustment"].startswith("adjusted = mean + ht_factor")


def test_percentiles_and_rank_without_sorting_equal_numpy_and_the_sorted_rank():
    # Reference library: numpy.percentile (linear) to the last bit; the O(n) rank equals
    # percentile_rank on the sorted sample to the last bit (same arithmetic), ties and ends included.
    from volbench.pricing.cone import percentiles, rank_unsorted

    rng = np.random.default_rng(12)
    qs = np.array([0, 10, 25, 50, 75, 90, 100.0])
    for m in (2, 3, 7, 250, 5021):
        x = rng.lognormal(-1.5, 0.3, m)
        if m > 3:
            x[::5] = x[1]  # ties
        np.testing.assert_array_equal(percentiles(x, qs), np.percentile(x, qs))
        xs = np.sort(x)
        for v in (x[0], x[1], x[-1], xs[0], xs[-1], xs[0] * 0.9, xs[-1] * 1.1, float(np.median(x)),
                  float(x.mean()), float(rng.choice(x)) * 1.0001):
            assert rank_unsorted(x, v) == percentile_rank(xs, v), (m, v)
            assert percentile_rank(xs, v) == float(percentile_rank(xs, np.array([v]))[0])


def test_place_in_cone_equals_the_cones_own_placement(gbm, make_history):
    # Same rolling series, window rules and ranks without the percentile table: identical numbers
    # and notes (common practice, no source), also when windows are dropped or the life is outside.
    from volbench.pricing.cone import place_in_cone

    h = gbm(700, seed=11)
    for windows in (DEFAULT_CONE_WINDOWS, (5, 30, 500, 900)):
        cone = vol_cone(h, windows=windows)
        for days in (3, 5, 21, 30, 100, 2000):
            got = place_in_cone(h, (0.21, None, 0.4), days, windows=windows)
            assert got[1] is None
            assert got[0] == cone.place(0.21, days) and got[2] == cone.place(0.4, days)
    short = gbm(9)
    with pytest.raises(VolbenchError, match="no cone window fits the 9 rows") as exc:
        place_in_cone(short, (0.2,), 21)
    with pytest.raises(VolbenchError) as same:
        vol_cone(short)
    assert str(exc.value) == str(same.value)
    with pytest.raises(VolbenchError, match="vol must be a positive decimal"):
        place_in_cone(h, (-0.1,), 21)
