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

from volbench import __version__, analysis, validate
from volbench import provenance as prov
from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.export import extra_sections as extra
from volbench.export import layout
from volbench.export import sections as sec
from volbench.export.schema import (
    ESTIMATES_PERCENT,
    SCHEMA_VERSION,
    estimates_table,
    findings_summary,
)
from volbench.export.sections import SectionStatus
from volbench.settings import Settings

SECTIONS: tuple[str, ...] = ("estimates", "cone", "scaling", "garch", "comparison", "decision")
"""Sections in export order; each always has a sheet in an XLSX file."""

TABLE_ORDER: tuple[str, ...] = (
    "estimates", "cone", "scaling", "scaling_summary", "garch", "garch_term", "events", "comparison",
    "price_bands", "breakevens", "decision", "notes", "findings", "inputs",
)
"""Every table a bundle can hold, in the order writers lay them out."""

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
    settings: Settings | None = None,
    *,
    given: Mapping[str, Mapping[str, Any]] | None = None,
    progress: Callable[[int, int, str], None] | None = None,
    command: Sequence[str] | None = None,
) -> ExportBundle:
    """Collect estimates, cone, scaling check, GARCH, comparison and provenance for an export.

    Parameters
    ----------
    histories
        Price histories as loaded (quality policy already applied with ``select``).
    settings
        Every setting of the run (:class:`~volbench.settings.Settings`): the estimation settings
        give the point estimates and the as-of date that cuts the history of every section; a
        group set to ``None`` (cone, scaling, GARCH, option) leaves its section out as "not
        requested"; the comparison is built when ``settings.option`` is set. Default: the
        estimates, cone and scaling check with their defaults. ``settings.created`` stamps the
        export (default now, UTC).
    given
        Results already computed elsewhere (e.g. by the window), ``{section: {series: result}}`` for
        sections cone, scaling, garch, comparison; used instead of recomputing.
    progress
        ``progress(done, total, section)`` after each section.
    command
        The command line as typed (arguments after ``volbench``), recorded beside the equivalent
        export command built from ``settings`` (:func:`volbench.provenance.command_record`);
        ``None`` from the window.

    Returns
    -------
    ExportBundle

    Raises
    ------
    VolbenchError
        No histories, or an as-of date outside a series' range.

    Notes
    -----
    A section that was not requested, or that fails for a series (a :class:`VolbenchError` from
    that analysis), is recorded in ``sections`` with the reason; the other sections are
    unaffected. Point estimates follow docs/METHODS.md, "Estimators".
    """
    histories = list(histories)
    if not histories:
        raise VolbenchError("nothing to export: give at least one price history")
    settings = settings if settings is not None else Settings()
    if not isinstance(settings, Settings):
        raise VolbenchError(f"settings must be Settings, got {type(settings).__name__}")
    e = settings.estimation
    as_of = e.as_of
    if as_of is not None:  # inside every series' range (or "last"), one rule for every front end
        resolved = {validate.as_of_for(h, as_of) for h in histories}
        as_of = resolved.pop()
        settings = settings.with_groups(estimation=e.with_changes(as_of=as_of))
    stamp = (settings.created or datetime.now(UTC)).astimezone(UTC)
    created_iso = stamp.isoformat(timespec="seconds").replace("+00:00", "Z")
    given = {k: dict(v) for k, v in dict(given or {}).items()}
    record = settings.as_dict()
    total = len(SECTIONS)

    def step(i: int, name: str) -> None:
        if progress is not None:
            progress(i, total, name)

    reports = [analysis.estimates_for(h, settings) for h in histories]
    cut = [r.history for r in reports]
    built: dict[str, sec.SectionResult] = {
        "estimates": sec.SectionResult(
            SectionStatus("included"),
            {"estimates": estimates_table(reports, created=created_iso, settings=record, sources=histories)},
            {"estimates": ESTIMATES_PERCENT}),
    }
    step(1, "estimates")
    built["cone"] = (sec.cone_section(cut, settings, given.get("cone")) if settings.cone is not None
                     else sec.not_requested())
    step(2, "cone")
    built["scaling"] = (sec.scaling_section(cut, settings, given.get("scaling")) if settings.scaling is not None
                        else sec.not_requested())
    step(3, "scaling")
    built["garch"] = (sec.garch_section(cut, settings, given.get("garch")) if settings.garch is not None
                      else sec.not_requested("add --with-garch"))
    step(4, "garch")
    if settings.events is not None:  # its own table, and the event-aware candidates of the comparison
        built["events"] = extra.events_section(cut, settings, given.get("events"))
    if settings.option is not None:
        parts = {name: built[name] for name in analysis.CANDIDATE_PARTS if name in built}  # the rest: computed
        built["comparison"] = sec.comparison_section(cut, settings, parts, given.get("comparison"))
    else:
        built["comparison"] = sec.not_requested("give --pricing-vol and --days")
    step(5, "comparison")
    built["decision"] = (sec.decision_section(cut, settings, built) if settings.decision is not None
                         else sec.not_requested("give --decision-vol, --rationale or --prepared-by"))
    step(6, "decision")

    statuses = {name: built[name].status for name in SECTIONS}
    if "events" in built:
        statuses["events"] = built["events"].status
    provenance = {
        "created": created_iso, "volbench_version": __version__, "schema_version": SCHEMA_VERSION,
        "settings": record,
        "series": [_series_provenance(src, rep) for src, rep in zip(histories, reports)],
        "sections": {k: v.text for k, v in statuses.items()},
        "note": DISCLAIMER,
        **prov.record(settings, histories, command),
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
    if "comparison" in built:
        more, more_percent = extra.promise_tables(built["comparison"].results)
        tables.update(more)
        percent.update(more_percent)
    ordered = {k: layout.conform(k, tables[k]) for k in TABLE_ORDER if k in tables}
    return ExportBundle(
        tables=MappingProxyType(ordered), provenance=MappingProxyType(provenance),
        sections=MappingProxyType(statuses),
        percent_columns=MappingProxyType({k: v for k, v in percent.items() if k in ordered}),
        created=created_iso,
    )


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
    rows += _provenance_rows(provenance)
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
        rows.append(("source", p["series"], "bar_interval_seconds", p.get("bar_interval_seconds", "")))
        if p.get("intraday"):  # an intraday file analysed by day: its sessions
            rows += [("source", p["series"], f"intraday.{k}", v) for k, v in p["intraday"].items()]
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


def _provenance_rows(provenance: Mapping[str, Any]) -> list[tuple[str, str, str, Any]]:
    """Environment, command, sources and every effective setting (when the record holds them)."""
    import json

    rows: list[tuple[str, str, str, Any]] = []
    if "environment" in provenance:
        env = dict(provenance["environment"])
        blas = env.pop("blas", [])
        for path, value in _flatten(env):
            rows.append(("environment", "", path, value))
        for i, lib in enumerate(blas):
            rows.append(("environment", "", f"blas[{i}]",
                         f"{lib['library']} {lib['version']} ({lib['api']}, {lib['threads']} threads, {lib['file']})"))
    if "command" in provenance:
        c = provenance["command"]
        rows += [("command", "", "typed", c["typed_text"] or "(from the window)"),
                 ("command", "", "equivalent", c["equivalent_text"]),
                 ("command", "", "equivalent_argv (JSON)", json.dumps(c["equivalent_argv"])),
                 ("command", "", "working directory", c["working_directory"]),
                 ("command", "", "executable", c["executable"])]
    for src in provenance.get("sources", ()):
        rows.append(("source", src["series"], "absolute_path", src["path"] or ""))
        rows.append(("source", src["series"], "size_bytes", "" if src["size"] is None else src["size"]))
    for path, value in provenance.get("effective_settings", {}).items():
        rows.append(("effective setting", "", path, value))
    return rows
