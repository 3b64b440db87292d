"""BLAS threads pinned inside fits and simulations, so numbers do not depend on the caller's
thread environment (``OMP_NUM_THREADS`` and the like).

A multi-threaded BLAS splits sums differently with different thread counts, and an optimizer
that starts from slightly different rounding can stop at a visibly different optimum (a
Student-t degrees of freedom of 61 against 63). Every GARCH-type fit and simulated forecast runs
under :func:`single_threaded`, which limits every loaded BLAS/OpenMP pool to :data:`FIT_THREADS`
for its duration (``threadpoolctl``) and restores the caller's setting afterwards.
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from typing import ParamSpec, TypeVar

FIT_THREADS = 1
"""BLAS/OpenMP threads in force inside a fit or a simulation (recorded in every export)."""

P = ParamSpec("P")
R = TypeVar("R")


def single_threaded(fn: Callable[P, R]) -> Callable[P, R]:
    """Run ``fn`` with every BLAS/OpenMP pool limited to :data:`FIT_THREADS` threads."""

    @functools.wraps(fn)
    def run(*args: P.args, **kwargs: P.kwargs) -> R:
        from threadpoolctl import threadpool_limits

        with threadpool_limits(limits=FIT_THREADS):
            return fn(*args, **kwargs)

    return run
