"""fit_many: worker processes give the serial results, report progress, and can be cancelled."""

from __future__ import annotations

import threading

import numpy as np
import pytest

from volbench.errors import VolbenchError
from volbench.models import FitCancelled, fit_many, fit_models
from volbench.settings import GarchSettings


@pytest.fixture
def series(arch_path):
    def _make(k, nobs=800):
        return [arch_path("garch", [0.02, 0.05, 0.08, 0.88], nobs, seed=100 + i, name=f"S{i}")[0] for i in range(k)]
    return _make


def _same(a, b):
    assert a.name == b.name and a.preferred == b.preferred
    for fa, fb in zip(a.fits, b.fits):
        assert fa.params == fb.params
        np.testing.assert_array_equal(fa.term_structure["vol"], fb.term_structure["vol"])


@pytest.mark.slow
def test_two_processes_give_the_serial_results_and_report_progress(series):
    hs = series(4)
    calls: list[tuple[int, int, str, int]] = []
    caller = threading.get_ident()
    par = fit_many(hs, GarchSettings(models=("garch", "egarch"), simulations=300, processes=2),
                   progress=lambda d, t, n: calls.append((d, t, n, threading.get_ident())))
    ser = [fit_models(h, GarchSettings(models=("garch", "egarch"), simulations=300)) for h in hs]
    for a, b in zip(par, ser):
        _same(a, b)
    assert [c[0] for c in calls] == [1, 2, 3, 4] and {c[1] for c in calls} == {4}
    assert sorted(c[2] for c in calls) == ["S0", "S1", "S2", "S3"]
    assert {c[3] for c in calls} == {caller}  # progress runs on the calling side


@pytest.mark.slow
def test_cancel_in_processes_keeps_what_finished(series):
    hs = series(6, nobs=2000)
    seen = []
    with pytest.raises(FitCancelled, match=r"GARCH fitting cancelled after \d of 6 series") as info:
        fit_many(hs, GarchSettings(models=("garch", "egarch"), processes=2), progress=lambda d, t, n: seen.append(n),
                 cancel=lambda: bool(seen))
    exc = info.value
    assert 1 <= exc.done < 6 and exc.total == 6
    finished = [(h, r) for h, r in zip(hs, exc.results) if r is not None]
    assert len(finished) == exc.done
    for h, r in finished:
        _same(r, fit_models(h, GarchSettings(models=("garch", "egarch"))))


def test_in_process_path_progress_and_cancel(series):
    hs = series(3, nobs=400)
    calls = []
    out = fit_many(hs, GarchSettings(models="garch", processes=1), progress=lambda d, t, n: calls.append((d, t, n)))
    assert calls == [(1, 3, "S0"), (2, 3, "S1"), (3, 3, "S2")]
    assert [r.name for r in out] == ["S0", "S1", "S2"]
    stop_after = iter([False, False, True])
    with pytest.raises(FitCancelled, match="cancelled after 2 of 3 series") as info:
        fit_many(hs, GarchSettings(models="garch", processes=1), cancel=lambda: next(stop_after))
    assert [r is not None for r in info.value.results] == [True, True, False]


def test_bad_input_is_refused_before_any_fit(series, make_history):
    hs = series(1, nobs=300)
    with pytest.raises(VolbenchError, match="processes must be a whole number >= 1 or None, got 0"):
        fit_many(hs, GarchSettings(processes=0))
    with pytest.raises(VolbenchError, match=r"short: 2 prices; a volatility needs at least 3 prices \(2 returns\)"):
        fit_many([*hs, make_history([1.0, 1.1], name="short")], GarchSettings(processes=1))
    with pytest.raises(VolbenchError, match="unknown distribution 'cauchy'"):
        fit_many(hs, GarchSettings(dist="cauchy"))
    assert fit_many([], GarchSettings(processes=2)) == []
