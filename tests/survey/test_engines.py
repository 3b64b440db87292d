"""The survey engines: the same records whichever engine runs them, tasks, choice, progress, cancel."""

from __future__ import annotations

import json
import sys

import distributed  # the test extra installs it: a missing package fails here, never skips
import pytest
from threadpoolctl import threadpool_info

from volbench.cli import main
from volbench.errors import VolbenchError
from volbench.survey import (
    SCHEDULER_ENV,
    SurveyCancelled,
    SurveySettings,
    engines,
    plan_tasks,
    resolve_engine,
    run_survey,
    series,
)
from volbench.survey.engines import MAX_FILES_PER_TASK, TASKS_PER_WORKER


def records_only(result) -> str:
    """The survey JSON without how it was run (engine, workers, elapsed time)."""
    d = result.as_dict()
    for k in ("engine", "workers", "elapsed_s"):
        d.pop(k)
    return json.dumps(d, sort_keys=True)


@pytest.fixture
def folder(tmp_path, write_prices):
    for i in range(6):
        write_prices(f"s{i}.csv", 300 + 40 * i, 10 + i, sigma=0.15 + 0.03 * i)
    write_prices("long.csv", 280, 99, symbols=["x1", "x2", "s0"])
    (tmp_path / "broken.csv").write_text("date,close\n")
    return tmp_path


@pytest.fixture
def loopback_cluster():
    """A Dask cluster in this process (one worker thread) reached over TCP on the loopback address."""
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=False, host="127.0.0.1",
                                  protocol="tcp://", dashboard_address=None) as cluster:
        yield cluster


def test_process_pool_serial_and_dask_give_identical_json(folder, loopback_cluster):
    settings = SurveySettings.build(days=10, pricing_vol=0.2, with_garch=True)
    serial = run_survey([folder], settings, jobs=1)
    pool = run_survey([folder], settings, jobs=2)
    dask = run_survey([folder], settings, scheduler=loopback_cluster.scheduler_address)
    assert (serial.engine, pool.engine, dask.engine) == ("serial", "processes", "dask")
    assert (pool.workers, dask.workers) == (2, 1)
    assert records_only(serial) == records_only(pool) == records_only(dask)
    # files in folder order, series in file order; a name seen before gets its file's stem
    assert [r.name for r in pool.records] == ["broken", "x1", "x2", "s0", "s0 (s0)", "s1", "s2", "s3", "s4", "s5"]
    assert not pool.records[0].ok and pool.succeeded == 9
    assert [r.series for r in pool.records[3:5]] == ["s0", "s0"]  # the name to reopen each one by
    assert all(r.forward_vol is not None for r in pool.records if r.ok)


def test_the_cli_reaches_a_cluster_by_option_and_by_environment(capsys, monkeypatch, folder, loopback_cluster):
    address = loopback_cluster.scheduler_address
    code = main(["survey", str(folder), "--scheduler", address, "--format", "json"])
    by_option = json.loads(capsys.readouterr().out)
    monkeypatch.setenv(SCHEDULER_ENV, address)
    code2 = main(["survey", str(folder), "--format", "json"])
    by_env = json.loads(capsys.readouterr().out)
    code3 = main(["survey", str(folder), "--scheduler", "processes", "--jobs", "2", "--format", "json"])
    local = json.loads(capsys.readouterr().out)
    assert (code, code2, code3) == (0, 0, 0)
    assert by_option["engine"] == by_env["engine"] == "dask" and local["engine"] == "processes"
    assert by_option["series"] == by_env["series"] == local["series"]


def test_unreachable_scheduler_and_missing_extra_are_one_line_errors(monkeypatch, capsys, folder):
    monkeypatch.setattr(engines, "CONNECT_TIMEOUT", "1s")
    with pytest.raises(VolbenchError, match=r"cannot reach the Dask scheduler at tcp://127.0.0.1:9 .*dask scheduler"):
        run_survey([folder], SurveySettings(), scheduler="tcp://127.0.0.1:9")
    monkeypatch.setitem(sys.modules, "distributed", None)  # as if the cluster extra were not installed
    assert main(["survey", str(folder), "--scheduler", "local"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "pip install 'volbench[cluster]'" in err


def test_engine_choice():
    assert resolve_engine(None, None, {}) == ("processes", None)
    assert resolve_engine(3, None, {}) == ("processes", None)
    assert resolve_engine(None, None, {SCHEDULER_ENV: "tcp://h:8786"}) == ("dask", "tcp://h:8786")
    assert resolve_engine(None, "tcp://a:1", {SCHEDULER_ENV: "tcp://h:8786"}) == ("dask", "tcp://a:1")
    assert resolve_engine(2, "processes", {SCHEDULER_ENV: "tcp://h:8786"}) == ("processes", None)
    assert resolve_engine(2, "local", {}) == ("dask", "local")
    with pytest.raises(VolbenchError, match=r"--jobs sets the workers of this machine, but DASK_SCHEDULER_ADDRESS"):
        resolve_engine(2, None, {SCHEDULER_ENV: "tcp://h:8786"})
    with pytest.raises(VolbenchError, match=r"--jobs must be a whole number of workers >= 1, got 0"):
        resolve_engine(0, None, {})


@pytest.mark.parametrize("n, workers", [(1, 2), (7, 2), (500, 2), (10_000, 100), (3, 8)])
def test_task_plan_covers_every_file_once_in_balanced_tasks(n, workers):
    sizes = [(i * 7919) % 1000 + 1 for i in range(n)]
    tasks = plan_tasks([f"f{i}" for i in range(n)], workers, sizes)
    flat = sorted(i for t in tasks for i in t)
    assert flat == list(range(n))
    assert len(tasks) == min(n, max(workers * TASKS_PER_WORKER, -(-n // MAX_FILES_PER_TASK)))
    assert all(t == sorted(t) for t in tasks)
    loads = [sum(sizes[i] for i in t) for t in tasks]
    assert loads == sorted(loads, reverse=True)  # largest first
    # longest-processing-time bound (Graham 1969): no task exceeds the mean by more than the largest file
    assert max(loads) <= sum(sizes) / len(tasks) + max(sizes)


def test_progress_and_cancel(folder):
    seen = []
    run_survey([folder], SurveySettings(), jobs=2, progress=lambda d, t, name: seen.append((d, t)))
    assert seen[-1] == (8, 8) and [d for d, _ in seen] == sorted(d for d, _ in seen)
    calls = []
    with pytest.raises(SurveyCancelled, match=r"survey cancelled after 2 of 8 files") as info:
        run_survey([folder], SurveySettings(), jobs=1, progress=lambda *a: calls.append(a),
                   cancel=lambda: len(calls) >= 2)
    assert [r.name for r in info.value.records] == ["broken", "x1", "x2", "s0"]
    assert (info.value.done, info.value.total) == (2, 8)
    with pytest.raises(SurveyCancelled):
        run_survey([folder], SurveySettings(), jobs=2, cancel=lambda: True)


def test_tasks_run_with_blas_pinned_to_one_thread(monkeypatch, tmp_path):
    threads = []

    def spy(path, settings):
        threads.append({m["user_api"]: m["num_threads"] for m in threadpool_info()})
        return []

    monkeypatch.setattr(series, "survey_file", spy)
    series.survey_paths(["a.csv"], SurveySettings())
    assert threads and threads[0].get("blas", 1) == 1
