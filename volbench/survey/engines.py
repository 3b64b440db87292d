"""Run a survey: plan tasks of many files, hand them to an engine, gather the records in order.

Engines
-------
``serial``
    This process, file by file (one worker, or a single file).
``processes``
    A local pool of worker processes (:class:`concurrent.futures.ProcessPoolExecutor`), the
    default. Workers start by ``fork`` when that is safe, else ``forkserver``/``spawn``
    (:func:`volbench.models.batch.default_context`).
``dask``
    A Dask ``distributed`` cluster (the optional ``cluster`` extra): an existing scheduler at
    ``tcp://HOST:PORT``, or ``local`` for a ``LocalCluster`` started on this machine.

Every engine runs the same task function, :func:`volbench.survey.series.survey_paths`, on the
same task plan, so the records do not depend on the engine (only ``engine``, ``workers`` and
``elapsed_s`` of the result do). Workers receive file paths, never arrays: a task is a few
hundred bytes to send and each worker reads its own files.
"""

from __future__ import annotations

import heapq
import math
import os
import time
from collections.abc import Callable, Iterable, Mapping, Sequence
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from dataclasses import dataclass, replace
from pathlib import Path

from volbench.errors import Cancelled, VolbenchError
from volbench.survey.paths import expand_paths
from volbench.survey.record import SurveyRecord, failed
from volbench.survey.series import survey_files, survey_paths
from volbench.survey.settings import SurveySettings

Progress = Callable[[int, int, str], None]
"""``progress(files_done, files_total, last_file_name)``, called in the caller's thread."""
Cancel = Callable[[], bool]

ENGINES = ("serial", "processes", "dask")
SCHEDULER_ENV = "DASK_SCHEDULER_ADDRESS"
TASKS_PER_WORKER = 8
"""Tasks planned per worker: enough to even out uneven files and to show progress."""
MAX_FILES_PER_TASK = 50
"""Cap on files per task, so a large survey on few workers still reports progress often."""
POLL_SECONDS = 0.05
CONNECT_TIMEOUT = "10s"


class SurveyCancelled(Cancelled):
    """``cancel()`` returned True. ``records`` holds the finished series in input order."""

    def __init__(self, records: list[SurveyRecord], done: int, total: int) -> None:
        self.records, self.done, self.total = records, done, total
        super().__init__(f"survey cancelled after {done} of {total} files")


@dataclass(frozen=True)
class SurveyResult:
    """Every series of a survey, in input order, with how it was run.

    ``engine`` is one of :data:`ENGINES`; ``workers`` the number of worker processes (Dask:
    worker threads); ``elapsed_s`` the wall-clock time including starting the workers.
    """

    engine: str
    workers: int
    elapsed_s: float
    records: tuple[SurveyRecord, ...]
    settings: SurveySettings

    @property
    def succeeded(self) -> int:
        return sum(r.ok for r in self.records)

    @property
    def failed(self) -> int:
        return len(self.records) - self.succeeded

    def as_dict(self) -> dict:
        return {"engine": self.engine, "workers": self.workers, "elapsed_s": round(self.elapsed_s, 3),
                "settings": self.settings.as_dict(), "series": [r.as_dict() for r in self.records]}


# ---------------------------------------------------------------------------- engine choice
def resolve_engine(jobs: int | None, scheduler: str | None,
                   environ: Mapping[str, str] | None = None) -> tuple[str, str | None]:
    """Which engine runs a survey: ``(engine, scheduler address or "local" or None)``.

    ``scheduler`` wins over the ``DASK_SCHEDULER_ADDRESS`` environment variable; ``"processes"``
    forces the local pool even when the variable is set.

    Raises
    ------
    VolbenchError
        ``jobs`` not a whole number >= 1, or ``jobs`` given with an existing cluster (its workers
        are set where the cluster is started).
    """
    env = os.environ if environ is None else environ
    if jobs is not None and (isinstance(jobs, bool) or not isinstance(jobs, int) or jobs < 1):
        raise VolbenchError(f"--jobs must be a whole number of workers >= 1, got {jobs!r}")
    address = scheduler if scheduler is not None else (env.get(SCHEDULER_ENV) or None)
    if address is None or address.strip().lower() == "processes":
        return "processes", None
    address = address.strip()
    if address.lower() == "local":
        return "dask", "local"
    if jobs is not None:
        origin = "--scheduler" if scheduler is not None else SCHEDULER_ENV
        raise VolbenchError(f"--jobs sets the workers of this machine, but {origin} points at the cluster "
                            f"{address}, whose workers are set where it was started; leave out --jobs, or use "
                            "--scheduler local (a Dask cluster here) or --scheduler processes")
    return "dask", address


def default_workers() -> int:
    """CPUs this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not on Linux
        return max(1, os.cpu_count() or 1)


# ---------------------------------------------------------------------------- task plan
def plan_tasks(files: Sequence[str], workers: int, sizes: Sequence[int] | None = None) -> list[list[int]]:
    """Group file indices into tasks of similar total size, largest tasks first.

    About :data:`TASKS_PER_WORKER` tasks per worker and at most :data:`MAX_FILES_PER_TASK` files
    each; files are dealt largest first to the task with the fewest bytes so far (longest
    processing time first, Graham 1969), which keeps the last tasks short. Within a task files
    keep their input order.
    """
    n = len(files)
    if n == 0:
        return []
    if sizes is None:
        sizes = [_size(f) for f in files]
    k = min(n, max(workers * TASKS_PER_WORKER, math.ceil(n / MAX_FILES_PER_TASK)))
    heap = [(0, 0, t) for t in range(k)]  # (bytes, files, task): fewest bytes, then fewest files
    tasks: list[list[int]] = [[] for _ in range(k)]
    totals = [0] * k
    for i in sorted(range(n), key=lambda j: (-sizes[j], j)):
        total, count, t = heapq.heappop(heap)
        tasks[t].append(i)
        totals[t] = total + sizes[i]
        heapq.heappush(heap, (totals[t], count + 1, t))
    order = sorted(range(k), key=lambda t: (-totals[t], -len(tasks[t]), t))
    return [sorted(tasks[t]) for t in order if tasks[t]]


def _size(path: str) -> int:
    try:
        return os.path.getsize(path)
    except OSError:
        return 0


# ---------------------------------------------------------------------------- running
def run_survey(
    paths: Iterable[str | os.PathLike],
    settings: SurveySettings,
    *,
    jobs: int | None = None,
    scheduler: str | None = None,
    progress: Progress | None = None,
    cancel: Cancel | None = None,
    environ: Mapping[str, str] | None = None,
    mp_context=None,
) -> SurveyResult:
    """Survey every series in ``paths`` (files, folders, glob patterns).

    Parameters
    ----------
    paths
        As for :func:`volbench.survey.paths.expand_paths`.
    settings
        What to compute for each series.
    jobs
        Local worker processes (default: the CPUs this process may use, at most one per file);
        1 runs in this process. With ``scheduler="local"``, the Dask workers started here.
    scheduler
        ``None`` (use ``DASK_SCHEDULER_ADDRESS`` when set, else the process pool),
        ``"processes"``, ``"local"`` or a Dask scheduler address such as ``tcp://10.0.0.5:8786``.
    progress, cancel
        Called / polled in the caller's thread as tasks finish; ``cancel()`` returning True stops
        the survey with :class:`SurveyCancelled` (running tasks finish in the background).
    environ
        Environment to read ``DASK_SCHEDULER_ADDRESS`` from (default ``os.environ``).
    mp_context
        How the process pool starts its workers (default
        :func:`volbench.models.batch.default_context`: ``fork`` when safe).

    Returns
    -------
    SurveyResult
        One record per series, files in input order and series in file order; names made unique
        across files as :func:`volbench.data.load_many` does.

    Raises
    ------
    VolbenchError
        Bad ``jobs``/``scheduler``, the Dask engine asked for without ``distributed`` installed,
        or a scheduler that cannot be reached. Bad files and series never raise: they are records.
    """
    start = time.perf_counter()
    engine, address = resolve_engine(jobs, scheduler, environ)
    entries = expand_paths(paths)
    files = [e for e in entries if isinstance(e, str)]
    slots: list[list[SurveyRecord] | None] = [None] * len(files)
    if engine == "processes":
        workers = min(jobs or default_workers(), max(len(files), 1))
        if workers <= 1:
            engine, workers = "serial", 1
            _run_serial(files, settings, slots, progress, cancel)
        else:
            _run_processes(files, settings, workers, slots, progress, cancel, mp_context)
    else:
        workers = _run_dask(files, settings, address, jobs, slots, progress, cancel)
    records = _assemble(entries, slots)
    return SurveyResult(engine, workers, time.perf_counter() - start, tuple(records), settings)


def _assemble(entries: list, slots: list) -> list[SurveyRecord]:
    out: list[SurveyRecord] = []
    seen: set[str] = set()
    it = iter(slots)
    for e in entries:
        for r in ([e] if isinstance(e, SurveyRecord) else next(it) or []):
            if r.ok and r.name in seen:  # the rule of volbench.data.load_many
                r = replace(r, name=f"{r.name} ({Path(r.source).stem})")
            seen.add(r.name)
            out.append(r)
    return out


def _partial(entries_files: list[str], slots: list) -> list[SurveyRecord]:
    return [r for s in slots if s for r in s]


def _task_failed(files: Sequence[str], idx: Sequence[int], exc: BaseException, engine: str) -> dict[int, list]:
    why = f"{type(exc).__name__}: {exc}" if str(exc) else type(exc).__name__
    return {i: [failed(Path(files[i]).stem, files[i], f"{files[i]}: the {engine} worker running this file "
                       f"failed ({why}); the other files were surveyed")] for i in idx}


def _run_serial(files, settings, slots, progress, cancel) -> None:
    from threadpoolctl import threadpool_limits

    with threadpool_limits(limits=1):  # as survey_paths does per task; set once for the whole run
        for i, f in enumerate(files):
            if cancel is not None and cancel():
                raise SurveyCancelled(_partial(files, slots), i, len(files))
            slots[i] = survey_files([f], settings)[0]
            if progress is not None:
                progress(i + 1, len(files), Path(f).name)


def _run_processes(files, settings, workers, slots, progress, cancel, mp_context) -> None:
    from volbench.models.batch import default_context

    tasks = plan_tasks(files, workers)
    pool = ProcessPoolExecutor(max_workers=workers, mp_context=mp_context or default_context())
    done = 0
    try:
        index = {pool.submit(survey_paths, [files[i] for i in t], settings): t for t in tasks}
        pending = set(index)
        while pending:
            if cancel is not None and cancel():
                pool.shutdown(wait=False, cancel_futures=True)
                raise SurveyCancelled(_partial(files, slots), done, len(files))
            finished, pending = wait(pending, timeout=POLL_SECONDS, return_when=FIRST_COMPLETED)
            for fut in finished:
                t = index[fut]
                try:
                    for i, recs in zip(t, fut.result()):
                        slots[i] = recs
                except Exception as exc:  # noqa: BLE001 - a crashed worker fails its files, not the survey
                    for i, recs in _task_failed(files, t, exc, "process").items():
                        slots[i] = recs
                done += len(t)
                if progress is not None:
                    progress(done, len(files), Path(files[t[-1]]).name)
    except BaseException:
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    pool.shutdown(wait=True)


def _import_distributed():
    try:
        import distributed
    except ImportError:
        raise VolbenchError("the Dask engine needs the optional 'distributed' package: "
                            "pip install 'volbench[cluster]' (or leave out --scheduler and unset "
                            f"{SCHEDULER_ENV} to use this machine's processes)") from None
    return distributed


def _run_dask(files, settings, address, jobs, slots, progress, cancel) -> int:
    distributed = _import_distributed()
    cluster = None
    try:
        if address == "local":
            n = jobs or default_workers()
            cluster = distributed.LocalCluster(n_workers=n, threads_per_worker=1, processes=True,
                                               host="127.0.0.1", dashboard_address=None)
            client = distributed.Client(cluster)
        else:
            try:
                client = distributed.Client(address, timeout=CONNECT_TIMEOUT, set_as_default=False)
            except (OSError, TimeoutError, ValueError) as exc:
                raise VolbenchError(f"cannot reach the Dask scheduler at {address} ({exc}); check the address "
                                    "(tcp://HOST:PORT) and that 'dask scheduler' runs there") from None
        try:
            workers = sum(client.nthreads().values())
            if workers < 1:
                raise VolbenchError(f"the Dask scheduler at {address} has no workers; start some with "
                                    f"'dask worker {address}'")
            _gather_dask(distributed, client, files, settings, workers, slots, progress, cancel)
        finally:
            client.close()
    finally:
        if cluster is not None:
            cluster.close()
    return workers


def _gather_dask(distributed, client, files, settings, workers, slots, progress, cancel) -> None:
    tasks = plan_tasks(files, workers)
    futures = [client.submit(survey_paths, [files[i] for i in t], settings, pure=False) for t in tasks]
    index = {f.key: t for f, t in zip(futures, tasks)}
    ac = distributed.as_completed(futures, loop=client.loop)
    done = 0
    while not ac.is_empty():
        if cancel is not None and cancel():
            client.cancel(futures)
            raise SurveyCancelled(_partial(files, slots), done, len(files))
        batch = ac.next_batch(block=False)
        if not batch:
            time.sleep(POLL_SECONDS)
            continue
        for fut in batch:
            t = index[fut.key]
            try:
                for i, recs in zip(t, fut.result()):
                    slots[i] = recs
            except Exception as exc:  # noqa: BLE001 - a lost worker fails its files, not the survey
                for i, recs in _task_failed(files, t, exc, "Dask").items():
                    slots[i] = recs
            done += len(t)
            if progress is not None:
                progress(done, len(files), Path(files[t[-1]]).name)
