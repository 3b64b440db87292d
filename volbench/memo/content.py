"""What a vol memo says, Qt-free: the sections a validator files with a pricing vol.

:func:`build_memo` runs the same calls as every front end (:mod:`volbench.analysis`) on one
history and returns a :class:`Memo`: a title, then sections of paragraphs and small tables of
display strings, and the numbers behind the plots (the cone with the pricing vol, the GARCH
forward-vol term structure). A renderer (the window's PDF writer,
:mod:`volbench.gui.memo_pdf`) only lays it out.

One window throughout: the estimates table and the comparison's estimator candidates use the
same window (the settings' ``option.window``, or the option's life when it is not given), and the
memo says which.
"""

from __future__ import annotations

import datetime as _dt
from dataclasses import dataclass, field

import pandas as pd

from volbench import __version__, analysis
from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.estimators import REGISTRY
from volbench.format import number, pct, sig
from volbench.names import estimator_name
from volbench.settings import ConeSettings, ScalingSettings, Settings

CAUTION = ("Estimates are statistical and carry model risk; they are not advice. Your firm's model-validation "
           "policy and licensed practice govern their use.")
"""The caution every memo ends with (the same words as the pricing sheet's, and the licence clause)."""


@dataclass(frozen=True)
class Table:
    """A small table of display strings: ``columns`` and ``rows`` (one list of strings per row)."""

    columns: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]

    def as_dict(self) -> dict:
        return {"columns": list(self.columns), "rows": [list(r) for r in self.rows]}


@dataclass(frozen=True)
class Section:
    """One heading with its paragraphs and tables (in that order), and an optional plot name."""

    title: str
    paragraphs: tuple[str, ...] = ()
    tables: tuple[Table, ...] = ()
    plot: str | None = None

    def as_dict(self) -> dict:
        return {"title": self.title, "paragraphs": list(self.paragraphs),
                "tables": [t.as_dict() for t in self.tables], "plot": self.plot}


@dataclass(frozen=True)
class Memo:
    """A vol memo: title, sections, the data behind its plots, and provenance.

    Attributes
    ----------
    title, subtitle
        "Vol memo: <series>" and "as of <date>, pricing vol <v> for a <days>-bar <kind>".
    sections
        In reading order; the last holds the caution.
    cone
        Cone plot data: ``windows`` (bars), ``bands`` ({name: percentile values}), ``today``,
        ``pricing`` ((days, vol)), ``label``; ``None`` when no cone could be built.
    term
        GARCH forward-vol term structures ``{model label: (horizons, vols)}``; empty without GARCH.
    provenance
        File, SHA-256, version, creation time and settings (JSON-ready).
    """

    title: str
    subtitle: str
    sections: tuple[Section, ...]
    cone: dict | None = None
    term: dict = field(default_factory=dict)
    provenance: dict = field(default_factory=dict)

    def text(self) -> str:
        """Every word of the memo as plain text (what a PDF's text layer should hold)."""
        out = [self.title, self.subtitle]
        for s in self.sections:
            out.append(s.title)
            out += list(s.paragraphs)
            for t in s.tables:
                out.append(" | ".join(t.columns))
                out += [" | ".join(r) for r in t.rows]
        return "\n".join(out)

    def as_dict(self) -> dict:
        return {"title": self.title, "subtitle": self.subtitle, "sections": [s.as_dict() for s in self.sections],
                "provenance": self.provenance}


def _table(columns, rows) -> Table:
    return Table(tuple(columns), tuple(tuple("" if v is None else str(v) for v in r) for r in rows))


def _inside(pv: float, lo, hi) -> str:
    if lo is None or hi is None or pd.isna(lo) or pd.isna(hi):
        return ""
    return "no: above" if pv > hi else "no: below" if pv < lo else "yes"


def memo_settings(settings: Settings, history: PriceHistory | None = None) -> Settings:
    """The settings a memo runs with: one window for estimates and comparison (the option's
    ``window``, else its life), the cone and the scaling check always on.

    With a life group (an expiry, or days on a basis) the option's ``days`` become its trading days
    from ``history``'s last date, so every section reads one number of bars."""
    from volbench.analysis import option_days

    o = settings.option
    if o is None:
        raise VolbenchError("a memo needs a pricing vol and the option's life: give --pricing-vol and --days")
    if o.days is None:
        if history is None or settings.life is None:
            raise VolbenchError("a memo needs the option's life: give --days N or --expiry YYYY-MM-DD")
        o = o.with_changes(days=option_days(history, settings))
    window = o.window or max(o.days, 2)
    return settings.with_groups(estimation=settings.estimation.with_changes(window=window),
                                option=o.with_changes(window=window),
                                cone=settings.cone or ConeSettings(),
                                scaling=settings.scaling or ScalingSettings())


def build_memo(history: PriceHistory, settings: Settings, *, created: str | None = None) -> Memo:
    """Build the memo of ``history`` for ``settings`` (see :func:`memo_settings`).

    Raises
    ------
    VolbenchError
        No option in the settings, or the history is too short for the estimates.
    """
    settings = memo_settings(settings, history)
    o, a = settings.option, settings.annualization
    created = created or _dt.datetime.now(_dt.UTC).replace(microsecond=0).isoformat()
    view = history.select(exclude_flagged=True) if settings.import_options.exclude_flagged else history
    if settings.estimation.as_of is not None:
        view = view.up_to(settings.estimation.as_of)
        settings = settings.with_groups(estimation=settings.estimation.with_changes(as_of=None))
    report = analysis.estimates_for(view, settings)
    try:
        cone = analysis.cone_for(view, settings)
        cone_problem = None
    except VolbenchError as exc:
        cone, cone_problem = None, str(exc)
    try:
        scaling = analysis.scaling_for(view, settings)
        scaling_problem = None
    except VolbenchError as exc:
        scaling, scaling_problem = None, str(exc)
    garch, garch_problem = None, "not requested (add --with-garch)"
    if settings.garch is not None:
        try:
            garch = analysis.garch_for(view, settings)
            garch_problem = None
        except VolbenchError as exc:
            garch_problem = str(exc)
    given = {"scaling": scaling if scaling is not None else scaling_problem,
             "garch": garch if garch is not None else (None if settings.garch is None else garch_problem)}
    comp = analysis.comparison_for(view, settings, given=given, cone=cone)

    w = o.window
    title = f"Vol memo: {view.name}"
    subtitle = (f"As of {comp.as_of}: pricing vol {pct(o.pricing_vol)} for a {o.days}-bar {comp.kind} "
                f"(strike {comp.strike:,.6g}, spot {comp.spot:,.6g}); price {number(comp.price)}")
    sections: list[Section] = []

    # --- inputs and provenance
    prov = view.provenance()
    errors = [f for f in view.findings if f.severity == "error"]
    warnings = [f for f in view.findings if f.severity == "warning"]
    adjust = "; ".join(f"{a.label} on {a.date} (prices before divided by {a.ratio:g})" for a in view.adjustments)
    sections.append(Section("Inputs and provenance", (
        (f"File {prov['source_file'] or '(not from a file)'}, SHA-256 {prov['sha256'] or 'n/a'}; {view.n} rows "
         f"used from {view.first_date} to {view.last_date}, {view.price_basis} prices."),
        (f"Flagged rows {prov['flagged_rows']} ({len(view.flagged_lines)} flagged by warnings); "
         f"{len(errors)} unusable row(s) left out at import; adjustments: {adjust or 'none'}."),
        (f"Settings: estimation window {w} bars (estimates and comparison alike), {a:g} bars a year, "
         f"option {o.days} bars, rate {pct(o.rate)}, dividend yield {pct(o.dividend_yield)}, cone estimator "
         f"{estimator_name(settings.cone.estimator)}"
         + (f", GARCH models {', '.join(settings.garch.models)} with {settings.garch.dist} shocks" if settings.garch
            else ", no GARCH fits") + "."),
        f"Written by volbench {__version__} on {created}.",
    )))

    # --- estimates
    rows = []
    lam = settings.estimation.options.get("lam")
    for key in REGISTRY:
        e = report.estimates.get(key)
        if e is None:
            rows.append([estimator_name(key, lam), "n/a", "", "", report.unavailable.get(key, "")])
        else:
            rows.append([estimator_name(key, lam), pct(e.vol), f"{pct(e.ci_low)} to {pct(e.ci_high)}",
                         _inside(o.pricing_vol, e.ci_low, e.ci_high), e.ci_method])
    sections.append(Section(
        f"Estimates over the last {report.window} bars (the memo's one window)",
        ((f"Annualized with {a:g} bars a year; 95% intervals; 'inside' says whether the pricing vol "
          f"{pct(o.pricing_vol)} lies in the interval."),),
        (_table(("estimator", "vol", "95% interval", "pricing vol inside?", "interval method"), rows),)))

    # --- cone
    cone_data = None
    if cone is None:
        sections.append(Section("Volatility cone", (f"No cone: {cone_problem}",)))
    else:
        t = cone.table
        crows = [[int(win)] + [pct(rec[k], 1) for k in ("min", "p10", "p50", "p90", "max", "current")]
                 for win, rec in t.iterrows()]
        place = comp.cone
        where = (f"The pricing vol {pct(o.pricing_vol)} sits at percentile {place.percentile:.0f} of the "
                 f"{place.note}." if place is not None else
                 f"The pricing vol cannot be placed in the cone: {comp.unavailable.get('cone', 'no column fits')}.")
        sections.append(Section(f"{cone.label} volatility cone, {cone.start} to {cone.end}", (where,),
                                (_table(("window (bars)", "min", "10th", "median", "90th", "max", "today"), crows),),
                                plot="cone"))
        cone_data = {"windows": t.index.to_numpy(dtype=float),
                     "bands": {k: t[k].to_numpy(dtype=float) for k in ("min", "p10", "p25", "p50", "p75", "p90", "max")},
                     "today": t["current"].to_numpy(dtype=float), "pricing": (float(o.days), float(o.pricing_vol)),
                     "label": cone.label}

    # --- scaling verdicts
    if scaling is None:
        sections.append(Section("Brownian scaling check", (f"Not available: {scaling_problem}",)))
    else:
        vrows = [[v.property.replace("_", " "), v.status, sig(v.p_value, 3), v.message] for v in scaling.verdicts]
        sections.append(Section("Brownian scaling check", (
            f"{scaling.n_returns} returns, significance level {scaling.alpha:g}.",),
            (_table(("property", "verdict", "p-value", "what it means"), vrows),)))

    # --- GARCH
    term = {}
    if garch is None:
        sections.append(Section("GARCH forward vol", (f"GARCH: {garch_problem}.",)))
    else:
        grows = []
        for f in garch.fits:
            try:
                fwd = pct(f.forward_vol(o.days))
            except VolbenchError as exc:
                fwd = f"n/a ({exc})"
            grows.append([f.candidate_label + (" (preferred)" if f.model == garch.preferred else ""),
                          sig(f.persistence, 4), pct(f.long_run_vol), sig(f.half_life, 3), fwd])
            ts = f.term_structure
            if len(ts):
                term[f.candidate_label] = (ts["horizon"].to_numpy(dtype=float), ts["vol"].to_numpy(dtype=float))
        sections.append(Section("GARCH forward vol term structure", (garch.message.rstrip(".") + ".",),
                                (_table(("model", "persistence", "long-run vol", "half-life (bars)",
                                         f"forward vol over {o.days} bars"), grows),),
                                plot="term" if term else None))

    # --- comparison
    crow = []
    for r in comp.table.itertuples(index=False):
        is_p = r.source == "pricing"
        interval = "" if is_p or pd.isna(r.ci_low) or pd.isna(r.ci_high) else f"{pct(r.ci_low)} to {pct(r.ci_high)}"
        label = estimator_name(r.key, lam) if r.source == "estimator" else r.label
        crow.append([label, "" if r.window is None or pd.isna(r.window) else int(r.window), pct(r.vol), interval,
                     "" if is_p else _inside(o.pricing_vol, r.ci_low, r.ci_high),
                     "" if is_p else number(r.gap_points, 2, signed=True), number(r.price),
                     "" if is_p else number(r.price_diff, signed=True)])
    sections.append(Section(
        "Comparison and price impact",
        ((f"Estimators over the last {comp.window} bars (the memo's one window); price difference = exact "
          "repricing at the candidate vol."), *[s[0].upper() + s[1:] for s in comp.reading]),
        (_table(("candidate", "window (bars)", "vol", "95% interval", "pricing vol inside?", "gap (vol points)",
                 "option price", "price difference"), crow),)))

    # --- bands and straddle
    p = comp.promises
    if p is None:
        sections.append(Section("Price bands and straddle", (f"Not available: {comp.unavailable.get('bands', '')}",)))
    else:
        srows = [[r.label, pct(r.vol), number(r.premium), pct(r.breakeven_move), pct(r.promised_share_beyond, 1),
                  pct(r.observed_share_beyond, 1)] for r in p.straddles.itertuples(index=False)]
        sections.append(Section(
            f"Price bands and straddle over {p.days} bars", tuple(s[0].upper() + s[1:] for s in p.reading) + p.warnings,
            (_table(("vol", "value", "straddle premium", "breakeven move", "promised beyond", "observed beyond"),
                    srows),)))

    # --- the decision record (with --decision-vol, --rationale or --prepared-by)
    if settings.decision is not None:
        rec = analysis.decision_for(view, settings, comp, scaling=scaling if scaling is not None else scaling_problem,
                                    cone=cone)
        drows = [[c["label"], pct(c["vol"]),
                  "" if c.get("ci_low") is None or c.get("ci_high") is None
                  else f"{pct(c['ci_low'])} to {pct(c['ci_high'])}",
                  number(c["gap_points"], 2, signed=True),
                  {True: "yes", False: "no", None: ""}[c.get("within_interval")]] for c in rec.candidates]
        sections.append(Section("Decision record", tuple(rec.lines),
                                (_table(("candidate", "vol", "95% interval", "chosen minus candidate (vol points)",
                                         "chosen vol inside?"), drows),)))

    # --- data findings and cautions
    kinds: dict[str, int] = {}
    for f in view.findings:
        kinds[f"{f.severity} {f.kind}"] = kinds.get(f"{f.severity} {f.kind}", 0) + 1
    summary = ", ".join(f"{n} {k}" for k, n in sorted(kinds.items())) or "none"
    first = [f"line {f.line}: {f.message}" if f.line is not None else f.message for f in (errors + warnings)[:6]]
    sections.append(Section("Data findings", (f"Findings: {summary}.", *first)))
    sections.append(Section("Cautions", (*[c[0].upper() + c[1:] for c in comp.caveats], CAUTION)))

    provenance = {"series": view.name, "source_file": prov["source_file"], "sha256": prov["sha256"],
                  "version": __version__, "created": created, "settings": settings.as_dict(),
                  "as_of": comp.as_of, "window": w}
    return Memo(title, subtitle, tuple(sections), cone_data, term, provenance)

