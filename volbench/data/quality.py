"""Data-quality checks on parsed price rows.

Each check is a function of aligned arrays (dates, prices, file lines) returning
:class:`~volbench.data.history.Finding` objects; it never changes the data. Loops run over the
rows that were flagged, not over every row.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

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
    if not ratio > 0:
        return None
    best = min(_SPLITS, key=lambda r: abs(np.log(ratio) - np.log(r)))
    return _SPLITS[best] if abs(np.log(ratio) - np.log(best)) < _SPLIT_TOLERANCE else None


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


def check_jumps(dates, c, lines, jump_z: float, jump_min: float) -> list[Finding]:
    """Returns so large they are probably an unadjusted split or a bad tick (robust z-score)."""
    if len(c) < 4:
        return []
    r = np.diff(np.log(c))
    med = np.median(r)
    mad = 1.4826 * np.median(np.abs(r - med))
    scale = mad if mad > 0 else np.std(r)
    if not scale > 0:
        return []
    z = (r - med) / scale
    out = []
    reversal_of_previous = -1
    for i in np.flatnonzero((np.abs(z) > jump_z) & (np.abs(r) > jump_min)):
        if i == reversal_of_previous:
            continue  # the bar that undoes a bad tick is itself fine
        row = i + 1
        ratio = float(np.exp(min(r[i], 700.0)))  # from the log return: no overflow on absurd prices
        split = split_label(ratio)
        reverses = i + 1 < len(r) and abs(r[i + 1] + r[i]) < 0.25 * abs(r[i])
        if reverses:
            reversal_of_previous = i + 1
        if split and not reverses:
            what = (f"close moved {ratio:.3f}x ({c[row - 1]:g} to {c[row]:g}): looks like an unadjusted "
                    f"{split}; adjust earlier prices for it (excluding the row does not remove the jump)")
        elif reverses:
            what = (f"close moved {ratio:.3f}x and reversed on the next bar: looks like a bad tick; "
                    "exclude flagged rows or correct the price")
        else:
            what = (f"close moved {ratio:.3f}x ({r[i]:+.1%} log return, robust z {z[i]:.0f}); "
                    "check for a missing adjustment or a bad price")
        out.append(Finding("warning", "jump", int(lines[row]), _iso(dates[row]), "close", what, (int(lines[row]),)))
    return out


def run_checks(dates, o, h, l, c, lines, settings: QualitySettings) -> list[Finding]:
    """All row-level checks on clean (finite, positive, ascending, unique-date) rows."""
    return (
        check_ohlc(dates, o, h, l, c, lines)
        + check_gaps(dates, lines, settings.gap_days)
        + check_stale(dates, c, lines, settings.stale_run)
        + check_jumps(dates, c, lines, settings.jump_z, settings.jump_min)
    )


def parse_numbers(texts: pd.Series, decimal_comma: bool) -> pd.Series:
    """Text cells to floats (NaN where empty or not a number); thousands separators allowed."""
    s = texts.str.replace("\u00a0", "", regex=False).str.replace(" ", "", regex=False)
    if decimal_comma:
        s = s.str.replace(".", "", regex=False).str.replace(",", ".", regex=False)
    else:
        s = s.str.replace(",", "", regex=False)
    return pd.to_numeric(s, errors="coerce")
