"""Fit many series in worker processes, with progress reporting and cancellation.

GARCH fits are CPU-bound and hold the GIL, so batches run in processes
(:class:`concurrent.futures.ProcessPoolExecutor`), not threads. The caller's thread receives the
results, calls ``progress`` after each series and polls ``cancel`` while it waits; a GUI runs
:func:`fit_many` in a worker thread and a CLI runs it directly.
"""

from __future__ import annotations

import multiprocessing
import os
import sys
import threading
from collections.abc import Callable, Sequence
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait

import numpy as np

from volbench.data.history import PriceHistory
from volbench.errors import Cancelled, VolbenchError
from volbench.models.ranking import GarchComparison, fit_models
from volbench.settings import GarchSettings
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization

Progress = Callable[[int, int, str], None]
Cancel = Callable[[], bool]

POLL_SECONDS = 0.05
"""How often ``cancel`` is polled while waiting for workers."""


class FitCancelled(Cancelled):
    """Raised by :func:`fit_many` when ``cancel()`` returned True.

    Attributes
    ----------
    results
        One entry per input history, in input order: the finished :class:`GarchComparison`, or
        ``None`` for series not fitted.
    done, total
        Series finished and series asked for.
    """

    def __init__(self, results: list[GarchComparison | None]) -> None:
        self.results = results
        self.done = sum(r is not None for r in results)
        self.total = len(results)
        super().__init__(f"GARCH fitting cancelled after {self.done} of {self.total} series")


def _fit_one(history: PriceHistory, settings: GarchSettings, annualization: float) -> GarchComparison:
    return fit_models(history, settings, annualization=annualization)


def default_context() -> multiprocessing.context.BaseContext:
    """How worker processes start.

    ``fork`` (fast: no re-import) only when it is safe: the platform has it, the caller is the
    main thread, no other Python thread runs and no Qt binding is loaded (forking a process whose
    other threads hold locks can deadlock the child). Otherwise ``forkserver`` where available,
    else ``spawn``; both start clean interpreters that import volbench (a second or more each).
    """
    methods = multiprocessing.get_all_start_methods()
    single = threading.current_thread() is threading.main_thread() and threading.active_count() == 1
    gui = any(m in sys.modules for m in ("PySide6", "PyQt5", "PyQt6"))
    if "fork" in methods and single and not gui:
        return multiprocessing.get_context("fork")
    return multiprocessing.get_context("forkserver" if "forkserver" in methods else "spawn")


def fit_many(
    histories: Sequence[PriceHistory],
    settings: GarchSettings | None = None,
    *,
    annualization: float = DEFAULT_ANNUALIZATION,
    progress: Progress | None = None,
    cancel: Cancel | None = None,
    mp_context: multiprocessing.context.BaseContext | None = None,
) -> list[GarchComparison]:
    """:func:`~volbench.models.ranking.fit_models` for each history, in worker processes.

    Parameters
    ----------
    histories
        Series to fit (picklable frozen dataclasses).
    settings
        Models, distribution, horizons, seed... (:class:`~volbench.settings.GarchSettings`); every
        series gets the same settings and seed, so results do not depend on which process fitted
        them. ``settings.processes``: worker processes (``None``: ``os.cpu_count()``; never more than
        the number of series); ``1`` fits in the calling process, with no pool at all.
    annualization
        Bars per year.
    progress
        ``progress(done, total, name)`` after each series finishes, called in the caller's thread.
    cancel
        Polled before each series (in-process) or every :data:`POLL_SECONDS` while waiting
        (processes); when it returns True, pending series are dropped and :class:`FitCancelled`
        is raised carrying what finished. Series already running in a worker are not interrupted;
        they finish in the background and their results are discarded.
    mp_context
        Multiprocessing context (default :func:`default_context`).

    Returns
    -------
    list of GarchComparison
        In input order.

    Raises
    ------
    VolbenchError
        Bad settings, or a series with fewer than 2 returns (checked before any fit starts).
    FitCancelled
        ``cancel()`` returned True.
    """
    hs = list(histories)
    settings = settings if settings is not None else GarchSettings()
    if not isinstance(settings, GarchSettings):
        raise VolbenchError(f"settings must be GarchSettings, got {type(settings).__name__}")
    a = check_annualization(annualization)
    processes = settings.processes
    for h in hs:
        if h.n < 3:
            raise VolbenchError(f"{h.name}: {h.n} price{'s' if h.n != 1 else ''}; a volatility needs at least "
                                "3 prices (2 returns); remove this series or load a longer file")
        if float(np.std(h.log_returns())) <= 1e-12:
            raise VolbenchError(f"{h.name}: returns do not vary: there is no volatility to model; check the "
                                "price column or remove this series")
    total = len(hs)
    results: list[GarchComparison | None] = [None] * total
    workers = min(processes or os.cpu_count() or 1, max(total, 1))
    if workers <= 1:
        for i, h in enumerate(hs):
            if cancel is not None and cancel():
                raise FitCancelled(results)
            results[i] = _fit_one(h, settings, a)
            if progress is not None:
                progress(i + 1, total, h.name)
        return results  # type: ignore[return-value]

    pool = ProcessPoolExecutor(max_workers=workers, mp_context=mp_context or default_context())
    cancelled = False
    try:
        index: dict[Future, int] = {pool.submit(_fit_one, h, settings, a): i for i, h in enumerate(hs)}
        pending = set(index)
        done_count = 0
        while pending:
            if cancel is not None and cancel():
                cancelled = True
                break
            finished, pending = wait(pending, timeout=POLL_SECONDS, return_when=FIRST_COMPLETED)
            for fut in finished:
                i = index[fut]
                results[i] = fut.result()
                done_count += 1
                if progress is not None:
                    progress(done_count, total, hs[i].name)
    except BaseException:
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    if cancelled:
        pool.shutdown(wait=False, cancel_futures=True)
        raise FitCancelled(results)
    pool.shutdown(wait=True)
    return results  # type: ignore[return-value]
