"""Log prices of one history, computed once and shared by every estimator and check.

:attr:`volbench.data.history.PriceHistory.logs` builds a :class:`LogPrices` the first time it is
read and keeps it on the (immutable) history, so the six estimators, the cone and the scaling
check take the logarithm of each price array once per history instead of once per call, and the
close-to-close returns once too. Terms built from several logs (u, d, c, the Rogers-Satchell
term) are not kept: they are computed per call and shared within it
(:class:`volbench.estimators.sums.Terms`), so a history holds five extra arrays, not a dozen.
Every array here is read-only: callers that need to modify one must copy it.
"""

from __future__ import annotations

from functools import cached_property

import numpy as np


def _frozen(a: np.ndarray) -> np.ndarray:
    a.setflags(write=False)
    return a


def _log(a: np.ndarray | None) -> np.ndarray | None:
    return None if a is None else _frozen(np.log(a))


class LogPrices:
    """Natural logs of a history's prices and its close-to-close log returns.

    Each log is taken on first use and kept (a cone or a scaling check needs only ln C).

    Attributes
    ----------
    close, open, high, low
        ln C, ln O, ln H, ln L (``None`` where the history has no such column).

    Notes
    -----
    Notation of docs/METHODS.md, "Notation and conventions": r_t = ln(C_t / C_{t-1}).
    """

    def __init__(self, close: np.ndarray, open: np.ndarray | None = None, high: np.ndarray | None = None,
                 low: np.ndarray | None = None) -> None:
        self._prices = (close, open, high, low)

    @classmethod
    def of(cls, close, open=None, high=None, low=None) -> LogPrices:
        """Logs of the given price arrays (positive floats, as a PriceHistory holds them), taken on use."""
        return cls(close, open, high, low)

    @cached_property
    def close(self) -> np.ndarray:
        return _log(self._prices[0])

    @cached_property
    def open(self) -> np.ndarray | None:
        return _log(self._prices[1])

    @cached_property
    def high(self) -> np.ndarray | None:
        return _log(self._prices[2])

    @cached_property
    def low(self) -> np.ndarray | None:
        return _log(self._prices[3])

    @cached_property
    def returns(self) -> np.ndarray:
        """Close-to-close log returns r_t = ln C_t - ln C_{t-1}, length n - 1."""
        return _frozen(np.diff(self.close))

    @cached_property
    def any_flat_return(self) -> bool:
        """True when some return is exactly zero (a close that did not move)."""
        return bool((self.returns == 0.0).any())

    @cached_property
    def any_flat_range(self) -> bool:
        """True when some bar has no range (ln H - ln L not above 0)."""
        return not bool((self.high - self.low > 0).all())
