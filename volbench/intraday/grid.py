"""Intraday log returns laid out by session, at the bar interval or a multiple of it.

Every realized measure is a sum over the returns of one session. Laying the returns out as a
zero-padded matrix (one row a session) turns each of those sums into a row sum, with no Python
loop over bars and no return ever crossing from one session into the next: a padded zero adds
nothing to a sum of squares or of products of neighbours.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.intraday.sessions import SessionLayout


@dataclass(frozen=True, eq=False)
class SessionReturns:
    """Intraday log returns of each session and the overnight return before it.

    Attributes
    ----------
    returns
        ``(sessions, width)`` matrix; row s holds the returns of session s in time order, then
        zeros. Never spans the overnight gap.
    counts
        Returns in each session (M_t).
    overnight
        ln(first price of the session / last price of the previous session); NaN for the first.
    sampling_bars, interval_seconds
        Sampling step in bars and in seconds.
    """

    returns: np.ndarray
    counts: np.ndarray
    overnight: np.ndarray
    sampling_bars: int
    interval_seconds: float


def session_prices(history: PriceHistory, layout: SessionLayout) -> tuple[np.ndarray, np.ndarray]:
    """Log prices on each session's grid and the session of each grid point.

    With an open column a session's grid is the first bar's open followed by every bar's close,
    so its returns cover the whole session from the opening price; without one it is the bars'
    closes and the first bar's own move counts as part of the overnight return.
    """
    logc = np.log(history.close)
    sess = layout.session_of_bar
    if history.open is None:
        return logc, sess
    s = layout.starts
    return np.insert(logc, s, np.log(history.open[s])), np.insert(sess, s, sess[s])


def session_returns(history: PriceHistory, layout: SessionLayout, sampling_bars: int = 1) -> SessionReturns:
    """Returns within each session, sampled every ``sampling_bars`` bars.

    Parameters
    ----------
    history, layout
        An intraday history and its sessions.
    sampling_bars
        Keep every k-th point of each session's price grid, counted from its first point, and
        always its last point (so each session is covered to its close; the last return may span
        fewer than k bars).

    Raises
    ------
    VolbenchError
        ``sampling_bars`` is not a whole number >= 1, or the history is not intraday.
    """
    if isinstance(sampling_bars, bool) or int(sampling_bars) != sampling_bars or sampling_bars < 1:
        raise VolbenchError(f"sampling must be a whole number of bars >= 1, got {sampling_bars!r}")
    if not layout.intraday:
        raise VolbenchError(f"{history.name}: realized measures need intraday bars; the file has one bar a session")
    p, sess = session_prices(history, layout)
    return returns_on_grid(p, sess, layout.n_sessions, int(sampling_bars), layout.bar_interval_seconds)


def returns_on_grid(p: np.ndarray, sess: np.ndarray, n_sess: int, k: int, bar_seconds: float) -> SessionReturns:
    """:func:`session_returns` from a price grid already built by :func:`session_prices`."""
    grid = _regular(p, sess, n_sess)
    if grid is not None:  # every session has the same number of grid points: plain reshapes
        g = grid if k == 1 else np.ascontiguousarray(grid[:, _columns(grid.shape[1], k)])
        mat = np.diff(g, axis=1) if g.shape[1] > 1 else np.zeros((n_sess, 1))
        counts = np.full(n_sess, g.shape[1] - 1)
        overnight = np.full(n_sess, np.nan)
        overnight[1:] = g[1:, 0] - g[:-1, -1]
        return SessionReturns(mat, counts, overnight, k, k * bar_seconds)
    first, last = _bounds(sess, n_sess)
    if k > 1:
        p, sess = _thin(p, sess, first, last, k)
        first, last = _bounds(sess, n_sess)
    counts = last - first
    overnight = np.full(n_sess, np.nan)
    overnight[1:] = p[first[1:]] - p[last[:-1]]
    r = np.diff(p)
    width = int(counts.max()) if counts.size else 0
    within = sess[1:] == sess[:-1]
    r, row = r[within], sess[1:][within]
    col = np.arange(r.shape[0]) - (first[row] - row)  # returns before session s = first[s] - s
    mat = np.zeros((n_sess, max(width, 1)))
    mat[row, col] = r
    return SessionReturns(mat, counts, overnight, k, k * bar_seconds)


def sampled_rv(p: np.ndarray, sess: np.ndarray, n_sess: int, k: int) -> np.ndarray:
    """Realized variance of each session sampled every k grid points (no return matrix kept)."""
    grid = _regular(p, sess, n_sess)
    if grid is not None:
        d = np.diff(np.ascontiguousarray(grid[:, _columns(grid.shape[1], k)]), axis=1)
        return np.einsum("ij,ij->i", d, d)
    first, last = _bounds(sess, n_sess)
    if k > 1:
        p, sess = _thin(p, sess, first, last, k)
    r = np.diff(p)
    r2 = np.where(sess[1:] == sess[:-1], r * r, 0.0)
    return np.bincount(sess[1:], r2, minlength=n_sess)


def _regular(p: np.ndarray, sess: np.ndarray, n_sess: int) -> np.ndarray | None:
    """The grid as a ``(sessions, points)`` view when every session has the same number of points."""
    if n_sess == 0 or p.size % n_sess:
        return None
    g = p.size // n_sess
    if sess[0] != 0 or sess[-1] != n_sess - 1 or not (sess[g - 1::g] == np.arange(n_sess)).all() or \
            not (sess[::g] == np.arange(n_sess)).all():
        return None
    return p.reshape(n_sess, g)


def _columns(g: int, k: int) -> np.ndarray:
    """Grid positions kept when sampling every k points: 0, k, 2k, ... and always the last."""
    cols = np.arange(0, g, k)
    return cols if cols[-1] == g - 1 else np.append(cols, g - 1)


def _bounds(sess: np.ndarray, n_sess: int) -> tuple[np.ndarray, np.ndarray]:
    """Index of each session's first and last grid point (``sess`` sorted, every session present)."""
    first = np.flatnonzero(np.concatenate(([True], sess[1:] != sess[:-1])))
    if first.size != n_sess:
        idx = np.arange(n_sess)
        return (np.searchsorted(sess, idx, side="left"), np.searchsorted(sess, idx, side="right") - 1)
    return first, np.concatenate((first[1:] - 1, [sess.size - 1]))


def _thin(p: np.ndarray, sess: np.ndarray, first: np.ndarray, last: np.ndarray, k: int):
    """Every k-th grid point of each session from its first, and always its last."""
    pos = np.arange(p.shape[0]) - np.repeat(first, last - first + 1)
    keep = pos % k == 0
    keep[last] = True
    return p[keep], sess[keep]
