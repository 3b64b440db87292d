"""Export tables of the events part and of the pricing vol's price promises.

``events`` (with ``--events FILE``): per series the ex-event estimate of every estimator beside
the blended one, the event move with its interval, the events in the option's life and the
event-aware vols. ``price_bands`` and ``breakevens`` (with a comparison): the numbers of
``volbench compare --format json``'s ``bands_by_candidate``, ``straddle_by_candidate`` and
``breakeven_by_candidate``, one row per candidate and band, or per candidate and option, read
from the same :class:`~volbench.pricing.promise.PromiseCheck`. Layout: docs/EXPORT_SCHEMA.md.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
import pandas as pd

from volbench import analysis
from volbench.data.history import PriceHistory
from volbench.estimators import REGISTRY
from volbench.export.layout import BREAKEVENS_COLUMNS, EVENTS_COLUMNS, PRICE_BANDS_COLUMNS
from volbench.export.sections import SectionResult, _finish, _note, _run
from volbench.settings import Settings

EVENTS_PERCENT = ("vol", "ci_low", "ci_high", "blended_vol", "expected_abs_move")


def events_section(histories: Sequence[PriceHistory], settings: Settings,
                   given: Mapping[str, Any] | None = None) -> SectionResult:
    """The ``events`` table: one row per ex-event estimator, the event move and the event-aware vols."""
    results, failed = _run("events", histories, lambda h: analysis.events_for(h, settings), given)
    blended = {h.name: analysis.estimates_for(h, settings.with_groups(
        estimation=settings.estimation.with_changes(window=r.window))).estimates
        for h in histories if (r := results.get(h.name)) is not None}
    rows, notes = [], []
    for name, r in results.items():
        base = {"series": name, "as_of": r.as_of, "events": r.count, "events_in_life": r.events_in_life,
                "days": r.days}
        for key, spec in REGISTRY.items():
            e = r.ex_event.get(key)
            b = blended[name].get(key)
            rows.append({**base, "row": "ex_event", "key": key, "label": spec.label,
                         "window": np.nan if e is None or e.window is None else e.window,
                         "vol": np.nan if e is None else e.vol, "ci_low": np.nan if e is None else e.ci_low,
                         "ci_high": np.nan if e is None else e.ci_high, "n": np.nan if e is None else e.n,
                         "blended_vol": np.nan if b is None else b.vol, "note": r.unavailable.get(key, "")})
        mv = r.event_move
        if mv is not None:
            rows.append({**base, "row": "event_move", "key": "event_move", "label": "event move (per event)",
                         "variance": mv.variance, "variance_ci_low": mv.ci_low, "variance_ci_high": mv.ci_high,
                         "expected_abs_move": mv.expected_abs_move, "n": mv.n_events,
                         "note": "variance of the log move one event adds, net of an ordinary day, with its interval"})
        for c in r.candidates(r.days).items if r.days is not None else ():
            rows.append({**base, "row": "event_aware", "key": c.key, "label": c.label, "window": c.window,
                         "vol": c.vol, "note": c.note})
        notes += [_note("events", name, "warning", w) for w in r.warnings]
        notes += [_note("events", name, "finding", f.message) for f in r.findings]
    table = pd.DataFrame(rows, columns=list(EVENTS_COLUMNS)) if rows else None
    return _finish("events", results, failed, {"events": table}, {"events": EVENTS_PERCENT}, notes)


BAND_PERCENT = ("vol", "low_move", "high_move", "promised", "observed", "observed_ci_low", "observed_ci_high",
                "observed_below", "observed_above", "overlapping_observed")
BREAKEVEN_PERCENT = ("vol", "breakeven_move", "promised_share_beyond", "observed_share_beyond", "observed_ci_low",
                     "observed_ci_high", "overlapping_share_beyond")


def promise_tables(comparisons: Mapping[str, Any]) -> tuple[dict[str, pd.DataFrame], dict[str, tuple[str, ...]]]:
    """``price_bands`` and ``breakevens`` from each comparison's price promises (same numbers as the JSON)."""
    bands, bes = [], []
    for name, c in comparisons.items():
        p = getattr(c, "promises", None)
        if p is None:
            continue
        front = {"series": name, "as_of": p.as_of, "days": p.days, "spot": p.spot}
        b = p.bands.copy()
        for i, (k, v) in enumerate(front.items()):
            b.insert(i, k, v)
        bands.append(b.reindex(columns=list(PRICE_BANDS_COLUMNS)))
        st = p.straddles.copy()
        st.insert(0, "option", "straddle")
        be = p.breakevens.rename(columns={"kind": "option"}).copy()
        be["breakeven_low"] = np.where(be["option"] == "put", be["breakeven_price"], np.nan)
        be["breakeven_high"] = np.where(be["option"] == "call", be["breakeven_price"], np.nan)
        for df in (st, be):
            for i, (k, v) in enumerate(front.items()):
                df.insert(i, k, v)
            bes.append(df.reindex(columns=list(BREAKEVENS_COLUMNS)))
    tables, percent = {}, {}
    if bands:
        tables["price_bands"] = pd.concat(bands, ignore_index=True)
        percent["price_bands"] = BAND_PERCENT
    if bes:
        t = pd.concat(bes, ignore_index=True)
        order = {n: i for i, n in enumerate(comparisons)}
        t = t.sort_values(["series", "option"], key=lambda s: s.map(order) if s.name == "series" else
                          s.ne("straddle"), kind="stable").reset_index(drop=True)
        tables["breakevens"] = t
        percent["breakevens"] = BREAKEVEN_PERCENT
    return tables, percent
