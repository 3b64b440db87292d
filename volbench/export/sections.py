"""Optional sections of an export: cone, scaling check, GARCH and the pricing-vol comparison.

Each section is built by one small function through :mod:`volbench.analysis` (the calls every
front end makes). When the section was not requested, or a series cannot be analysed, the section
records why ("not available: ...") instead of failing the whole export; the estimates table never
depends on these sections. Caveats, per-series failures and the comparison's reading go to a
shared ``notes`` table (section, series, kind, text).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np
import pandas as pd

from volbench import analysis
from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.models import GarchComparison, GarchFit, fit_many
from volbench.scaling import ScalingResult
from volbench.settings import Settings

Status = Literal["included", "partial", "not requested", "not available"]
NOTE_COLUMNS = ("section", "series", "kind", "text")


@dataclass(frozen=True)
class SectionStatus:
    """Whether a section made it into the export, and why not.

    ``status`` is ``"included"`` (every series), ``"partial"`` (some series; ``reason`` lists the
    others), ``"not requested"`` or ``"not available"`` (module missing or no series could be
    analysed; ``reason`` says why).
    """

    status: Status
    reason: str = ""

    @property
    def text(self) -> str:
        return self.status + (f": {self.reason}" if self.reason else "")


@dataclass(frozen=True)
class SectionResult:
    """Tables of one section, percent-formatted columns, notes, and the raw per-series results."""

    status: SectionStatus
    tables: Mapping[str, pd.DataFrame] = field(default_factory=dict)
    percent: Mapping[str, tuple[str, ...]] = field(default_factory=dict)
    notes: tuple[dict, ...] = ()
    results: Mapping[str, Any] = field(default_factory=dict)
    failed: Mapping[str, str] = field(default_factory=dict)
    """Series -> why this section has no result for it."""

    def outcome(self, series: str) -> Any:
        """The result for ``series``, the reason it has none, or ``None`` (not requested)."""
        if series in self.results:
            return self.results[series]
        if series in self.failed:
            return self.failed[series]
        return None if self.status.status == "not requested" else self.status.reason or self.status.status


def not_requested(why: str = "") -> SectionResult:
    return SectionResult(SectionStatus("not requested", why))


def _with_series(df: pd.DataFrame, series: str, **front) -> pd.DataFrame:
    """Copy of ``df`` with a meaningful index made a column and ``series`` (+ ``front``) first."""
    out = df.copy()
    named = any(n is not None for n in out.index.names)
    out = out.reset_index() if named or not isinstance(out.index, pd.RangeIndex) else out.reset_index(drop=True)
    for i, (k, v) in enumerate({"series": series, **front}.items()):
        if k in out.columns:
            out = out.drop(columns=k)
        out.insert(i, k, v)
    return out


def _note(section: str, series: str, kind: str, text: str) -> dict:
    return {"section": section, "series": series, "kind": kind, "text": text}


def _run(
    section: str,
    histories: Sequence[PriceHistory],
    compute: Callable[[PriceHistory], Any],
    given: Mapping[str, Any] | None,
) -> tuple[dict[str, Any], list[tuple[str, str]]]:
    """Per-series results (``given`` first, else ``compute``) and (series, reason) for failures."""
    results: dict[str, Any] = {}
    failed: list[tuple[str, str]] = []
    for h in histories:
        if given and given.get(h.name) is not None:
            results[h.name] = given[h.name]
            continue
        try:
            results[h.name] = compute(h)
        except VolbenchError as exc:
            failed.append((h.name, str(exc)))
    return results, failed


def _finish(section: str, results: dict, failed: list[tuple[str, str]], tables: dict, percent: dict,
            notes: list[dict]) -> SectionResult:
    notes = [_note(section, s, "not available", why) for s, why in failed] + notes
    if not results:
        why = "; ".join(f"{s}: {w}" for s, w in failed) or "no series"
        return SectionResult(SectionStatus("not available", why), notes=tuple(notes), failed=dict(failed))
    status = (SectionStatus("partial", "; ".join(f"{s}: {w}" for s, w in failed)) if failed
              else SectionStatus("included"))
    tables = {k: v for k, v in tables.items() if v is not None}
    return SectionResult(status, tables, {k: tuple(v) for k, v in percent.items() if k in tables},
                         tuple(notes), results, dict(failed))


def _concat(frames: list[pd.DataFrame]) -> pd.DataFrame | None:
    frames = [f for f in frames if f is not None and len(f.columns)]
    return pd.concat(frames, ignore_index=True, sort=False) if frames else None


# ---------------------------------------------------------------------------------- cone
CONE_NOT_PERCENT = ("window", "current_percentile", "n_windows", "n_independent", "ht_factor")


def cone_section(histories: Sequence[PriceHistory], settings: Settings,
                 given: Mapping[str, Any] | None = None) -> SectionResult:
    """Volatility cone per series: one row per window (min ... max, mean, current, its percentile)."""

    def compute(h: PriceHistory):
        return analysis.cone_for(h, settings)

    results, failed = _run("cone", histories, compute, given)
    table = _concat([_with_series(c.table, name, estimator=c.estimator) for name, c in results.items()])
    notes = []
    for name, c in results.items():
        notes += [_note("cone", name, "caveat", t) for t in c.notes]
        notes += [_note("cone", name, "window left out", f"window {w}: {why}") for w, why in c.dropped.items()]
    pct = [] if table is None else [c for c in table.columns if c not in CONE_NOT_PERCENT
                                    and pd.api.types.is_float_dtype(table[c])]
    return _finish("cone", results, failed, {"cone": table}, {"cone": pct}, notes)


# ---------------------------------------------------------------------------------- scaling
def scaling_section(histories: Sequence[PriceHistory], settings: Settings,
                    given: Mapping[str, Any] | None = None) -> SectionResult:
    """Brownian-scaling check per series: the horizon table and a summary with the verdicts."""

    def compute(h: PriceHistory):
        return analysis.scaling_for(h, settings)

    results, failed = _run("scaling", histories, compute, given)
    horizons = _concat([_with_series(r.horizons, name) for name, r in results.items()])
    summary = _concat([scaling_summary(name, r) for name, r in results.items()])
    notes = []
    for name, r in results.items():
        notes += [_note("scaling", name, "caveat", t) for t in r.notes]
        notes += [_note("scaling", name, "horizon left out", f"horizon {h}: {why}") for h, why in r.dropped.items()]
    return _finish("scaling", results, failed, {"scaling": horizons, "scaling_summary": summary},
                   {"scaling": ("annualized_vol", "sqrt_time_vol")}, notes)


def scaling_summary(name: str, r: ScalingResult) -> pd.DataFrame:
    """One row per verdict, then the log-log slope, Hurst exponent and joint variance-ratio test."""
    level = 1.0 - float(r.alpha)
    lo, hi = (float(x) for x in r.slope_ci)
    rows = [{"series": name, "item": v.property, "status": v.status, "statistic": v.statistic,
             "p_value": v.p_value, "ci_low": np.nan, "ci_high": np.nan, "message": v.message}
            for v in r.verdicts]
    rows += [
        {"series": name, "item": "variance_slope", "status": "", "statistic": r.slope, "p_value": np.nan,
         "ci_low": lo, "ci_high": hi,
         "message": f"log-log slope of variance on horizon (1 under Brownian motion); {level:.0%} interval"},
        {"series": name, "item": "hurst", "status": "", "statistic": r.hurst, "p_value": np.nan,
         "ci_low": lo / 2, "ci_high": hi / 2, "message": "slope / 2 (0.5 under Brownian motion)"},
        {"series": name, "item": "chow_denning", "status": "",
         "statistic": r.chow_denning_stat, "p_value": r.chow_denning_p,
         "ci_low": np.nan, "ci_high": np.nan, "message": "joint robust variance-ratio test over horizons >= 2"},
    ]
    fa = r.family_false_alarm
    if fa:
        rows.append({"series": name, "item": "family_false_alarm", "status": "", "statistic": fa["not_consistent"],
                     "p_value": np.nan, "ci_low": np.nan, "ci_high": np.nan,
                     "message": f"{fa['sentence']} ({fa['method']})"})
    df = pd.DataFrame(rows)
    for c in ("statistic", "p_value", "ci_low", "ci_high"):
        df[c] = df[c].astype(np.float64)
    return df


# ---------------------------------------------------------------------------------- GARCH
def garch_section(histories: Sequence[PriceHistory], settings: Settings,
                  given: Mapping[str, Any] | None = None) -> SectionResult:
    """GARCH-type fits per series: one row per model (parameters, persistence, long-run, next-bar
    and forward vol, convergence, fallback) and the term structure of expected vol.

    ``settings.garch.processes`` other than 1 fits several series in worker processes
    (:func:`volbench.models.fit_many`); 1 fits them one after the other in this process.
    """
    def option_days(h: PriceHistory) -> int | None:
        try:  # the option's life in bars (trading days to an expiry) for this series' as-of date
            return analysis.option_days(h, settings)
        except VolbenchError:  # the comparison section reports why
            return None

    days_by = {h.name: option_days(h) for h in histories}
    batch: dict[str, Any] = {}
    todo = [h for h in histories if not (given and given.get(h.name) is not None) and h.n >= 3]
    if settings.garch.processes != 1 and len(todo) > 1:
        fitted = fit_many(todo, settings.garch, annualization=settings.annualization)
        batch = {h.name: r for h, r in zip(todo, fitted)}

    def compute(h: PriceHistory):
        if h.name in batch:
            return batch[h.name]
        return analysis.garch_for(h, settings)

    results, failed = _run("garch", histories, compute, given)
    rows, terms, notes = [], [], []
    for name, comp in results.items():
        days = days_by.get(name)
        if comp.message:
            notes.append(_note("garch", name, "reading", comp.message))
        for f in comp.fits:
            rows.append(garch_row(name, f, comp, days))
            notes += [_note("garch", name, "warning", f"{f.model}: {w}") for w in f.warnings]
            notes += [_note("garch", name, "caveat", f"{f.model}: {t}") for t in f.notes]
            if days and np.isnan(rows[-1]["forward_vol"]):
                notes.append(_note("garch", name, "caveat", f"{f.model}: no forward vol for {days} bars"))
            if len(f.term_structure):
                terms.append(_with_series(f.term_structure, name, model=f.model))
    table = None
    if rows:
        table = pd.DataFrame(rows)
        cols = list(table.columns)
        params = [c for c in cols if c.startswith("param_")]
        errors = [c for c in cols if c.startswith("se_")]
        fixed = [c for c in cols if c not in params and c not in errors and c != "warnings"]
        table = table[fixed + params + errors + ["warnings"]]
    pct = [c for c in ("long_run_vol", "next_bar_vol", "last_conditional_vol", "forward_vol", "fallback_vol")
           if table is not None and c in table.columns]
    return _finish("garch", results, failed, {"garch": table, "garch_term": _concat(terms)},
                   {"garch": pct, "garch_term": ("vol",)}, notes)


def _num(v) -> float:
    try:
        f = float(v)
    except (TypeError, ValueError):
        return np.nan
    return f if math.isfinite(f) else np.nan


def _try(fn, *args) -> float:
    try:
        return _num(fn(*args))
    except VolbenchError:
        return np.nan


def garch_row(name: str, f: GarchFit, comp: GarchComparison, days: int | None) -> dict:
    """One fitted model as a flat row (parameters as ``param_<name>``, errors as ``se_<name>``)."""
    cond = f.conditional_vol
    row = {
        "series": name, "model": f.model, "label": f.label, "dist": f.dist,
        "fitted": bool(f.fitted), "converged": bool(f.converged),
        "preferred": comp.preferred == f.model, "nobs": f.nobs,
        "persistence": _num(f.persistence), "persistence_se": _num(f.persistence_se),
        "long_run_vol": _num(f.long_run_vol), "half_life": _num(f.half_life),
        "next_bar_vol": _try(f.forward_vol, 1),
        "last_conditional_vol": _num(cond.iloc[-1]) if len(cond) else np.nan,
        "forward_days": days if days else None,
        "forward_vol": _try(f.forward_vol, days) if days else np.nan,
        "forecast_method": f.forecast_method,
        "forward_vol_source": f.forward_vol_source,
        "candidate_label": f.candidate_label,
        "fallback": f.fallback or "", "fallback_vol": _num(f.fallback_vol),
        "loglik": _num(f.loglik), "aic": _num(f.aic), "bic": _num(f.bic),
    }
    row.update({f"param_{k}": _num(v) for k, v in dict(f.params).items()})
    row.update({f"se_{k}": _num(v) for k, v in dict(f.std_errors).items()})
    row["warnings"] = " | ".join(f.warnings)
    return row


# ---------------------------------------------------------------------------------- comparison
COMPARISON_FRONT = ("series", "as_of", "pricing_vol", "days", "window", "years", "spot", "strike", "rate",
                    "dividend_yield", "kind", "cone_estimator", "cone_percentile")


def comparison_section(histories: Sequence[PriceHistory], settings: Settings,
                       parts: Mapping[str, SectionResult], given: Mapping[str, Any] | None = None) -> SectionResult:
    """The proposed pricing vol against every candidate, per series, with the option's price impact.

    One row per vol (the pricing vol first, then each candidate), prefixed with the option and
    the pricing vol's cone percentile; the reading (with what the price promises say) and the
    missing candidates go to the notes. ``parts`` holds the sections already built whose results
    offer candidates (GARCH, scaling), so nothing is computed twice.
    """

    markets: dict[str, Any] = {}

    def compute(h: PriceHistory):
        offered = {name: part.outcome(h.name) for name, part in parts.items()}
        if settings.quotes is not None:  # the market's implied vol: a candidate, and its own reading
            try:
                offered["quotes"] = analysis.market_for(h, settings)
            except VolbenchError as exc:
                offered["quotes"] = str(exc)
        comp = analysis.comparison_for(h, settings, given=offered)
        markets[h.name] = analysis.market_comparison_for(comp, offered)
        return comp

    results, failed = _run("comparison", histories, compute, given)
    frames, notes = [], []
    for name, c in results.items():
        market = markets.get(name)
        if market is not None:
            notes += [_note("comparison", name, "market", t) for t in market.reading]
        front = {k: getattr(c, k) for k in COMPARISON_FRONT[1:]}
        front["cone_percentile"] = np.nan if c.cone_percentile is None else float(c.cone_percentile)
        front.update(expiry=None if c.life is None else c.life.expiry,  # the option's life by date
                     calendar_days=None if c.life is None else c.life.calendar_days,
                     trading_days=c.days, basis_factor=c.basis_factor)
        t = c.table.rename(columns={"window": "candidate_window"})
        frames.append(_with_series(t, name, **front))
        notes += [_note("comparison", name, "reading", t) for t in c.full_reading]
        notes += [_note("comparison", name, "caveat", t) for t in c.caveats]
        notes += [_note("comparison", name, "candidate not available", f"{k}: {why}")
                  for k, why in dict(c.unavailable).items()]
    table = _concat(frames)
    if table is not None:
        for col in ("pricing_vol", "years", "spot", "strike", "rate", "dividend_yield", "cone_percentile"):
            table[col] = table[col].astype(np.float64)
        table["window"] = table["window"].astype("Int64")
        table["days"] = table["days"].astype("Int64")
    return _finish("comparison", results, failed, {"comparison": table},
                   {"comparison": ("pricing_vol", "rate", "dividend_yield", "vol", "ci_low", "ci_high")}, notes)


# ---------------------------------------------------------------------------------- decision
def decision_section(histories: Sequence[PriceHistory], settings: Settings,
                     built: Mapping[str, SectionResult]) -> SectionResult:
    """The decision record per series (:func:`volbench.analysis.decision_for`): the chosen vol
    against every candidate with its interval, its cone percentile, the scaling verdicts that bear
    on it, the rationale, who prepared it and the caution; uses the comparison and scaling check
    already built."""
    from volbench.pricing.decision import DECISION_COLUMNS

    def compute(h: PriceHistory):
        comp = built["comparison"].results.get(h.name) if "comparison" in built else None
        scaling = built["scaling"].outcome(h.name) if "scaling" in built else None
        return analysis.decision_for(h, settings, comp, scaling=scaling)

    results, failed = _run("decision", histories, compute, None)
    table = _concat([r.table() for r in results.values()])
    if table is not None:
        table = table[list(DECISION_COLUMNS)]
    notes = [_note("decision", name, "reading", t) for name, r in results.items() for t in r.lines]
    return _finish("decision", results, failed, {"decision": table},
                   {"decision": ("decision_vol", "vol", "ci_low", "ci_high")}, notes)
