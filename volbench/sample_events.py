"""Invented scheduled events for the sample market, planted in the prices by a seeded generator.

Ironvale Mining (fictional) publishes a production report every quarter. On each report the
price jumps by a normal move of known size between the close before and the open after the
news, on top of its ordinary GARCH day; the jumps do not feed the ordinary variance recursion.
:func:`plant` adds the moves to the simulated bars; :func:`write_events` writes the events file
(past and coming reports) and returns the true parameters for ``PARAMETERS.json``.

Called from :mod:`volbench.samples`; draws come from their own seeded generator, so every other
sample series is unchanged.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from volbench.events.mapping import event_positions

EVENTS_FOLDER = "events"
"""Sub-folder of the sample folder holding events files (kept apart from the price files)."""


@dataclass(frozen=True)
class EventPlan:
    """True parameters of one series' planted events."""

    file: str
    events_file: str
    label: str
    move_sd: float  # standard deviation of the event's log move (per event, not annualized)
    seed: int
    report_months: tuple[int, ...] = (1, 4, 7, 10)
    day_range: tuple[int, int] = (18, 28)  # calendar day of the month drawn in this range, rolled to a weekday
    future_quarters: int = 4  # reports after the last bar, for the option-life count


PLANS = (
    EventPlan("ironvale_mining.csv", f"{EVENTS_FOLDER}/ironvale_mining_events.csv",
              "production report", move_sd=0.06, seed=20261214),
)


def schedule(plan: EventPlan, first: str, last: str) -> tuple[tuple[str, str, str, float], ...]:
    """(date, timing, label, move) of every report from ``first`` to ``future_quarters`` after ``last``."""
    rng = np.random.default_rng(plan.seed)
    start, end = pd.Timestamp(first), pd.Timestamp(last)
    out = []
    future = 0
    for year in range(start.year, end.year + 3):
        for month in plan.report_months:
            day = int(rng.integers(plan.day_range[0], plan.day_range[1] + 1))
            timing = ("before_open", "after_close")[int(rng.integers(0, 2))]
            move = float(rng.normal(0.0, plan.move_sd))
            d = pd.Timestamp(year, month, day)
            if d.weekday() >= 5:  # a weekend day rolls to the Monday
                d += pd.offsets.BDay(1)
            if d <= start:
                continue
            if d > end:
                if future >= plan.future_quarters:
                    continue
                future += 1
            quarter, period_year = (4, year - 1) if month < 3 else ((month - 1) // 3, year)
            out.append((d.strftime("%Y-%m-%d"), timing, f"Q{quarter} {period_year} {plan.label}", move))
    return tuple(out)


def _plan_for(file: str) -> EventPlan | None:
    return next((p for p in PLANS if p.file == file), None)


def _placed(plan: EventPlan, days: np.ndarray) -> tuple[tuple, np.ndarray]:
    """The plan's events over bar days ``days`` and the bar each moves (``len(days)``: after the last)."""
    events = schedule(plan, str(days[0]), str(days[-1]))
    pos = event_positions(days, np.array([e[0] for e in events], dtype="datetime64[D]"), [e[1] for e in events])
    return events, pos


def plant(file: str, frame: pd.DataFrame) -> pd.DataFrame:
    """The simulated bars of ``file`` with its event moves added (unchanged when it has no plan).

    Each move J lands between the close before the event and the open of the bar that carries
    it (the bar dated on a before-open report, the next bar for an after-close one): that bar's
    open, high, low and close, and every later bar, are multiplied by exp(J).
    """
    plan = _plan_for(file)
    if plan is None:
        return frame
    events, pos = _placed(plan, pd.to_datetime(frame["Date"]).to_numpy().astype("datetime64[D]"))
    shift = np.zeros(len(frame))
    inside = pos < len(frame)
    np.add.at(shift, pos[inside], np.array([e[3] for e in events])[inside])
    factor = np.exp(np.cumsum(shift))
    out = frame.copy()
    for c in ("Open", "High", "Low", "Close"):
        out[c] = out[c] * factor
    return out


def write_events(out: str | Path, dates: pd.DatetimeIndex) -> list[dict]:
    """Write each plan's events file under ``out`` and return its true parameters for PARAMETERS.json.

    ``dates`` are the bar dates of the sample series.
    """
    out = Path(out)
    days = dates.to_numpy().astype("datetime64[D]")
    meta = []
    for plan in PLANS:
        events, pos = _placed(plan, days)
        path = out / plan.events_file
        path.parent.mkdir(parents=True, exist_ok=True)
        frame = pd.DataFrame({"date": [e[0] for e in events], "label": [e[2] for e in events],
                              "timing": [e[1] for e in events]})
        frame.to_csv(path, index=False, lineterminator="\n")
        past = [e for e, p in zip(events, pos) if p < days.size]
        meta.append({
            "file": plan.file, "events_file": plan.events_file,
            "description": f"quarterly {plan.label}: a normal log move of standard deviation {plan.move_sd} added "
                           "between the close before and the open after the news; moves do not feed the GARCH "
                           "variance",
            "seed": plan.seed, "event_move_sd": plan.move_sd, "event_variance": plan.move_sd**2,
            "expected_abs_move": round(float(np.sqrt(2 / np.pi) * plan.move_sd), 6),
            "past_events": len(past), "future_events": len(events) - len(past),
            "moves": {f"{e[0]} {e[1]}": round(e[3], 6) for e in past},
        })
    return meta
