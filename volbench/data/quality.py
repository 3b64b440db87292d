"""Data-quality checks on parsed price rows.

Each check is a function of aligned arrays (dates, prices, file lines) returning
:class:`~volbench.data.history.Finding` objects; it never changes the data. Loops run over the
rows that were flagged, not over every row.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from volbench.data.history import Finding, _iso
from volbench.errors import VolbenchError


@dataclass(frozen=True)
class QualitySettings:
    """Thresholds for the quality checks.

    gap_days
        A calendar gap longer than this many days between consecutive rows is reported.
    stale_run
        This many or more consecutive identical closes are reported as a stale run.
    jump_z
        A return whose robust z-score (median / 1.4826 MAD) exceeds this is reported as a jump.
    jump_min
        ...and whose absolute log return also exceeds this (avoids flagging near-constant series).
    """

    gap_days: int = 5
    stale_run: int = 5
    jump_z: float = 10.0
    jump_min: float = 0.05

    def __post_init__(self) -> None:
        if self.gap_days < 1:
            raise VolbenchError(f"gap_days must be >= 1, got {self.gap_days}")
        if self.stale_run < 2:
            raise VolbenchError(f"stale_run must be >= 2, got {self.stale_run}")
        if not self.jump_z > 0:
            raise VolbenchError(f"jump_z must be > 0, got {self.jump_z}")


# price ratio C_t / C_{t-1} -> how a split of that ratio is written (2:1 split halves the price)
_SPLITS = {}
for _n in range(1, 6):
    for _m in range(1, 6):
        # only ratios of at least 3:2 either way: a 5:4 "split" is a plausible genuine move
        if _n != _m and np.gcd(_n, _m) == 1 and max(_n, _m) / min(_n, _m) >= 1.5:
            _SPLITS[_m / _n] = f"{_n}:{_m}" + (" reverse split" if _m > _n else " split")
_SPLIT_TOLERANCE = 0.05  # in log points


def split_label(ratio: float) -> str | None:
    """Name the split a price ratio looks like (``0.5`` -> ``"2:1 split"``), or ``None``."""
    found = split_match(ratio)
    return None if found is None else found[1]


def check_ohlc(dates, o, h, l, c, lines) -> list[Finding]:
    """High below low; open or close outside [low, high]."""
    out: list[Finding] = []
    if h is None or l is None:
        return out
    for i in np.flatnonzero(h < l):
        out.append(Finding("warning", "high_below_low", int(lines[i]), _iso(dates[i]), "high",
                           f"high {h[i]:g} is below low {l[i]:g}; range estimators will be wrong for this "
                           "bar: fix the row or exclude flagged rows", (int(lines[i]),)))
    ok = h >= l
    for name, arr in (("open", o), ("close", c)):
        if arr is None:
            continue
        bad = ok & ((arr - h > h * 1e-12) | (l - arr > l * 1e-12))  # no overflow near the float limit
        for i in np.flatnonzero(bad):
            out.append(Finding("warning", "outside_range", int(lines[i]), _iso(dates[i]), name,
                               f"{name} {arr[i]:g} lies outside the bar's range [{l[i]:g}, {h[i]:g}]; "
                               "check the row or exclude flagged rows", (int(lines[i]),)))
    return out


def check_gaps(dates, lines, gap_days: int) -> list[Finding]:
    """Calendar gaps longer than ``gap_days`` between consecutive rows."""
    if len(dates) < 2:
        return []
    days = np.diff(dates.astype("datetime64[D]").astype(np.int64))
    out = []
    for i in np.flatnonzero(days > gap_days):
        out.append(Finding("info", "gap", int(lines[i + 1]), _iso(dates[i + 1]), "date",
                           f"{int(days[i])} calendar days since the previous row ({_iso(dates[i])}); "
                           "the return across the gap spans several days"))
    return out


def check_stale(dates, c, lines, stale_run: int) -> list[Finding]:
    """Runs of ``stale_run`` or more identical closes (stale or filled prices)."""
    if len(c) < stale_run:
        return []
    same = np.concatenate([[False], c[1:] == c[:-1]])
    # run starts where same goes False->True; run of k equal diffs = k+1 identical closes
    edges = np.diff(np.concatenate([[0], same.astype(np.int8), [0]]))
    starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
    out = []
    for s, e in zip(starts, ends):
        length = e - s + 1
        if length >= stale_run:
            first = s - 1
            out.append(Finding("warning", "stale_run", int(lines[first]), _iso(dates[first]), "close",
                               f"close stays at {c[first]:g} for {length} rows ({_iso(dates[first])} to "
                               f"{_iso(dates[e - 1])}); stale or filled prices understate volatility",
                               tuple(int(x) for x in lines[s:e])))
    return out


@dataclass(frozen=True)
class Split:
    """A detected unadjusted split: the bar at ``index`` is the first at the new price level.

    ``factor`` is the exact price factor of the named split (0.5 for a 2:1 split), ``observed``
    the close-to-close ratio seen in the file.
    """

    index: int
    factor: float
    label: str
    observed: float


LOCAL_BARS = 32
"""Bars on each side of a move used for its local robust scale."""
_SPLIT_TOL = (0.01, 0.05)
"""Bounds, in log points, of the tolerance around a split ratio (3 local standard deviations)."""
_REVERSAL_BARS = 3
_PERSIST_BARS = 5


def _robust_sd(x: np.ndarray) -> float:
    if not len(x):
        return 0.0
    return float(1.4826 * np.median(np.abs(x - np.median(x))))


def check_jumps(dates, c, lines, jump_z: float, jump_min: float, volume=None) -> tuple[list[Finding], list[Split]]:
    """Tell bad ticks and unadjusted splits from genuine large moves (docs/METHODS.md, Import).

    A return is a candidate when its robust z-score against the whole history exceeds
    ``jump_z`` and its size exceeds ``jump_min``. A candidate that is not extreme against the
    ``2 * LOCAL_BARS`` returns around it (a volatile stretch) is a genuine move: ``info``
    ``large_move``. Otherwise a move the price undoes within three bars is a bad tick
    (``warning`` ``jump`` on the bars in between); a move that persists and lies within three
    local standard deviations (between 0.01 and 0.05 log points) of a split ratio is an
    unadjusted split (``warning`` ``jump``, returned as a :class:`Split`); anything else is a
    genuine move (``info`` ``large_move``).
    """
    n = len(c)
    if n < 4:
        return [], []
    r = np.diff(np.log(c))
    med = float(np.median(r))
    scale = _robust_sd(r)
    if not scale > 0:
        scale = float(np.std(r))
    if not scale > 0:
        return [], []
    z = (r - med) / scale
    out: list[Finding] = []
    splits: list[Split] = []
    done_until = -1
    for i in np.flatnonzero((np.abs(z) > jump_z) & (np.abs(r) > jump_min)):
        if i <= done_until:
            continue  # a bar already explained (the undoing half of a bad tick)
        row = i + 1
        ratio = float(np.exp(np.clip(r[i], -700.0, 700.0)))  # no overflow on absurd prices
        lo, hi = max(0, i - LOCAL_BARS), min(len(r), i + LOCAL_BARS + 1)
        near = np.concatenate([r[lo:max(lo, i - 1)], r[min(hi, i + 1 + _REVERSAL_BARS):hi]])
        local = _robust_sd(near) if len(near) >= 8 else scale
        local = local if local > 0 else scale
        local_z = abs(r[i] - med) / local
        back = next((j for j in range(1, _REVERSAL_BARS + 1) if i + j < len(r)
                     and abs(r[i:i + j + 1].sum()) < 0.25 * abs(r[i])), None)
        when, line = _iso(dates[row]), int(lines[row])
        if local_z <= jump_z:
            out.append(Finding("info", "large_move", line, when, "close",
                               f"close moved {r[i]:+.1%} (log return; robust z {z[i]:.0f} against the whole "
                               f"history but {local_z:.1f} against the {2 * LOCAL_BARS} bars around it): a "
                               "large move in a volatile stretch, treated as genuine and kept"))
            continue
        if back is not None:
            bad = tuple(int(x) for x in lines[row:row + back])
            span = "the next bar" if back == 1 else f"{back} bars"
            out.append(Finding("warning", "jump", line, when, "close",
                               f"close moved {ratio:.3f}x and reversed on {span}: looks like a bad tick; "
                               "exclude flagged rows or correct the price", bad))
            done_until = i + back
            continue
        after = np.cumsum(r[i + 1:i + 1 + _PERSIST_BARS])
        persists = not len(after) or abs(float(np.median(after))) < 0.5 * abs(r[i])
        tol = min(_SPLIT_TOL[1], max(_SPLIT_TOL[0], 3 * local))
        split = split_match(ratio, tol)
        if split is not None and persists:
            factor, label = split
            splits.append(Split(int(row), factor, label, ratio))
            support = _volume_support(volume, row, factor)
            out.append(Finding("warning", "jump", line, when, "close",
                               f"close moved {ratio:.3f}x ({c[row - 1]:g} to {c[row]:g}) and stayed there{support}: "
                               f"looks like an unadjusted {label}; adjust earlier prices for it (Adjust splits, or --adjust-splits; "
                               "excluding the row does not remove the jump)", (line,)))
            continue
        why = ("matches no split ratio" if split is None
               else f"is near a {label_of(split)} ratio but does not persist")
        out.append(Finding("info", "large_move", line, when, "close",
                           f"close moved {r[i]:+.1%} (log return, robust z {z[i]:.0f}, {local_z:.0f} against the "
                           f"bars around it); the move persists and {why}: treated as a genuine move and kept"
                           if persists else
                           f"close moved {r[i]:+.1%} (log return, robust z {z[i]:.0f}) and neither reverses "
                           f"within {_REVERSAL_BARS} bars nor persists; kept, check the price if it is not "
                           "a genuine move"))
    return out, splits


def label_of(split: tuple[float, str]) -> str:
    return split[1].split()[0]


def split_match(ratio: float, tol: float = _SPLIT_TOLERANCE) -> tuple[float, str] | None:
    """The split whose price factor lies within ``tol`` log points of ``ratio``, or ``None``."""
    if not ratio > 0:
        return None
    best = min(_SPLITS, key=lambda f: abs(np.log(ratio) - np.log(f)))
    return (best, _SPLITS[best]) if abs(np.log(ratio) - np.log(best)) < tol else None


def _volume_support(volume, row: int, factor: float) -> str:
    if volume is None:
        return ""
    before = volume[max(0, row - 20):row]
    after = volume[row:row + 20]
    before, after = before[np.isfinite(before) & (before > 0)], after[np.isfinite(after) & (after > 0)]
    if len(before) < 3 or len(after) < 3:
        return ""
    change = float(np.median(after) / np.median(before))
    if abs(np.log(change) + np.log(factor)) < 0.5 * abs(np.log(factor)):
        return f", and volume changed {change:.2f}x as a split makes it"
    return ""


def check_stale_open(dates, o, c, lines, share: float = 0.2) -> list[Finding]:
    """An ``info`` finding when at least ``share`` of the session opens equal the previous close exactly.

    Only bars that start a new calendar date count: within an intraday session a bar opening at the
    previous bar's close is normal trading, not a stale print.
    """
    if o is None or len(c) < 20:
        return []
    day = np.asarray(dates).astype("datetime64[D]")
    starts = day[1:] != day[:-1]
    n = int(starts.sum())
    if n < 20:
        return []
    k = int((o[1:][starts] == c[:-1][starts]).sum())
    if k < share * n:
        return []
    return [Finding("info", "stale_open", None, None, "open",
                    f"the open equals the previous close on {k:,} of {n:,} session opens ({k / n:.0%}); if "
                    "these are stale opening prints rather than traded opens, estimators that use the open "
                    "(Garman-Klass, Rogers-Satchell, Yang-Zhang) see no overnight move and read low")]


def run_checks(dates, o, h, l, c, lines, settings: QualitySettings, volume=None) -> tuple[list[Finding], list[Split]]:
    """All row-level checks on clean (finite, positive, ascending, unique-date) rows, and the
    unadjusted splits detected."""
    jumps, splits = check_jumps(dates, c, lines, settings.jump_z, settings.jump_min, volume)
    return (
        check_ohlc(dates, o, h, l, c, lines)
        + check_gaps(dates, lines, settings.gap_days)
        + check_stale(dates, c, lines, settings.stale_run)
        + check_stale_open(dates, o, c, lines)
        + jumps
    ), splits
