"""The documented, stable column schema of the exported estimates table.

Pricing sheets link to these columns by name, so the list below is a contract: columns are only
ever added at the end (with a new :data:`SCHEMA_VERSION`), never renamed, removed or reordered.
``docs/EXPORT_SCHEMA.md`` describes each column; a test keeps that page and this list in step.
"""

from __future__ import annotations

import json
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from volbench import __version__
from volbench.data.history import PriceHistory
from volbench.estimators import REGISTRY, EstimateReport

SCHEMA_VERSION = "2"
"""Version of the export layout (estimates columns and the JSON envelope)."""


@dataclass(frozen=True)
class Column:
    """One column of the estimates table: name, kind and meaning."""

    name: str
    kind: str
    """``"text"``, ``"integer"``, ``"number"`` or ``"percent"`` (a decimal shown as a percentage)."""
    description: str


ESTIMATES_SCHEMA: tuple[Column, ...] = (
    Column("series", "text", "series name (symbol column, or the file name without extension)"),
    Column("as_of", "text", "last bar of the estimation window, ISO date YYYY-MM-DD"),
    Column("estimator", "text", "estimator key: close_to_close, parkinson, garman_klass, "
                                "rogers_satchell, yang_zhang, ewma"),
    Column("estimator_label", "text", "human-readable estimator name"),
    Column("window", "integer", "bars in the window ending at as_of, or the text 'all' for the whole history"),
    Column("annualization", "number", "bars per year used to annualize (vol = sqrt(per-bar variance x A))"),
    Column("vol", "percent", "annualized volatility as a decimal (0.2345 = 23.45 %); empty when unavailable"),
    Column("ci_low", "percent", "lower bound of the confidence interval, annualized decimal"),
    Column("ci_high", "percent", "upper bound of the confidence interval, annualized decimal"),
    Column("confidence", "percent", "confidence level of the interval (0.95)"),
    Column("n", "integer", "observations behind the estimate (returns or bars); empty when unavailable"),
    Column("ci_method", "text", "how the interval was computed (exact chi-square or approximate)"),
    Column("caveat", "text", "what the interval leaves out: range estimators read low on discretely traded "
                             "prices (size given); empty for close-based estimators"),
    Column("unavailable_reason", "text", "why the estimator could not be computed; empty when it was"),
    Column("first_date", "text", "first bar of the history used, ISO date"),
    Column("rows", "integer", "rows of the history up to as_of after the quality policy"),
    Column("price_basis", "text", "'close' or 'adjusted close'"),
    Column("source_file", "text", "name of the price file"),
    Column("source_sha256", "text", "SHA-256 of the price file's bytes when it was loaded"),
    Column("flagged_rows", "text", "'kept' or 'excluded': what was done with rows flagged by quality warnings"),
    Column("excluded_lines", "text", "file line numbers left out by that choice, space-separated; empty if none"),
    Column("findings", "text", "count of data-quality findings, e.g. '2 errors, 4 warnings, 0 notes'"),
    Column("volbench_version", "text", "volbench version that produced the file"),
    Column("schema_version", "text", "version of this column layout"),
    Column("created", "text", "creation time of the export, UTC ISO 8601"),
    Column("settings", "text", "every setting behind the numbers, as compact JSON"),
)

ESTIMATES_COLUMNS: tuple[str, ...] = tuple(c.name for c in ESTIMATES_SCHEMA)
ESTIMATES_PERCENT: tuple[str, ...] = tuple(c.name for c in ESTIMATES_SCHEMA if c.kind == "percent")
_INTEGER = tuple(c.name for c in ESTIMATES_SCHEMA if c.kind == "integer" and c.name != "window")
_NUMBER = tuple(c.name for c in ESTIMATES_SCHEMA if c.kind in ("number", "percent"))


def findings_summary(history: PriceHistory) -> str:
    """``"2 errors, 4 warnings, 0 notes"`` for a history's quality findings."""
    c = {s: sum(f.severity == s for f in history.findings) for s in ("error", "warning", "info")}
    return f"{c['error']} errors, {c['warning']} warnings, {c['info']} notes"


def settings_json(settings: Mapping) -> str:
    """Compact, key-sorted JSON of the settings (one cell per row in the estimates table)."""
    return json.dumps(settings, sort_keys=True, separators=(",", ":"), default=str, allow_nan=False)


def estimates_table(
    reports: Sequence[EstimateReport],
    *,
    created: str,
    settings: Mapping,
    sources: Sequence[PriceHistory] | None = None,
) -> pd.DataFrame:
    """The estimates table in the documented schema: one row per series and registered estimator.

    Parameters
    ----------
    reports
        One :class:`~volbench.estimators.EstimateReport` per series.
    created
        Creation time (UTC ISO) written in every row.
    settings
        Settings behind the numbers (window, annualization, as-of, options, import options).
    sources
        The histories as loaded (before the as-of cut), aligned with ``reports``; their findings
        and excluded lines are reported. Defaults to each report's own history.

    Returns
    -------
    pandas.DataFrame
        Columns exactly :data:`ESTIMATES_COLUMNS`. Estimators that could not be computed keep
        their row with empty numbers and the reason (never silently dropped).
    """
    sources = list(sources) if sources is not None else [r.history for r in reports]
    cell = settings_json(settings)
    rows = []
    for rep, src in zip(reports, sources, strict=True):
        h = rep.history
        base = {
            "series": h.name, "as_of": rep.as_of, "window": "all" if rep.window is None else int(rep.window),
            "annualization": float(rep.annualization), "first_date": h.first_date, "rows": h.n,
            "price_basis": h.price_basis, "source_file": h.source.name if h.source else None,
            "source_sha256": h.sha256, "flagged_rows": "excluded" if h.exclude_flagged else "kept",
            "confidence": float(settings.get("confidence", np.nan)),
            "excluded_lines": " ".join(str(x) for x in h.excluded_lines),
            "findings": findings_summary(src), "volbench_version": __version__,
            "schema_version": SCHEMA_VERSION, "created": created, "settings": cell,
        }
        for key, spec in REGISTRY.items():
            row = dict(base, estimator=key, estimator_label=spec.label)
            if key in rep.estimates:
                e = rep.estimates[key]
                row.update(vol=e.vol, ci_low=e.ci_low, ci_high=e.ci_high, confidence=e.confidence,
                           n=e.n, ci_method=e.ci_method, caveat=e.note, unavailable_reason="")
            elif key in rep.unavailable:
                row.update(unavailable_reason=rep.unavailable[key])
            else:
                continue
            rows.append(row)
    df = pd.DataFrame(rows, columns=list(ESTIMATES_COLUMNS))
    for c in _NUMBER:
        df[c] = df[c].astype(np.float64)
    for c in _INTEGER:
        df[c] = df[c].astype("Int64")
    text = [c.name for c in ESTIMATES_SCHEMA if c.kind == "text"]
    df[text] = df[text].fillna("")
    return df
