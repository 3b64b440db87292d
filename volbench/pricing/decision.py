"""The decision record: the vol chosen for pricing, set against every candidate, the cone and the
scaling verdicts, with the rationale and who prepared it.

:func:`decision_record` takes a finished :class:`~volbench.pricing.compare.Comparison` (every
candidate with its interval), the decision settings, and optionally the cone and the scaling
check of the same history; it computes nothing new except the chosen vol's gaps and its cone
percentile (docs/METHODS.md, "Comparison with a pricing vol").
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import pandas as pd

from volbench.errors import VolbenchError
from volbench.format import pct, points

CAUTION = ("Volatility estimates are statistical and carry model risk; they are not advice. "
           "Your firm's model-validation policy governs their use.")

DECISION_COLUMNS = ("series", "as_of", "days", "decision_vol", "kind", "key", "label", "vol", "ci_low", "ci_high",
                    "gap_points", "value", "text")
"""Columns of the decision table (fixed order)."""


@dataclass(frozen=True)
class DecisionRecord:
    """A chosen vol and what bears on it.

    Attributes
    ----------
    series, as_of, days
        The history, its last date, the option's life in bars (``None`` without a comparison).
    vol, rationale, prepared_by
        As given (``vol`` may be ``None``: a record of the rationale alone).
    candidates
        One dict per candidate: key, label, source, vol, ci_low, ci_high, gap_points =
        100 x (chosen vol - candidate vol), within_interval (``None`` when the candidate has no interval).
    cone_percentile, cone_note
        Percentile (0-100) of the chosen vol in the cone at the option's life, and the placement's note.
    verdicts
        Scaling verdicts that bear on the choice: property, status, message (every non-consistent one).
    lines
        The record in plain sentences.
    """

    series: str
    as_of: str | None
    days: int | None
    vol: float | None
    rationale: str
    prepared_by: str
    candidates: tuple[dict, ...] = ()
    cone_percentile: float | None = None
    cone_note: str = ""
    verdicts: tuple[dict, ...] = ()
    lines: tuple[str, ...] = ()
    caution: str = CAUTION
    unavailable: dict = field(default_factory=dict)

    def as_dict(self) -> dict:
        return {"series": self.series, "as_of": self.as_of, "days": self.days, "vol": self.vol,
                "rationale": self.rationale, "prepared_by": self.prepared_by,
                "candidates": [dict(c) for c in self.candidates], "cone_percentile": self.cone_percentile,
                "cone_note": self.cone_note, "scaling_verdicts": [dict(v) for v in self.verdicts],
                "reading": list(self.lines), "unavailable": dict(self.unavailable), "caution": self.caution,
                "conventions": {"gap_points": "100 x (chosen vol - candidate vol)",
                                "within_interval": "chosen vol inside the candidate's own interval (null: none)"}}

    def table(self) -> pd.DataFrame:
        """The record as rows of :data:`DECISION_COLUMNS`."""
        base = {"series": self.series, "as_of": self.as_of, "days": self.days, "decision_vol": self.vol}
        rows = [dict(base, kind="record", key="rationale", text=self.rationale),
                dict(base, kind="record", key="prepared_by", text=self.prepared_by)]
        for c in self.candidates:
            inside = c["within_interval"]
            text = ("no interval" if inside is None else
                    "inside the candidate's interval" if inside else "outside the candidate's interval")
            rows.append(dict(base, kind="candidate", key=c["key"], label=c["label"], vol=c["vol"],
                             ci_low=c["ci_low"], ci_high=c["ci_high"], gap_points=c["gap_points"], text=text))
        if self.cone_percentile is not None:
            rows.append(dict(base, kind="cone", key="percentile", label="cone percentile (0-100)",
                             value=self.cone_percentile, text=self.cone_note))
        rows += [dict(base, kind="scaling verdict", key=v["property"], label=v["status"], text=v["message"])
                 for v in self.verdicts]
        rows += [dict(base, kind="not available", key=k, text=why) for k, why in self.unavailable.items()]
        rows += [dict(base, kind="reading", text=t) for t in self.lines]
        rows.append(dict(base, kind="caution", text=self.caution))
        df = pd.DataFrame(rows, columns=list(DECISION_COLUMNS))
        for col in ("decision_vol", "vol", "ci_low", "ci_high", "gap_points", "value"):
            df[col] = df[col].astype(float)
        df["days"] = df["days"].astype("Int64")
        return df


def _finite(v) -> float | None:
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


def decision_record(series: str, decision, comparison=None, *, cone=None, verdicts: Sequence = (),
                    as_of: str | None = None, unavailable: dict | None = None) -> DecisionRecord:
    """Set the chosen vol against the comparison's candidates, the cone and the scaling verdicts.

    Parameters
    ----------
    series
        Series name.
    decision
        :class:`~volbench.settings.DecisionSettings`.
    comparison
        The comparison of the same history (``None``: no candidates, the record says so).
    cone
        A :class:`~volbench.pricing.cone.Cone` of the history, to place the chosen vol at the
        option's life (``None``: no percentile).
    verdicts
        Scaling :class:`~volbench.scaling.verdicts.Verdict` objects; the non-consistent ones are kept.

    Raises
    ------
    VolbenchError
        ``decision`` is not a decision settings object.
    """
    if not hasattr(decision, "rationale"):
        raise VolbenchError(f"decision must be DecisionSettings, got {type(decision).__name__}")
    missing = dict(unavailable or {})
    v = decision.vol
    days = None if comparison is None else int(comparison.days)
    cands: list[dict] = []
    if comparison is None:
        missing.setdefault("candidates", "no comparison: give --pricing-vol and --days")
    else:
        as_of = comparison.as_of
        for r in comparison.candidates.itertuples(index=False):
            lo, hi = _finite(r.ci_low), _finite(r.ci_high)
            inside = None if v is None or lo is None or hi is None else bool(lo <= v <= hi)
            cands.append({"key": r.key, "label": r.label, "source": r.source, "vol": float(r.vol),
                          "ci_low": lo, "ci_high": hi,
                          "gap_points": None if v is None else 100.0 * (v - float(r.vol)),
                          "within_interval": inside})
    percentile, note = None, ""
    if v is not None and cone is not None and days is not None:
        try:
            placed = cone.place(v, days)
            percentile, note = float(placed.percentile), placed.note
        except VolbenchError as exc:
            missing["cone"] = str(exc)
    bearing = tuple(x.as_dict() for x in verdicts if x.status != "consistent")
    lines: list[str] = []
    if v is None:
        lines.append("no vol chosen; the record holds the rationale and who prepared it")
    else:
        lines.append(f"chosen vol {pct(v, 2)}" + (f" for an option of {days} bars" if days else ""))
        if cands:
            inside = [c for c in cands if c["within_interval"]]
            with_ci = [c for c in cands if c["within_interval"] is not None]
            far = max(cands, key=lambda c: abs(c["gap_points"]))
            lines.append(f"it lies inside {len(inside)} of the {len(with_ci)} candidate intervals; the largest "
                         f"gap is {points(abs(far['gap_points']))} vol points to {far['label']} ({pct(far['vol'], 1)})")
        if percentile is not None:
            lines.append(f"it sits at percentile {percentile:.0f} of {note}")
    for x in bearing:
        lines.append(f"scaling check: {x['property']} {x['status']}: {x['message']}")
    if decision.rationale:
        lines.append(f"rationale: {decision.rationale}")
    if decision.prepared_by:
        lines.append(f"prepared by: {decision.prepared_by}")
    return DecisionRecord(series=series, as_of=as_of, days=days, vol=v, rationale=decision.rationale,
                          prepared_by=decision.prepared_by, candidates=tuple(cands), cone_percentile=percentile,
                          cone_note=note, verdicts=bearing, lines=tuple(lines), unavailable=missing)
