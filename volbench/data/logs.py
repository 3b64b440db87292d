"""Log prices of one history, computed once and shared by every estimator and check.

:attr:`volbench.data.history.PriceHistory.logs` builds a :class:`LogPrices` the first time it is
read and keeps it on the (immutable) history, so the six estimators, the cone and the scaling
check take the logarithm of each price array once per history instead of once per call. Derived
per-bar terms that several estimators share are computed on first use and kept too. Every array
here is read-only: callers that need to modify one must copy it.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np


def _frozen(a: np.ndarray) -> np.ndarray:
    a.setflags(write=False)
    return a


def _log(a: np.ndarray | None) -> np.ndarray | None:
    return None if a is None else _frozen(np.log(a))


@dataclass(frozen=True, eq=False)
class LogPrices:
    """Natural logs of a history's prices and the per-bar terms built from them.

    Attributes
    ----------
    close, open, high, low
        ln C, ln O, ln H, ln L (``None`` where the history has no such column).

    Notes
    -----
    Notation of docs/METHODS.md, "Notation and conventions": r_t = ln(C_t / C_{t-1}),
    u = ln(H/O), d = ln(L/O), c = ln(C/O). The terms are differences of the cached logs, computed
    exactly as the estimators' formulas state them (so a cached term equals the one an estimator
    would compute on its own, to the last bit).
    """

    close: np.ndarray
    open: np.ndarray | None = None
    high: np.ndarray | None = None
    low: np.ndarray | None = None

    @classmethod
    def of(cls, close, open=None, high=None, low=None) -> LogPrices:
        """Logs of the given price arrays (positive floats, as a PriceHistory holds them)."""
        return cls(_log(close), _log(open), _log(high), _log(low))

    @cached_property
    def returns(self) -> np.ndarray:
        """Close-to-close log returns r_t = ln C_t - ln C_{t-1}, length n - 1."""
        return _frozen(np.diff(self.close))

    @cached_property
    def any_flat_return(self) -> bool:
        """True when some return is exactly zero (a close that did not move)."""
        return bool((self.returns == 0.0).any())

    @cached_property
    def range(self) -> np.ndarray:
        """ln(H/L) = ln H - ln L per bar (Parkinson's range)."""
        return _frozen(self.high - self.low)

    @cached_property
    def any_flat_range(self) -> bool:
        """True when some bar has no range (ln H - ln L not above 0)."""
        return not bool((self.range > 0).all())

    @cached_property
    def session(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(u, d, c) = (ln H - ln O, ln L - ln O, ln C - ln O) per bar."""
        return (_frozen(self.high - self.open), _frozen(self.low - self.open), _frozen(self.close - self.open))

    @cached_property
    def rogers_satchell(self) -> np.ndarray:
        """u (u - c) + d (d - c) per bar (Rogers & Satchell 1991)."""
        u, d, c = self.session
        return _frozen(u * (u - c) + d * (d - c))

    @cached_property
    def overnight(self) -> np.ndarray:
        """o_t = ln O_t - ln C_{t-1}, length n - 1 (bar 1 onwards)."""
        return _frozen(self.open[1:] - self.close[:-1])
