"""Window estimators as trailing-window sums of per-bar terms, one at a time or several together.

Every window estimator (close-to-close, Parkinson, Garman-Klass, Rogers-Satchell, Yang-Zhang) is
a combination of sums, over the trailing window, of a few per-bar terms: a :class:`SumForm`
says which terms (``rows``) and how the window sums combine into the per-bar variance
(``finish``). :func:`form_variance` evaluates one form (each estimator's ``variance`` function
is exactly that); :func:`evaluate` runs several (form, window) jobs on one history at once,
computing the terms they share (u, d, c, the Rogers-Satchell term, returns) once
(:class:`Terms`), and a window-free form's cumulative sums once for all its windows. Both paths
run the same operations in the same order, so they give the same numbers to the last bit.

Trailing sums are differences of cumulative sums of values centred on their overall mean (the
forms centre their terms), O(n) and stable on long series (docs/METHODS.md, "Estimators").
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from functools import cached_property

import numpy as np

from volbench.data.history import PriceHistory
from volbench.data.logs import LogPrices


class Terms:
    """Per-bar terms of one history, computed on first use and shared by the forms of one call.

    Notation of docs/METHODS.md, "Notation and conventions": u = ln(H/O), d = ln(L/O),
    c = ln(C/O), r_t = ln(C_t / C_{t-1}), o_t = ln(O_t / C_{t-1}). Not kept on the history, so a
    history holds only its logs (:class:`volbench.data.logs.LogPrices`).
    """

    def __init__(self, logs: LogPrices) -> None:
        self.logs = logs

    @property
    def returns(self) -> np.ndarray:
        return self.logs.returns

    @cached_property
    def range(self) -> np.ndarray:
        """ln(H/L) = ln H - ln L per bar (Parkinson's range)."""
        return self.logs.high - self.logs.low

    @cached_property
    def session(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(u, d, c) = (ln H - ln O, ln L - ln O, ln C - ln O) per bar."""
        lo = self.logs.open
        return self.logs.high - lo, self.logs.low - lo, self.logs.close - lo

    @cached_property
    def rogers_satchell(self) -> np.ndarray:
        """u (u - c) + d (d - c) per bar (Rogers & Satchell 1991)."""
        u, d, c = self.session
        return u * (u - c) + d * (d - c)

    @cached_property
    def overnight(self) -> np.ndarray:
        """o_t = ln O_t - ln C_{t-1}, length n - 1 (bar 1 onwards)."""
        return self.logs.open[1:] - self.logs.close[:-1]


Rows = Callable[[Terms, int], tuple[tuple[np.ndarray, ...], object]]
Finish = Callable[[Terms, int, tuple[np.ndarray, ...], object, np.ndarray], None]


@dataclass(frozen=True)
class SumForm:
    """A window estimator written as trailing-window sums of per-bar terms.

    Attributes
    ----------
    rows
        ``rows(terms, window) -> (arrays, state)``: the per-bar terms whose trailing sums the
        estimator needs (each of length n - ``offset``; new arrays the caller may overwrite), and
        whatever the combination needs besides (centres, weights).
    finish
        ``finish(terms, window, sums, state, out)`` writes the per-bar variance into ``out``, one
        value per window ending at bars ``window - 1 + offset`` .. n - 1; ``sums[i]`` holds the
        trailing sums of ``rows[i]`` over those windows (the function may overwrite them).
    offset
        0 when the terms are per bar, 1 when they start at bar 1 (they use the previous close).
    window_free
        True when ``rows`` does not depend on the window: several windows then share the terms
        and their cumulative sums (a volatility cone).
    """

    rows: Rows
    finish: Finish
    offset: int = 0
    window_free: bool = True


def _cumulative(x: np.ndarray) -> np.ndarray:
    """0 followed by the running sums of ``x`` (what :func:`volbench.estimators.base.trailing_sums`
    differences)."""
    c = np.empty(x.shape[0] + 1)
    c[0] = 0.0
    np.cumsum(x, out=c[1:])
    return c


def evaluate(h: PriceHistory, jobs: Sequence[tuple[SumForm, int]], outs: Sequence[np.ndarray]) -> None:
    """Write the per-bar variance of each (form, window) job into the matching array of ``outs``.

    The terms are computed once for all jobs (:class:`Terms`); a window-free form's rows and
    their cumulative sums once for all its windows. Every value equals :func:`form_variance`'s
    to the last bit (the same operations on the same numbers). Each job's window must be >= 2
    for forms that divide by ``window - 1``, as the registry's availability check ensures.
    """
    terms = Terms(h.logs)
    shared: dict[int, tuple[list[np.ndarray], object]] = {}
    for (form, window), out in zip(jobs, outs):
        first = window - 1 + form.offset
        n = out.shape[0]
        out[:min(first, n)] = np.nan
        if n <= first:
            continue
        if form.window_free and id(form) in shared:
            cums, state = shared[id(form)]
        else:
            rows, state = form.rows(terms, window)
            cums = [_cumulative(x) for x in rows]
            if form.window_free:
                shared[id(form)] = (cums, state)
        sums = tuple(np.subtract(c[window:], c[:-window]) for c in cums)
        form.finish(terms, window, sums, state, out[first:])


def form_variance(h: PriceHistory, window: int, form: SumForm) -> np.ndarray:
    """Per-bar variance of one form at every bar (NaN where the window does not fit)."""
    out = np.empty(h.n)
    evaluate(h, [(form, window)], [out])
    return out


def forms_variances(h: PriceHistory, window: int, forms: Mapping[str, SumForm]) -> dict[str, np.ndarray]:
    """Per-bar variances of several forms on one history and window, sharing their terms
    (:func:`evaluate`); each equals :func:`form_variance` of that form to the last bit."""
    outs = {key: np.empty(h.n) for key in forms}
    evaluate(h, [(form, window) for form in forms.values()], list(outs.values()))
    return outs


# ------------------------------------------------------------------ pieces the forms share
def centred(x: np.ndarray) -> tuple[np.ndarray, float]:
    """``x`` minus its mean (a new array), and the mean."""
    centre = float(np.add.reduce(x) / x.shape[0])
    return x - centre, centre


def finish_mean(window: int, sums: np.ndarray, centre: float, out: np.ndarray) -> None:
    """Window mean from the trailing sums of centred values: sum / n + centre."""
    np.divide(sums, window, out=out)
    out += centre
