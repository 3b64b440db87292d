"""Optional sections of an export: cone, scaling check, GARCH and the pricing-vol comparison.

Each section is built by one small function that imports its analysis module lazily. When the
module is not installed, the section was not requested, or a series cannot be analysed, the
section records why ("not available: ...") instead of failing the whole export; the estimates
table never depends on these sections. Caveats, per-series failures and the comparison's reading
go to a shared ``notes`` table (section, series, kind, text).
"""

from __future__ import annotations

import importlib
import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np
import pandas as pd

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError

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


def not_requested(why: str = "") -> SectionResult:
    return SectionResult(SectionStatus("not requested", why))


def _lazy(module: str, *names: str) -> tuple | str:
    """Import ``names`` from ``module``; a sentence saying why when the module is not there."""
    try:
        mod = importlib.import_module(module)
    except ModuleNotFoundError as exc:
        if exc.name and (module == exc.name or module.startswith(exc.name + ".")):
            return f"module {module} is not installed in this volbench"
        raise
    missing = [n for n in names if not hasattr(mod, n)]
    if missing:
        return f"module {module} does not provide {', '.join(missing)}"
    return tuple(getattr(mod, n) for n in names)


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
        return SectionResult(SectionStatus("not available", why), notes=tuple(notes))
    status = (SectionStatus("partial", "; ".join(f"{s}: {w}" for s, w in failed)) if failed
              else SectionStatus("included"))
    tables = {k: v for k, v in tables.items() if v is not None}
    return SectionResult(status, tables, {k: tuple(v) for k, v in percent.items() if k in tables},
                         tuple(notes), results)


def _concat(frames: list[pd.DataFrame]) -> pd.DataFrame | None:
    frames = [f for f in frames if f is not None and len(f.columns)]
    return pd.concat(frames, ignore_index=True, sort=False) if frames else None


def _unavailable(imported) -> str | None:
    return imported if isinstance(imported, str) else None


# ---------------------------------------------------------------------------------- cone
CONE_NOT_PERCENT = ("window", "current_percentile", "n_windows", "n_independent", "ht_factor")


def cone_section(
    histories: Sequence[PriceHistory],
    *,
    estimator: str,
    windows: Sequence[int] | None,
    annualization: float,
    hodges_tompkins: bool = False,
    given: Mapping[str, Any] | None = None,
) -> SectionResult:
    """Volatility cone per series: one row per window (min ... max, mean, current, its percentile)."""
    imported = _lazy("volbench.pricing.cone", "vol_cone")
    if _unavailable(imported) and not given:
        return SectionResult(SectionStatus("not available", imported))

    def compute(h: PriceHistory):
        if _unavailable(imported):
            raise VolbenchError(imported)
        kw: dict[str, Any] = {"annualization": annualization, "hodges_tompkins": hodges_tompkins}
        if windows:
            kw["windows"] = tuple(windows)
        return imported[0](h, estimator, **kw)

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
def scaling_section(
    histories: Sequence[PriceHistory],
    *,
    annualization: float,
    given: Mapping[str, Any] | None = None,
) -> SectionResult:
    """Brownian-scaling check per series: the horizon table and a summary with the verdicts."""
    imported = _lazy("volbench.scaling", "scaling_check")
    if _unavailable(imported) and not given:
        return SectionResult(SectionStatus("not available", imported))

    def compute(h: PriceHistory):
        if _unavailable(imported):
            raise VolbenchError(imported)
        return imported[0](h, annualization=annualization)

    results, failed = _run("scaling", histories, compute, given)
    horizons = _concat([_with_series(r.horizons, name) for name, r in results.items()])
    summary = _concat([scaling_summary(name, r) for name, r in results.items()])
    notes = []
    for name, r in results.items():
        notes += [_note("scaling", name, "caveat", t) for t in getattr(r, "notes", ())]
        notes += [_note("scaling", name, "horizon left out", f"horizon {h}: {why}")
                  for h, why in dict(getattr(r, "dropped", {}) or {}).items()]
    return _finish("scaling", results, failed, {"scaling": horizons, "scaling_summary": summary},
                   {"scaling": ("annualized_vol", "sqrt_time_vol")}, notes)


def scaling_summary(name: str, r) -> pd.DataFrame:
    """One row per verdict, then the log-log slope, Hurst exponent and joint variance-ratio test."""
    level = 1.0 - float(getattr(r, "alpha", 0.05))
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
         "statistic": getattr(r, "chow_denning_stat", np.nan), "p_value": r.chow_denning_p,
         "ci_low": np.nan, "ci_high": np.nan, "message": "joint robust variance-ratio test over horizons >= 2"},
    ]
    fa = getattr(r, "family_false_alarm", None)
    if fa:
        rows.append({"series": name, "item": "family_false_alarm", "status": "", "statistic": fa["not_consistent"],
                     "p_value": np.nan, "ci_low": np.nan, "ci_high": np.nan,
                     "message": f"{fa['sentence']} ({fa['method']})"})
    df = pd.DataFrame(rows)
    for c in ("statistic", "p_value", "ci_low", "ci_high"):
        df[c] = df[c].astype(np.float64)
    return df


# ---------------------------------------------------------------------------------- GARCH
def garch_section(
    histories: Sequence[PriceHistory],
    *,
    models: Sequence[str],
    dist: str,
    annualization: float,
    days: int | None = None,
    processes: int | None = 1,
    given: Mapping[str, Any] | None = None,
) -> SectionResult:
    """GARCH-family fits per series: one row per model (parameters, persistence, long-run, next-bar
    and forward vol, convergence, fallback) and the term structure of expected vol.

    ``processes`` other than 1 fits several series in worker processes
    (:func:`volbench.models.fit_many`); 1 fits them one after the other in this process.
    """
    imported = _lazy("volbench.models", "fit_models", "fit_many")
    if _unavailable(imported) and not given:
        return SectionResult(SectionStatus("not available", imported))
    batch: dict[str, Any] = {}
    todo = [h for h in histories if not (given and given.get(h.name) is not None) and h.n >= 3]
    if not _unavailable(imported) and processes != 1 and len(todo) > 1:
        fitted = imported[1](todo, models=tuple(models), dist=dist, annualization=annualization,
                             processes=processes)
        batch = {h.name: r for h, r in zip(todo, fitted)}

    def compute(h: PriceHistory):
        if h.name in batch:
            return batch[h.name]
        if _unavailable(imported):
            raise VolbenchError(imported)
        return imported[0](h, models=tuple(models), dist=dist, annualization=annualization)

    results, failed = _run("garch", histories, compute, given)
    rows, terms, notes = [], [], []
    for name, comp in results.items():
        if getattr(comp, "message", ""):
            notes.append(_note("garch", name, "reading", comp.message))
        for f in comp.fits:
            rows.append(garch_row(name, f, comp, days))
            notes += [_note("garch", name, "warning", f"{f.model}: {w}") for w in f.warnings]
            notes += [_note("garch", name, "caveat", f"{f.model}: {t}") for t in getattr(f, "notes", ())]
            if days and np.isnan(rows[-1]["forward_vol"]):
                notes.append(_note("garch", name, "caveat", f"{f.model}: no forward vol for {days} bars"))
            ts = getattr(f, "term_structure", None)
            if ts is not None and len(ts):
                terms.append(_with_series(ts, name, model=f.model))
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


def garch_row(name: str, f, comp, days: int | None) -> dict:
    """One fitted model as a flat row (parameters as ``param_<name>``, errors as ``se_<name>``)."""
    cond = getattr(f, "conditional_vol", None)
    row = {
        "series": name, "model": f.model, "label": getattr(f, "label", f.model), "dist": f.dist,
        "fitted": bool(getattr(f, "fitted", True)), "converged": bool(f.converged),
        "preferred": getattr(comp, "preferred", None) == f.model, "nobs": getattr(f, "nobs", None),
        "persistence": _num(f.persistence), "persistence_se": _num(getattr(f, "persistence_se", np.nan)),
        "long_run_vol": _num(f.long_run_vol), "half_life": _num(f.half_life),
        "next_bar_vol": _try(f.forward_vol, 1),
        "last_conditional_vol": _num(cond.iloc[-1]) if cond is not None and len(cond) else np.nan,
        "forward_days": days if days else None,
        "forward_vol": _try(f.forward_vol, days) if days else np.nan,
        "forecast_method": getattr(f, "forecast_method", ""),
        "forward_vol_source": getattr(f, "forward_vol_source", ""),
        "candidate_label": getattr(f, "candidate_label", getattr(f, "label", f.model)),
        "fallback": f.fallback or "", "fallback_vol": _num(getattr(f, "fallback_vol", np.nan)),
        "loglik": _num(f.loglik), "aic": _num(f.aic), "bic": _num(f.bic),
    }
    row.update({f"param_{k}": _num(v) for k, v in dict(f.params).items()})
    row.update({f"se_{k}": _num(v) for k, v in dict(f.std_errors).items()})
    row["warnings"] = " | ".join(f.warnings)
    return row


# ---------------------------------------------------------------------------------- comparison
COMPARISON_FRONT = ("series", "as_of", "pricing_vol", "days", "window", "years", "spot", "strike", "rate",
                    "dividend_yield", "kind", "cone_estimator", "cone_percentile")


def comparison_section(
    histories: Sequence[PriceHistory],
    *,
    pricing_vol: float,
    days: int,
    option: Any,
    annualization: float,
    cone_estimator: str,
    cone_windows: Sequence[int] | None,
    scaling: Mapping[str, Any],
    garch: Mapping[str, Any],
    given: Mapping[str, Any] | None = None,
    window: int | None = None,
) -> SectionResult:
    """The proposed pricing vol against every candidate, per series, with the option's price impact.

    One row per vol (the pricing vol first, then each candidate), prefixed with the option and
    the pricing vol's cone percentile; the reading and the missing candidates go to the notes.
    """
    imported = _lazy("volbench.pricing.compare", "compare", "OptionSpec")
    if _unavailable(imported) and not given:
        return SectionResult(SectionStatus("not available", imported))

    def compute(h: PriceHistory):
        if _unavailable(imported):
            raise VolbenchError(imported)
        compare, option_spec = imported
        spec = option_spec(**option) if isinstance(option, Mapping) else option
        kw: dict[str, Any] = {"option": spec, "annualization": annualization, "scaling": scaling.get(h.name),
                              "garch": garch.get(h.name), "cone_estimator": cone_estimator, "window": window}
        if cone_windows:
            kw["cone_windows"] = tuple(cone_windows)
        return compare(h, pricing_vol, days, **kw)

    results, failed = _run("comparison", histories, compute, given)
    frames, notes = [], []
    for name, c in results.items():
        front = {k: getattr(c, k, None) for k in COMPARISON_FRONT[1:]}
        front["cone_percentile"] = np.nan if c.cone_percentile is None else float(c.cone_percentile)
        t = c.table.rename(columns={"window": "candidate_window"})
        frames.append(_with_series(t, name, **front))
        notes += [_note("comparison", name, "reading", t) for t in c.reading]
        notes += [_note("comparison", name, "candidate not available", f"{k}: {why}")
                  for k, why in dict(c.unavailable).items()]
    table = _concat(frames)
    if table is not None:
        for col in ("pricing_vol", "years", "spot", "strike", "rate", "dividend_yield", "cone_percentile"):
            table[col] = table[col].astype(np.float64)
        table["window"] = table["window"].astype("Int64")
        table["days"] = table["days"].astype("Int64")
    return _finish("comparison", results, failed, {"comparison": table},
                   {"comparison": ("pricing_vol", "rate", "dividend_yield", "vol")}, notes)
