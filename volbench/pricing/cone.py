"""Volatility cone: the historical distribution of rolling realized vol per window length.

A pricing vol is placed by its percentile in the cone column matching the option's life
(:meth:`Cone.place`), interpolated between the two bracketing windows.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from volbench import validate
from volbench.data.history import PriceHistory, _iso
from volbench.errors import VolbenchError
from volbench.estimators import RollingVol, get_spec, rolling_windows
from volbench.frames import frame, labels
from volbench.types import (
    DEFAULT_ANNUALIZATION,
    DEFAULT_CONE_WINDOWS,
    check_annualization,
    check_positive,
)

PERCENTILES: dict[str, float] = {"min": 0, "p10": 10, "p25": 25, "p50": 50, "p75": 75, "p90": 90, "max": 100}
"""Cone columns and the percentile each one is (numpy.percentile, linear interpolation)."""
_TABLE_COLUMNS = (*PERCENTILES, "mean", "current", "current_percentile", "n_windows", "n_independent")
_TABLE_LABELS = {False: labels(_TABLE_COLUMNS),
                 True: labels((*_TABLE_COLUMNS, "ht_factor", *(f"{k}_adj" for k in PERCENTILES)))}


def hodges_tompkins_factor(window: int, n: int) -> float:
    """Hodges-Tompkins factor for the dispersion of vols from ``n`` overlapping windows.

    Parameters
    ----------
    window
        Bars per window, h.
    n
        Number of overlapping windows (>= 2), T - h + 1 for T observations.

    Raises
    ------
    VolbenchError
        ``n`` below 2 or ``window`` below 1.

    Notes
    -----
    Hodges & Tompkins (2002), J. of Derivatives 10(1): for h <= n the factor is
    1 / sqrt(1 - h/n + (h^2 - 1) / (3 n^2)). It follows from the covariance of overlapping sums of
    i.i.d. terms, Cov(X_i, X_j) = V (1 - |i - j| / h) for |i - j| < h: the expected dispersion of
    the n estimates about their own mean (divisor n) is V (1 - h/n + (h^2 - 1)/(3 n^2)), and the
    factor undoes that shrinkage. Greater than 1 when h is small against n: overlapping windows
    share returns, so their vols disperse less than independent ones would.
    For n < h (fewer overlapping windows than bars in one) the same sum runs only to lag n - 1
    and gives the ratio (n^2 - 1) / (3 h n) instead (our derivation by the same argument; checked by
    simulation in the tests); the two agree at n = h. Such a column rests on a single independent
    window and the cone notes it.
    """
    h, m = int(window), int(n)
    if h < 1 or m < 2:
        raise VolbenchError(f"the Hodges-Tompkins factor needs window >= 1 and at least 2 overlapping "
                            f"windows, got window {window} and {n}")
    if m >= h:
        ratio = 1.0 - h / m + (h * h - 1.0) / (3.0 * m * m)
    else:
        ratio = (m * m - 1.0) / (3.0 * h * m)
    return 1.0 / math.sqrt(ratio)


def percentile_rank(sorted_values: np.ndarray, vol) -> float | np.ndarray:
    """Percentile (0-100) of ``vol`` in a sample: the inverse of ``numpy.percentile`` (linear).

    Notes
    -----
    For sorted x_0 <= ... <= x_{m-1}, ``numpy.percentile(x, p)`` interpolates at position
    (m - 1) p / 100. This returns the p whose percentile is ``vol``: 100 pos / (m - 1), with pos
    found by linear interpolation between neighbours; a value equal to a run of ties gets the
    middle of the run; below the minimum 0, above the maximum 100 (common practice, no source).
    """
    x = np.asarray(sorted_values, dtype=float)
    if isinstance(vol, (float, int, np.floating)) and not isinstance(vol, bool):
        return _rank_one(x, float(vol))
    v = np.asarray(vol, dtype=float)
    m = len(x)
    lo = np.searchsorted(x, v, side="left")
    hi = np.searchsorted(x, v, side="right")
    tie = hi > lo
    j = np.clip(lo, 1, m - 1)
    left, right = x[j - 1], x[j]
    with np.errstate(invalid="ignore", divide="ignore"):
        between = (j - 1) + np.where(right > left, (v - left) / np.where(right > left, right - left, 1.0), 0.0)
    pos = np.where(tie, (lo + hi - 1) / 2.0, between)
    pos = np.where(v < x[0], 0.0, np.where(v > x[-1], m - 1.0, pos))
    out = 100.0 * pos / (m - 1)
    return float(out) if out.ndim == 0 else out


def _rank_one(x: np.ndarray, v: float) -> float:
    """:func:`percentile_rank` of one number: the same arithmetic on Python floats (IEEE doubles,
    so the same result) without the array machinery."""
    m = x.shape[0]
    if v < x[0]:
        return 0.0
    if v > x[-1]:
        return 100.0 * (m - 1.0) / (m - 1)
    lo = int(np.searchsorted(x, v, side="left"))
    hi = int(np.searchsorted(x, v, side="right"))
    if hi > lo:
        pos = (lo + hi - 1) / 2.0
    else:
        j = min(max(lo, 1), m - 1)
        left, right = float(x[j - 1]), float(x[j])
        pos = (j - 1) + ((v - left) / (right - left) if right > left else 0.0)
    return 100.0 * pos / (m - 1)


def rank_unsorted(values: np.ndarray, vol: float) -> float:
    """:func:`percentile_rank` of ``vol`` in ``values`` given in any order, without sorting (O(n)).

    The sorted neighbours it needs are counts and extremes: ``lo`` values below ``vol``, ``hi``
    at or below it, the largest value below and the smallest above; the arithmetic is
    :func:`percentile_rank`'s, so the result is the same to the last bit.
    """
    x = values
    v = float(vol)
    m = x.shape[0]
    if math.isnan(v):
        return v
    below = x < v
    lo = int(np.count_nonzero(below))
    ties = int(np.count_nonzero(x == v))
    if lo + ties == 0:
        return 0.0
    if lo == m:
        return 100.0 * (m - 1.0) / (m - 1)
    if ties:
        pos = (lo + lo + ties - 1) / 2.0
    else:  # min(max(lo, 1), m - 1) == lo here: vol lies strictly between the extremes
        left = float(np.max(x, where=below, initial=-np.inf))
        right = float(np.min(x, where=~below, initial=np.inf))
        pos = (lo - 1) + ((v - left) / (right - left) if right > left else 0.0)
    return 100.0 * pos / (m - 1)


def percentiles(values: np.ndarray, qs: np.ndarray) -> np.ndarray:
    """``numpy.percentile(values, qs)`` (linear method), from one partial sort.

    Notes
    -----
    numpy's definition, step by step: position (m - 1) q / 100, neighbours at its floor and the
    next index (the last value at or beyond the end), weight g = position - floor, and numpy's
    interpolation a + (b - a) g, or b - (b - a)(1 - g) when g >= 0.5. The neighbours come from one
    ``numpy.partition`` at just those ranks, as numpy.percentile does; the tests check equality
    with numpy.percentile to the last bit.
    """
    m = values.shape[0]
    vi = (m - 1) * (np.asarray(qs, dtype=float) / 100)
    prev = np.floor(vi).astype(np.intp)
    nxt = prev + 1
    above = vi >= m - 1
    prev[above] = m - 1
    nxt[above] = m - 1
    gamma = vi - np.where(above, -1, prev)  # numpy's weight at the end (its index -1)
    x = np.partition(values, sorted({*prev.tolist(), *nxt.tolist()}))
    a, b = x[prev], x[nxt]
    diff = b - a
    out = a + diff * gamma
    np.subtract(b, diff * (1 - gamma), out=out, where=gamma >= 0.5)
    return out


@dataclass(frozen=True)
class ConePlacement:
    """Where a vol sits in the cone for an option of ``days`` bars.

    ``windows`` holds the one or two cone windows used and ``weights`` their interpolation weights;
    ``clamped`` is true when ``days`` lies outside the cone's windows and the nearest end column
    was used; ``adjusted`` when the Hodges-Tompkins-adjusted distribution was used; ``note`` says
    all of this in a sentence.
    """

    vol: float
    days: int
    percentile: float
    windows: tuple[int, ...]
    weights: tuple[float, ...]
    clamped: bool
    adjusted: bool
    note: str

    def as_dict(self) -> dict:
        return {"vol": self.vol, "days": self.days, "percentile": self.percentile,
                "windows": list(self.windows), "weights": list(self.weights),
                "clamped": self.clamped, "adjusted": self.adjusted, "note": self.note}


@dataclass(frozen=True)
class Cone:
    """A volatility cone for one series and estimator.

    Attributes
    ----------
    name, estimator, label
        Series name, estimator key and label.
    annualization
        Bars per year used.
    start, end, rows
        First and last date and row count of the history the cone was built on (the selected range).
    hodges_tompkins
        Whether the adjusted columns are present and used by :meth:`place`.
    table
        Indexed by ``window``; columns min, p10, p25, p50, p75, p90, max (percentiles of the rolling
        vols), mean, current (the last rolling value), current_percentile (its rank, 0-100, see
        :func:`percentile_rank`), n_windows (overlapping windows = rolling values), n_independent
        (non-overlapping windows, floor(observations / window)); with Hodges-Tompkins also
        ht_factor and min_adj ... max_adj = mean + ht_factor x (column - mean), floored at 0. (Today's
        rank is the same in the adjusted distribution: the stretch keeps the order of the values.)
    dropped
        Window -> reason, for windows that do not fit the history.
    notes
        Caveats a reader needs (few independent windows, EWMA, left-out bars, floored values).
    rolling
        Window -> rolling vol series (date index) behind each column.
    """

    name: str
    estimator: str
    label: str
    annualization: float
    start: str
    end: str
    rows: int
    hodges_tompkins: bool
    table: pd.DataFrame
    dropped: dict[int, str] = field(default_factory=dict)
    notes: tuple[str, ...] = ()
    rolling: Mapping[int, pd.Series] = field(default_factory=dict, repr=False)

    @property
    def windows(self) -> tuple[int, ...]:
        return tuple(int(w) for w in self.table.index)

    def _sample(self, window: int, adjusted: bool) -> np.ndarray:
        """The column's values, in date order (stretched about the mean under Hodges-Tompkins)."""
        r = self.rolling
        x = r.vols(window) if isinstance(r, RollingColumns) else r[window].to_numpy()
        if adjusted:
            mean = float(self.table.at[window, "mean"])
            x = mean + float(self.table.at[window, "ht_factor"]) * (x - mean)
        return x

    def rank(self, vol: float, window: int) -> float:
        """Percentile (0-100) of ``vol`` in the column for ``window`` (adjusted under Hodges-Tompkins)."""
        if window not in self.rolling:
            raise VolbenchError(f"window {window} is not in this cone; windows: "
                                f"{', '.join(str(w) for w in self.windows)}")
        return rank_unsorted(self._sample(window, self.hodges_tompkins), vol)

    def place(self, vol: float, days: int) -> ConePlacement:
        """Percentile of ``vol`` at the cone window matching an option life of ``days`` bars.

        Notes
        -----
        When ``days`` equals a window, that column's percentile; between two windows w1 < days < w2,
        linear interpolation in days of the two columns' percentiles,
        p = p1 + (days - w1) / (w2 - w1) (p2 - p1); outside the windows, the nearest end column
        (clamped, and the note says so). With Hodges-Tompkins the adjusted distribution
        mean + factor (x - mean) is used (common practice, no source, for the interpolation).
        """
        return place_vol(vol, days, self.windows, self.rank, self.label, self.hodges_tompkins)

    def percentile_of(self, vol: float, days: int) -> float:
        """Percentile (0-100) of ``vol`` for an option of ``days`` bars; see :meth:`place`."""
        return self.place(vol, days).percentile

    def as_dict(self) -> dict:
        rows = []
        for w, row in self.table.iterrows():
            d = {"window": int(w)}
            for k, v in row.items():
                d[k] = int(v) if k in ("n_windows", "n_independent") else float(v)
            rows.append(d)
        return {
            "name": self.name, "estimator": self.estimator, "label": self.label,
            "annualization": self.annualization, "start": self.start, "end": self.end, "rows": self.rows,
            "hodges_tompkins": self.hodges_tompkins,
            "adjustment": ("adjusted = mean + ht_factor x (percentile - mean), floored at 0"
                           if self.hodges_tompkins else None),
            "windows": rows, "dropped": {str(w): r for w, r in self.dropped.items()}, "notes": list(self.notes),
        }


def place_vol(vol: float, days: int, windows: Sequence[int], rank: Callable[[float, int], float], label: str,
              adjusted: bool = False) -> ConePlacement:
    """:meth:`Cone.place` for a cone given by its sorted ``windows`` and ``rank(vol, window)``."""
    v = check_positive(vol, "vol must be a positive decimal such as 0.25")
    d = _check_days(days)
    ws = tuple(windows)
    what = f"{label.lower()} vol" + (" (Hodges-Tompkins adjusted)" if adjusted else "")
    if d in ws:
        p = rank(v, d)
        return ConePlacement(v, d, p, (d,), (1.0,), False, adjusted, f"{d}-bar {what}")
    if d < ws[0] or d > ws[-1]:
        w = ws[0] if d < ws[0] else ws[-1]
        side = "shorter than the shortest" if d < ws[0] else "longer than the longest"
        note = (f"{w}-bar {what}; the option life of {d} bars is {side} cone window, "
                f"so the {w}-bar column is used")
        return ConePlacement(v, d, rank(v, w), (w,), (1.0,), True, adjusted, note)
    i = int(np.searchsorted(ws, d))
    w1, w2 = ws[i - 1], ws[i]
    a = (d - w1) / (w2 - w1)
    p = (1 - a) * rank(v, w1) + a * rank(v, w2)
    note = f"{d}-bar {what}, interpolated between the {w1}- and {w2}-bar cone columns"
    return ConePlacement(v, d, p, (w1, w2), (1 - a, a), False, adjusted, note)


def _check_days(days) -> int:
    return validate.days(days)


def _check_windows(windows: Sequence[int]) -> tuple[int, ...]:
    from volbench import validate

    return validate.cone_windows(windows)


def _date(value, what: str) -> pd.Timestamp | None:
    return validate.date(value, f"{what} date")


def select_range(history: PriceHistory, start=None, end=None) -> PriceHistory:
    """Rows dated from ``start`` to ``end`` inclusive (either may be ``None``); clear error if none."""
    s, e = _date(start, "start"), _date(end, "end")
    if s is None and e is None:
        return history
    validate.date_within(e, history.first_date, history.last_date, what="end date", name=history.name)
    if s is not None and e is not None and s > e:
        raise VolbenchError(f"start date {s.date()} is after end date {e.date()}")
    d = history.dates
    mask = np.ones(history.n, dtype=bool)
    if s is not None:
        mask &= d >= s.to_datetime64()
    if e is not None:
        # a bare date includes that whole day
        last = e + pd.Timedelta(days=1) - pd.Timedelta(1, "ns") if e == e.normalize() else e
        mask &= d <= last.to_datetime64()
    if not mask.any():
        raise VolbenchError(f"{history.name}: no rows between {start or 'the start'} and {end or 'the end'}; "
                            f"the file covers {history.first_date} to {history.last_date}")
    return history if mask.all() else history.take(mask)


def vol_cone(
    history: PriceHistory,
    estimator: str = "close_to_close",
    windows: Sequence[int] = DEFAULT_CONE_WINDOWS,
    *,
    start=None,
    end=None,
    annualization: float = DEFAULT_ANNUALIZATION,
    hodges_tompkins: bool = False,
) -> Cone:
    """Volatility cone of ``estimator`` over ``windows`` on the whole history or a date range.

    Parameters
    ----------
    history
        Price history.
    estimator
        Key in :data:`volbench.estimators.REGISTRY`.
    windows
        Window lengths in bars (each >= 2, no repeats).
    start, end
        Optional first and last date (inclusive). The cone is built on those rows only: every
        window lies wholly inside the range and "current" is the last window ending at ``end``.
    annualization
        Bars per year.
    hodges_tompkins
        Add overlap-adjusted columns (and use them to place vols).

    Returns
    -------
    Cone

    Raises
    ------
    VolbenchError
        Unknown estimator, bad windows, dates or annualization, an empty range, or no window fits.

    Notes
    -----
    Burghardt & Lane (1990), J. of Portfolio Management 16(2): per window w, the rolling w-bar
    vols (:func:`volbench.estimators.rolling_windows`: the same series as
    :func:`volbench.estimators.rolling_vol`, all windows in one call) summarised by min, 10th, 25th,
    50th, 75th, 90th percentile and max (``numpy.percentile``, linear, from one partial sort per
    window, :func:`percentiles`); today's rank by :func:`rank_unsorted` (no sort). Hodges & Tompkins (2002), J. of Derivatives
    10(1): with n overlapping windows, the column's dispersion around its mean is scaled by
    :func:`hodges_tompkins_factor`: adjusted = mean + factor x (value - mean), floored at 0.
    A window needs at least two rolling values; one that does not fit is listed in ``dropped``.
    """
    a = check_annualization(annualization)
    spec = get_spec(estimator)
    ws = _check_windows(windows)
    h = select_range(history, start, end)
    obs = h.n - spec.extra_bars
    rows: dict[int, dict] = {}
    rolling: dict[int, RollingVol] = {}
    notes: list[str] = []
    qs = np.fromiter(PERCENTILES.values(), dtype=float)
    kept, dropped = _columns(h, spec, ws, a)
    for w, rv in kept.items():
        vals = rv.vols
        n = len(vals)
        if rv.invalid_dates:
            notes.append(f"window {w}: {len(rv.invalid_dates)} rolling value(s) left out because bars have "
                         "high below low or prices outside their range; exclude flagged rows")
        last = rv.dates[-1]
        if last != h.dates[-1]:
            notes.append(f"window {w}: current value is from {_iso(last)}, "
                         f"the last valid window before {h.last_date}")
        perc = percentiles(vals, qs)
        row = dict(zip(PERCENTILES, perc.tolist()))
        mean = float(np.add.reduce(vals) / n)  # numpy.mean's sum and division
        indep = obs // w
        row.update(mean=mean, current=float(vals[-1]),
                   current_percentile=rank_unsorted(vals, vals[-1]),
                   n_windows=n, n_independent=indep)
        if indep < 2:
            notes.append(f"window {w}: only {indep} independent (non-overlapping) window behind this column; "
                         "its spread describes one stretch of history")
        if hodges_tompkins:
            f = hodges_tompkins_factor(w, n)
            adj = mean + f * (perc - mean)
            if np.any(adj < 0):
                notes.append(f"window {w}: adjusted values below zero were floored at 0")
            row["ht_factor"] = f
            row.update(zip((f"{k}_adj" for k in PERCENTILES), np.maximum(adj, 0.0).tolist()))
        rows[w] = row
        rolling[w] = rv
    if spec.memory == "all":
        note = spec.candidate_note({}) if spec.candidate_note is not None else "every past return counts"
        notes.append(f"{spec.short or spec.label} weighs {note.replace('all past returns', 'every past return')}; "
                     "its window only sets the seed, so its columns differ little")
    first = next(iter(rows.values()))
    ints = ("n_windows", "n_independent")
    table = frame({k: np.array([r[k] for r in rows.values()], dtype=np.int64 if k in ints else float) for k in first},
                  _TABLE_LABELS[bool(hodges_tompkins)],
                  pd.Index(np.fromiter(rows, dtype=np.int64, count=len(rows)), name="window"))
    return Cone(name=h.name, estimator=spec.key, label=spec.label, annualization=a, start=h.first_date,
                end=h.last_date, rows=h.n, hodges_tompkins=bool(hodges_tompkins), table=table,
                dropped=dropped, notes=tuple(notes), rolling=RollingColumns(rolling))


class RollingColumns(Mapping):
    """Window -> the rolling vol Series behind a cone column, each built from its arrays on first use."""

    def __init__(self, columns: Mapping[int, RollingVol]) -> None:
        self._columns = dict(columns)

    def __getitem__(self, window: int) -> pd.Series:
        return self._columns[window].values

    def __iter__(self):
        return iter(self._columns)

    def __len__(self) -> int:
        return len(self._columns)

    def vols(self, window: int) -> np.ndarray:
        """The column's values as a read-only array (no Series built)."""
        return self._columns[window].vols


def supported_estimators(h: PriceHistory) -> list[str]:
    """Keys of the registered estimators whose columns ``h`` has (what a cone can be built with)."""
    from volbench.estimators.registry import REGISTRY

    return [k for k, sp in REGISTRY.items() if all(getattr(h, c) is not None for c in sp.needs)]


def supported_labels(h: PriceHistory) -> list[str]:
    """Labels of the registered estimators whose columns ``h`` has."""
    from volbench.estimators.registry import REGISTRY

    return [REGISTRY[k].label for k in supported_estimators(h)]


def _columns(h: PriceHistory, spec, ws: tuple[int, ...], a: float) -> tuple[dict, dict[int, str]]:
    """The rolling series of each cone window that fits (at least two values), and why the others do
    not; raises the cone's errors when none fits."""
    series, reasons = rolling_windows(h, spec.key, ws, annualization=a)  # terms shared by the windows
    kept: dict[int, object] = {}
    dropped: dict[int, str] = {}
    for w in ws:
        if w in reasons:
            dropped[w] = reasons[w]
            continue
        n = len(series[w].vols)
        if n < 2:
            dropped[w] = (f"window {w} gives {n} rolling value{'s' if n != 1 else ''}; a cone column needs "
                          f"at least 2, i.e. {spec.bars_needed(w) + 1} rows, history has {h.n}")
            continue
        kept[w] = series[w]
    missing = sorted(c for c in spec.needs if getattr(h, c) is None)
    if missing:  # the cause is the file's columns, not the windows
        raise VolbenchError(f"{h.name}: no {spec.label} cone: the {spec.label} estimator needs "
                            f"{'/'.join(missing)} column{'s' if len(missing) > 1 else ''} and this series has "
                            f"{', '.join(c for c in ('open', 'high', 'low', 'close') if getattr(h, c) is not None)} "
                            f"only; choose one it supports ({', '.join(supported_labels(h))})")
    if not kept and dropped and len(set(dropped.values())) == 1 and next(iter(dropped.values())).startswith(
            ("no range on any bar", "the closes do not change")):
        raise VolbenchError(f"{h.name}: no {spec.label} cone: {next(iter(dropped.values()))}; choose another "
                            "cone estimator")
    if not kept:
        by_reason: dict[str, list[str]] = {}
        for w, r in dropped.items():
            by_reason.setdefault(r, []).append(str(w))
        text = "; ".join(r if r.startswith("window ") else f"window{'s' if len(ws_) > 1 else ''} "
                         f"{', '.join(ws_)}: {r}" for r, ws_ in by_reason.items())
        raise VolbenchError(f"{h.name}: no cone window fits the {h.n} rows from {h.first_date} to "
                            f"{h.last_date} ({text}); use shorter windows or a longer range")
    return kept, dropped


def place_in_cone(
    history: PriceHistory,
    vols: Sequence[float | None],
    days: int,
    estimator: str = "close_to_close",
    windows: Sequence[int] = DEFAULT_CONE_WINDOWS,
    *,
    annualization: float = DEFAULT_ANNUALIZATION,
) -> tuple[ConePlacement | None, ...]:
    """``vol_cone(history, estimator, windows, annualization=...).place(vol, days)`` for each vol
    (``None`` gives ``None``), without the cone's table.

    The same rolling series, window rules, errors and ranks as :func:`vol_cone` and
    :meth:`Cone.place` (the same code), so the same numbers; only the percentile summary of every
    column, which a placement does not read, is left out (a survey places two vols per series).

    Raises
    ------
    VolbenchError
        As :func:`vol_cone` and :meth:`Cone.place`.
    """
    a = check_annualization(annualization)
    spec = get_spec(estimator)
    ws = _check_windows(windows)
    kept, _ = _columns(history, spec, ws, a)

    def rank(vol: float, window: int) -> float:
        return rank_unsorted(kept[window].vols, vol)

    return tuple(None if v is None else place_vol(v, days, tuple(kept), rank, spec.label) for v in vols)
