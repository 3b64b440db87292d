"""Background work: newest request wins, cancel stops and forgets, errors come back as signals,
and the synchronous switch runs jobs inline."""

from __future__ import annotations

import threading

import pytest

from volbench.errors import VolbenchError
from volbench.gui.controller import DEPENDS
from volbench.gui.jobs import depends_on_view, jobs_for
from volbench.gui.workers import Cancelled, Dispatcher


@pytest.fixture
def dispatcher(qtbot):
    d = Dispatcher()
    yield d
    d.cancel()
    d.wait(5000)


def test_result_arrives_in_the_gui_thread_by_queued_signal(dispatcher, qtbot):
    main = threading.get_ident()
    seen = {}

    def job(progress, cancel):
        seen["worker"] = threading.get_ident()
        progress(1, 2, "half")
        return 42

    with qtbot.waitSignal(dispatcher.result, timeout=5000) as blocker:
        dispatcher.submit("x", job)
    assert blocker.args == ["x", 42]
    assert seen["worker"] != main


def test_a_superseded_request_is_dropped_and_told_to_cancel(dispatcher, qtbot):
    release = threading.Event()
    saw_cancel = threading.Event()

    def slow(progress, cancel):
        release.wait(5)
        if cancel():
            saw_cancel.set()
        return "old"

    results = []
    dispatcher.result.connect(lambda kind, value: results.append(value))
    dispatcher.submit("fit", slow)
    with qtbot.waitSignal(dispatcher.result, timeout=5000):
        dispatcher.submit("fit", lambda p, c: "new")
        release.set()
    dispatcher.wait(5000)
    qtbot.wait(50)  # let any stray queued result arrive
    assert results == ["new"]
    assert saw_cancel.is_set()


def test_cancel_forgets_the_result_and_reports_not_busy(dispatcher, qtbot):
    release = threading.Event()
    results = []
    dispatcher.result.connect(lambda kind, value: results.append(value))
    dispatcher.submit("fit", lambda p, c: release.wait(5) and "late")
    assert dispatcher.is_running("fit")
    with qtbot.waitSignal(dispatcher.busy, timeout=2000) as blocker:
        dispatcher.cancel("fit")
    assert blocker.args == [False]
    release.set()
    dispatcher.wait(5000)
    qtbot.wait(50)
    assert results == []


def test_errors_come_back_as_a_signal_and_cancelled_is_silent(qtbot):
    d = Dispatcher(synchronous=True)
    errors = []
    d.error.connect(lambda kind, exc: errors.append((kind, str(exc))))

    def bad(p, c):
        raise VolbenchError("window must be >= 2, got 1")

    def stopped(p, c):
        raise Cancelled()

    d.submit("a", bad)
    d.submit("b", stopped)
    assert errors == [("a", "window must be >= 2, got 1")]
    assert not d.is_running()


def test_synchronous_mode_runs_the_job_before_submit_returns(qtbot):
    d = Dispatcher(synchronous=True)
    got = []
    d.result.connect(lambda kind, value: got.append(value))
    d.progress.connect(lambda kind, done, total, text: got.append((done, total, text)))
    d.submit("x", lambda progress, cancel: progress(1, 1, "done") or threading.get_ident())
    assert got == [(1, 1, "done"), threading.get_ident()]


EVERYTHING = ["rolling", "estimates", "cone", "life", "placement", "scaling", "garch", "forward", "quotes", "events",
              "comparison", "market", "bands", "implied", "promise", "hindsight"]
AFTER_COMPARISON = ["comparison", "market", "bands", "implied", "promise"]


@pytest.mark.parametrize(("changed", "expected"), [
    ({"window"}, ["rolling", "estimates", *AFTER_COMPARISON]),  # one window per screen (linked)
    ({"linked"}, AFTER_COMPARISON),
    ({"ewma_lambda"}, ["rolling", "estimates", *AFTER_COMPARISON]),
    ({"hodges_tompkins"}, ["cone", "placement", *AFTER_COMPARISON]),
    ({"days"}, ["life", "placement", "forward", "quotes", "events", *AFTER_COMPARISON, "hindsight"]),
    ({"expiry"}, ["life", "placement", "forward", "quotes", "events", *AFTER_COMPARISON, "hindsight"]),
    ({"premium"}, ["implied"]),
    ({"quotes_file"}, ["quotes", *AFTER_COMPARISON]),
    ({"pricing_vol"}, ["placement", *AFTER_COMPARISON]),
    ({"garch_dist"}, ["garch", "forward", "events", *AFTER_COMPARISON]),
    ({"annualization"}, [k for k in EVERYTHING if k != "life"]),  # the life counts days, not bars a year
    ({"exclude_flagged"}, EVERYTHING),
    ({"estimators"}, []),
    ({"cone_estimator"}, ["cone", "placement", "quotes", *AFTER_COMPARISON]),
    ({"events_file"}, ["events", *AFTER_COMPARISON, "hindsight"]),
])
def test_a_change_recomputes_only_what_depends_on_it(changed, expected):
    assert jobs_for(frozenset(changed)) == expected


def test_every_result_depends_on_the_history():
    assert all(depends_on_view(kind) for kind in DEPENDS)
