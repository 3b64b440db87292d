"""Everything that goes into a pricing-sheet export, collected once, format-independent.

:func:`build_bundle` computes (or takes ready-made) results for a set of histories and returns an
:class:`ExportBundle`: named pandas tables plus a provenance record. The writers in
:mod:`volbench.export.writers` only lay the bundle out as CSV, XLSX or JSON, so every format holds
the same numbers.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from datetime import UTC, datetime
from types import MappingProxyType
from typing import Any

import pandas as pd

from volbench import __version__, validate
from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.estimators import estimate_all
from volbench.estimators.close_based import EWMA_LAMBDA
from volbench.export import sections as sec
from volbench.export.schema import (
    ESTIMATES_PERCENT,
    SCHEMA_VERSION,
    estimates_table,
    findings_summary,
)
from volbench.export.sections import SectionStatus
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization, check_window

SECTIONS: tuple[str, ...] = ("estimates", "cone", "scaling", "garch", "comparison")
"""Sections in export order; each always has a sheet in an XLSX file."""

TABLE_ORDER: tuple[str, ...] = (
    "estimates", "cone", "scaling", "scaling_summary", "garch", "garch_term", "comparison", "notes",
    "findings", "inputs",
)
"""Every table a bundle can hold, in the order writers lay them out."""

DEFAULT_GARCH_MODELS: tuple[str, ...] = ("garch", "gjr", "egarch")

DISCLAIMER = ("Volatility estimates are statistical and carry model risk; they are not advice. "
              "Your firm's model-validation policy governs their use.")


@dataclass(frozen=True, eq=False)
class ExportBundle:
    """Named tables and provenance for one export.

    Attributes
    ----------
    tables
        Read-only mapping of table name (see :data:`TABLE_ORDER`) to DataFrame, in that order.
        Only tables that could be built are present; see ``sections`` for the others.
    provenance
        Creation time, volbench and schema versions, every setting, and per series the source
        file, its SHA-256, the rows used and the quality policy (flagged rows kept or excluded,
        excluded lines, findings).
    sections
        Status of each section in :data:`SECTIONS` (included, partial, not requested, not available).
    percent_columns
        Per table, the columns holding decimals that read as percentages (vols, CI bounds).
    created
        Creation time, UTC ISO 8601 (also in ``provenance``).
    """

    tables: Mapping[str, pd.DataFrame]
    provenance: Mapping[str, Any]
    sections: Mapping[str, SectionStatus]
    percent_columns: Mapping[str, tuple[str, ...]]
    created: str

    @property
    def names(self) -> tuple[str, ...]:
        return tuple(self.tables)

    def table(self, name: str) -> pd.DataFrame:
        """A copy of table ``name``; a clear error when it is not in this export."""
        if name in self.tables:
            return self.tables[name].copy()
        status = self.sections.get(name)
        why = f" ({status.text})" if status is not None else ""
        raise VolbenchError(f"table {name!r} is not in this export{why}; tables present: {', '.join(self.tables)}")


def build_bundle(
    histories: Sequence[PriceHistory],
    *,
    window: int | str | None = None,
    annualization: float = DEFAULT_ANNUALIZATION,
    as_of=None,
    confidence: float = 0.95,
    estimator_options: Mapping[str, Any] | None = None,
    pricing_vol: float | None = None,
    days: int | None = None,
    option: Mapping[str, Any] | Any | None = None,
    comparison_window: int | None = None,
    include_cone: bool = True,
    cone_estimator: str = "close_to_close",
    cone_windows: Sequence[int] | None = None,
    hodges_tompkins: bool = False,
    include_scaling: bool = True,
    include_garch: bool = False,
    garch_models: Sequence[str] = DEFAULT_GARCH_MODELS,
    garch_dist: str = "normal",
    garch_processes: int | None = 1,
    import_settings: Mapping[str, Any] | None = None,
    results: Mapping[str, Mapping[str, Any]] | None = None,
    created: datetime | None = None,
    progress: Callable[[int, int, str], None] | None = None,
) -> ExportBundle:
    """Collect estimates, cone, scaling check, GARCH, comparison and provenance for an export.

    Parameters
    ----------
    histories
        Price histories as loaded (quality policy already applied with ``select``).
    window, annualization, as_of, confidence, estimator_options
        Settings of the point estimates (:func:`volbench.estimators.estimate_all`); ``as_of`` also
        cuts the history used by every other section. ``estimator_options``: ``zero_mean``, ``lam``.
    pricing_vol, days, option
        The proposed vol (decimal), the option's life in bars, and optionally the option
        (``OptionSpec`` or a mapping of its fields: strike, rate, dividend_yield, kind, spot). The
        comparison section is built only when both ``pricing_vol`` and ``days`` are given.
    comparison_window
        Bars behind each estimator's candidate vol in the comparison; ``None`` (default) uses the
        option's life (``days``), as ``volbench compare`` does without ``--window``.
    include_cone, cone_estimator, cone_windows, hodges_tompkins
        Volatility cone section and its settings; the comparison places the pricing vol in a cone
        with the same estimator and windows.
    include_scaling, include_garch, garch_models, garch_dist, garch_processes
        Scaling-check and GARCH sections (GARCH is off by default: fits take a moment).
        ``garch_processes`` other than 1 fits several series in worker processes (``None``: one
        per CPU, see :func:`volbench.models.fit_many`).
    import_settings
        How the files were read (date format, adjusted close, gap days...), recorded as provenance.
    results
        Results already computed elsewhere (e.g. by the GUI), ``{section: {series: result}}`` for
        sections cone, scaling, garch, comparison; used instead of recomputing.
    created
        Creation time (default now, UTC).
    progress
        ``progress(done, total, section)`` after each section.

    Returns
    -------
    ExportBundle

    Raises
    ------
    VolbenchError
        No histories, or bad window / annualization / as-of / pricing-vol / days.

    Notes
    -----
    A section whose analysis module is missing, that was not requested, or that fails for a
    series (a :class:`VolbenchError` from that analysis) is recorded in ``sections`` with the
    reason; the other sections are unaffected. Point estimates follow docs/METHODS.md, "Estimators".
    """
    histories = list(histories)
    if not histories:
        raise VolbenchError("nothing to export: give at least one price history")
    w = check_window(window, minimum=1)
    a = check_annualization(annualization)
    confidence = validate.level(confidence)
    cone_estimator = validate.estimator(cone_estimator)
    if as_of is not None:  # inside every series' range (or "last"), one rule for every front end
        resolved = {validate.as_of_for(h, as_of) for h in histories}
        as_of = resolved.pop()
    pricing_vol, days = _check_pricing(pricing_vol, days)
    opts = {k: v for k, v in dict(estimator_options or {}).items() if v is not None}
    option_dict = _option_dict(option)
    stamp = (created or datetime.now(UTC)).astimezone(UTC)
    created_iso = stamp.isoformat(timespec="seconds").replace("+00:00", "Z")
    given = {k: dict(v) for k, v in dict(results or {}).items()}

    settings = {
        "window": "all" if w is None else w, "annualization": a, "as_of": as_of, "confidence": confidence,
        "estimator_options": {"zero_mean": bool(opts.get("zero_mean", False)),
                              "ewma_lambda": float(opts.get("lam", EWMA_LAMBDA))},
        "import": dict(import_settings or {}),
    }
    if include_cone:
        settings["cone"] = {"estimator": cone_estimator, "windows": list(cone_windows) if cone_windows else "default",
                            "hodges_tompkins": bool(hodges_tompkins)}
    settings["scaling"] = bool(include_scaling)
    if include_garch:
        settings["garch"] = {"models": list(garch_models), "dist": garch_dist}
    if pricing_vol is not None:
        settings["pricing"] = {"pricing_vol": pricing_vol, "days": days, "option": option_dict,
                               "estimator_window": ("days (the option's life)" if comparison_window is None
                                                    else comparison_window)}
    total = len(SECTIONS)

    def step(i: int, name: str) -> None:
        if progress is not None:
            progress(i, total, name)

    reports = [estimate_all(h, w, as_of=as_of, annualization=a, confidence=confidence, **opts) for h in histories]
    cut = [r.history for r in reports]
    built: dict[str, sec.SectionResult] = {
        "estimates": sec.SectionResult(
            SectionStatus("included"),
            {"estimates": estimates_table(reports, created=created_iso, settings=settings, sources=histories)},
            {"estimates": ESTIMATES_PERCENT}),
    }
    step(1, "estimates")

    if include_cone:
        built["cone"] = sec.cone_section(cut, estimator=cone_estimator, windows=cone_windows, annualization=a,
                                         hodges_tompkins=hodges_tompkins, given=given.get("cone"))
    else:
        built["cone"] = sec.not_requested()
    step(2, "cone")

    if include_scaling:
        built["scaling"] = sec.scaling_section(cut, annualization=a, given=given.get("scaling"))
    else:
        built["scaling"] = sec.not_requested()
    step(3, "scaling")

    if include_garch:
        built["garch"] = sec.garch_section(cut, models=garch_models, dist=garch_dist, annualization=a,
                                           days=days, processes=garch_processes, given=given.get("garch"))
    else:
        built["garch"] = sec.not_requested("add --with-garch")
    step(4, "garch")

    if pricing_vol is not None:
        built["comparison"] = sec.comparison_section(
            cut, pricing_vol=pricing_vol, days=days, option=option if option is not None else {},
            annualization=a, cone_estimator=cone_estimator, cone_windows=cone_windows,
            window=comparison_window, scaling=dict(built["scaling"].results), garch=dict(built["garch"].results),
            given=given.get("comparison"))
    else:
        built["comparison"] = sec.not_requested("give --pricing-vol and --days")
    step(5, "comparison")

    statuses = {name: built[name].status for name in SECTIONS}
    provenance = {
        "created": created_iso, "volbench_version": __version__, "schema_version": SCHEMA_VERSION,
        "settings": settings,
        "series": [_series_provenance(src, rep) for src, rep in zip(histories, reports)],
        "sections": {k: v.text for k, v in statuses.items()},
        "note": DISCLAIMER,
    }
    tables: dict[str, pd.DataFrame] = {}
    percent: dict[str, tuple[str, ...]] = {}
    notes: list[dict] = []
    for b in built.values():
        tables.update(b.tables)
        percent.update(b.percent)
        notes += b.notes
    tables["notes"] = pd.DataFrame(notes, columns=list(sec.NOTE_COLUMNS))
    tables["findings"] = findings_table(histories)
    tables["inputs"] = inputs_table(provenance)
    ordered = {k: tables[k] for k in TABLE_ORDER if k in tables}
    return ExportBundle(
        tables=MappingProxyType(ordered), provenance=MappingProxyType(provenance),
        sections=MappingProxyType(statuses),
        percent_columns=MappingProxyType({k: v for k, v in percent.items() if k in ordered}),
        created=created_iso,
    )


def _check_pricing(pricing_vol, days) -> tuple[float | None, int | None]:
    if pricing_vol is None and days is None:
        return None, None
    if pricing_vol is None or days is None:
        raise VolbenchError("a comparison needs both --pricing-vol and --days "
                            f"(got pricing vol {pricing_vol!r}, days {days!r})")
    return validate.pricing_vol(pricing_vol), validate.days(days)


def _option_dict(option) -> dict | None:
    if option is None:
        return None
    if isinstance(option, Mapping):
        return dict(option)
    fields = ("strike", "rate", "dividend_yield", "kind", "spot")
    return {f: getattr(option, f) for f in fields if hasattr(option, f)}


def _series_provenance(src: PriceHistory, rep) -> dict:
    p = src.provenance()
    p["rows_up_to_as_of"] = rep.history.n
    p["as_of"] = rep.as_of
    p["findings"] = findings_summary(src)
    return p


def findings_table(histories: Sequence[PriceHistory]) -> pd.DataFrame:
    """Every data-quality finding with what was done about it.

    ``treatment``: ``"left out at import"`` (unusable row, or a duplicate date), ``"excluded"``
    (flagged and excluded by the user's choice), ``"kept"`` (flagged but kept) or ``"note"``.
    """
    cols = ["series", "severity", "kind", "line", "date", "column", "treatment", "message"]
    rows = []
    for h in histories:
        present = {int(x) for x in h.lines}
        excluded = set(h.excluded_lines)
        for f in h.findings:
            lines = set(f.lines) or ({f.line} if f.line is not None else set())
            if f.severity == "info":
                treatment = "note"
            elif f.severity == "error":
                treatment = "left out at import"
            elif lines and lines <= excluded:
                treatment = "excluded"
            elif lines and not (lines & present):
                treatment = "left out at import"
            else:
                treatment = "kept"
            rows.append({"series": h.name, "severity": f.severity, "kind": f.kind, "line": f.line,
                         "date": f.date or "", "column": f.column or "", "treatment": treatment,
                         "message": f.message})
    df = pd.DataFrame(rows, columns=cols)
    df["line"] = df["line"].astype("Int64")
    return df


def inputs_table(provenance: Mapping[str, Any]) -> pd.DataFrame:
    """Provenance and settings as a readable key/value table (group, series, item, value)."""
    rows: list[tuple[str, str, str, Any]] = [
        ("run", "", "created (UTC)", provenance["created"]),
        ("run", "", "volbench version", provenance["volbench_version"]),
        ("run", "", "schema version", provenance["schema_version"]),
        ("run", "", "note", provenance["note"]),
    ]
    for path, value in _flatten(provenance["settings"]):
        rows.append(("setting", "", path, value))
    for p in provenance["series"]:
        for k in ("source_file", "source", "sha256", "price_basis", "rows", "first_date", "last_date",
                  "as_of", "rows_up_to_as_of", "flagged_rows", "excluded_lines", "findings", "adjustments"):
            v = p.get(k)
            if k == "adjustments":
                v = "; ".join(f"{a['label']} on {a['date']} (line {a['line']}): earlier prices divided by "
                              f"{a['ratio']:g}" for a in v or ()) or "none"
            elif isinstance(v, list):
                v = " ".join(str(x) for x in v)
            rows.append(("source", p["series"], k, "" if v is None else v))
    for name, text in provenance["sections"].items():
        rows.append(("section", "", name, text))
    return pd.DataFrame(rows, columns=["group", "series", "item", "value"])


def _flatten(d: Mapping, prefix: str = "") -> list[tuple[str, Any]]:
    out: list[tuple[str, Any]] = []
    for k, v in d.items():
        key = f"{prefix}{k}"
        if isinstance(v, Mapping):
            out += _flatten(v, key + ".") if v else [(key, "")]
        elif isinstance(v, (list, tuple)):
            out.append((key, ", ".join(str(x) for x in v)))
        else:
            out.append((key, "" if v is None else v))
    return out
