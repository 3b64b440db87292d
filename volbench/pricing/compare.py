"""Compare a proposed pricing vol with what the history supports, and what the gap is worth.

Candidates are every estimator's latest vol over a window matching the option's life, the GARCH
forward vol for that life and the scaling check's horizon vol when those results are passed in.
The GARCH and scaling modules are optional: their results are used duck-typed and nothing from
them is imported when this module loads.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field, replace

import pandas as pd

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.estimators import REGISTRY, estimate_all, get_spec
from volbench.format import money, ordinal, pct, points
from volbench.pricing.bsm import bsm_greeks, check_kind, check_pricing_vol, check_rate
from volbench.pricing.cone import DEFAULT_CONE_WINDOWS, Cone, ConePlacement, _check_days, vol_cone
from volbench.types import (
    DEFAULT_ANNUALIZATION,
    OptionType,
    check_annualization,
    check_positive,
    check_window,
)

REFERENCE_ESTIMATORS = ("yang_zhang", "close_to_close")
"""Estimator the reading compares against first: the most efficient one available, else close-to-close."""

FAR_MONEYNESS = (0.2, 5.0)
"""Strike/spot outside this range draws a units check in the reading (common practice, no source)."""

GARCH_LABELS = {"garch": "GARCH(1,1)", "gjr": "GJR-GARCH", "egarch": "EGARCH"}
"""Table labels of the GARCH-family models (Bollerslev 1986; Glosten, Jagannathan & Runkle 1993; Nelson 1991)."""

TABLE_COLUMNS = ("source", "key", "label", "window", "vol", "gap_points", "price", "vega", "vega_point",
                 "price_diff", "vega_approx_diff", "note")


@dataclass(frozen=True)
class OptionSpec:
    """The option to reprice. ``None`` spot means the last close; ``None`` strike means at the money (= spot).

    ``rate`` and ``dividend_yield`` are continuously compounded decimals; ``kind`` is "call" or "put".
    """

    strike: float | None = None
    rate: float = 0.0
    dividend_yield: float = 0.0
    kind: OptionType = "call"
    spot: float | None = None


@dataclass(frozen=True)
class Comparison:
    """A pricing vol set against the history for one option.

    Attributes
    ----------
    name, as_of
        Series and the last date used.
    pricing_vol, days, window, years, annualization
        The proposed vol; option life in bars; estimator window in bars; life in years
        (days / annualization); bars per year.
    spot, strike, rate, dividend_yield, kind
        The option as priced (spot and strike resolved).
    price, vega
        Value and vega (per 1.00 of vol) at the pricing vol.
    table
        One row per vol, the pricing vol first (source "pricing"), then the candidates. Columns:
        source ("pricing", "estimator", "garch", "scaling"), key, label, window (bars, or None),
        vol, gap_points = 100 (vol - pricing_vol), price and vega (per 1.00) and vega_point at that
        vol, price_diff = price(vol) - price(pricing_vol) (exact repricing), vega_approx_diff =
        vega(pricing_vol) x (vol - pricing_vol) (first-order approximation), note.
    unavailable
        Candidate -> reason it is missing (estimators lacking columns, GARCH not requested, ...).
    cone_percentile, cone
        Percentile (0-100) of the pricing vol in the cone at the option's life, and the placement
        behind it; ``None`` (with the reason under ``unavailable["cone"]``) when no cone fits.
    reading
        A few plain sentences for the reader.
    """

    name: str
    as_of: str
    pricing_vol: float
    days: int
    window: int
    years: float
    annualization: float
    spot: float
    strike: float
    rate: float
    dividend_yield: float
    kind: str
    price: float
    vega: float
    table: pd.DataFrame
    unavailable: dict[str, str] = field(default_factory=dict)
    cone_percentile: float | None = None
    cone: ConePlacement | None = None
    cone_estimator: str = "close_to_close"
    reading: tuple[str, ...] = ()

    @property
    def candidates(self) -> pd.DataFrame:
        """The table without the pricing-vol row."""
        return self.table[self.table["source"] != "pricing"]

    def as_dict(self) -> dict:
        rows = []
        for rec in self.table.to_dict(orient="records"):
            rows.append({k: (None if isinstance(v, float) and not math.isfinite(v) else v)
                         for k, v in rec.items()})
        return {
            "name": self.name, "as_of": self.as_of, "pricing_vol": self.pricing_vol, "days": self.days,
            "window": self.window, "years": self.years, "annualization": self.annualization,
            "option": {"kind": self.kind, "spot": self.spot, "strike": self.strike, "rate": self.rate,
                       "dividend_yield": self.dividend_yield, "years": self.years},
            "pricing": {"vol": self.pricing_vol, "price": self.price, "vega": self.vega,
                        "vega_point": self.vega / 100.0},
            "cone": None if self.cone is None else {"estimator": self.cone_estimator, **self.cone.as_dict()},
            "cone_percentile": self.cone_percentile,
            "candidates": rows,
            "unavailable": dict(self.unavailable),
            "reading": list(self.reading),
            "conventions": {"gap_points": "100 x (candidate vol - pricing vol)",
                            "price_diff": "price at candidate vol - price at pricing vol",
                            "vega_approx_diff": "vega at pricing vol (per 1.00) x (candidate vol - pricing vol)",
                            "vega": "per 1.00 of vol; vega_point per vol point"},
        }


# ---------------------------------------------------------------------------- candidates
def _garch_candidates(garch, days: int) -> tuple[list[dict], dict[str, str]]:
    """Rows from a GarchComparison (``fits``, ``preferred``) or a single GarchFit (``forward_vol``)."""
    fits = list(getattr(garch, "fits", None) or ([garch] if hasattr(garch, "forward_vol") else []))
    if not fits:
        return [], {"garch": f"object of type {type(garch).__name__} has no GARCH fits or forward_vol"}
    preferred = getattr(garch, "preferred", None)
    rows, missing = [], {}
    for fit in fits:
        model = str(getattr(fit, "model", "garch"))
        dist = getattr(fit, "dist", None)
        key = f"garch:{model}"
        label = getattr(fit, "candidate_label", None) or GARCH_LABELS.get(model, model.upper())
        if getattr(fit, "fallback", None) and " → " not in label:  # never the bare model for a fallback's number
            label += f" → {fit.fallback} fallback"
        if dist and dist != "normal":
            head, arrow, tail = label.partition(" → ")
            label = f"{head} ({dist}){arrow}{tail}"
        try:
            v = fit.forward_vol(days)
        except VolbenchError as exc:
            missing[key] = str(exc)
            continue
        v = None if v is None else float(v)
        if v is None or not (math.isfinite(v) and v > 0):
            missing[key] = f"no forward vol for {days} bars"
            continue
        fallback = getattr(fit, "fallback", None)
        source = getattr(fit, "forward_vol_source", "")
        notes = ([f"no usable forecast; forward vol from {source}" if source
                  else f"no usable forecast; forward vol from the fallback {fallback}"] if fallback
                 else ["forward vol over the option's life"])
        if preferred is not None and model == preferred:
            notes.append("preferred fit")
        if getattr(fit, "converged", True) is False and not fallback:
            notes.append("fit did not converge")
        pers = getattr(fit, "persistence", None)
        if pers is not None and math.isfinite(pers) and pers >= 1:
            notes.append(f"persistence {pers:.3f} >= 1")
        rows.append({"source": "garch", "key": key, "label": label, "window": days, "vol": v,
                     "note": "; ".join(notes)})
    return rows, missing


def _scaling_candidate(scaling, days: int) -> tuple[list[dict], dict[str, str]]:
    try:
        from volbench.scaling import horizon_vol
    except ImportError:
        horizon_vol = None
    if horizon_vol is None:
        method = getattr(scaling, "horizon_vol", None)
        if method is None:
            return [], {"scaling": "scaling module not available in this build"}
        v = method(days)
    else:
        v = horizon_vol(scaling, days)
    if v is None or not (math.isfinite(float(v)) and float(v) > 0):
        hz = getattr(scaling, "horizons", None)
        span = ""
        if isinstance(hz, pd.DataFrame) and "h" in hz and len(hz):
            span = f" (horizons {int(hz['h'].min())} to {int(hz['h'].max())} bars)"
        return [], {"scaling": f"option life of {days} bars is outside the scaling check's horizons{span}"}
    return [{"source": "scaling", "key": "scaling", "label": "Scaling check horizon vol", "window": days,
             "vol": float(v), "note": f"{days}-bar returns over the whole history"}], {}


def _option(history: PriceHistory, option: OptionSpec | None) -> tuple[float, float, float, float, str]:
    o = option or OptionSpec()
    if not isinstance(o, OptionSpec):
        raise VolbenchError(f"option must be an OptionSpec, got {type(o).__name__}")
    kind = check_kind(o.kind)
    spot = float(history.close[-1]) if o.spot is None else check_positive(o.spot, "spot must be a positive price")
    strike = spot if o.strike is None else check_positive(o.strike, "strike must be a positive price")
    return spot, strike, check_rate(o.rate, "rate"), check_rate(o.dividend_yield, "dividend yield"), kind


def _check_cone(cone: Cone, history: PriceHistory, annualization: float, estimator: str) -> None:
    built = (cone.name, cone.end, cone.rows, cone.annualization, cone.estimator)
    wanted = (history.name, history.last_date, history.n, annualization, estimator)
    if built != wanted:
        raise VolbenchError(
            f"the cone given was built for series {cone.name!r} to {cone.end} ({cone.rows} rows, "
            f"{cone.annualization:g} bars/year, {cone.estimator}); this comparison needs "
            f"{history.name!r} to {history.last_date} ({history.n} rows, {annualization:g} bars/year, "
            f"{estimator}): pass a cone of this history or none"
        )


# ---------------------------------------------------------------------------- main entry
def compare(
    history: PriceHistory,
    pricing_vol: float,
    days: int,
    *,
    option: OptionSpec | None = None,
    annualization: float = DEFAULT_ANNUALIZATION,
    window: int | None = None,
    scaling=None,
    garch=None,
    cone_estimator: str = "close_to_close",
    cone_windows: Sequence[int] = DEFAULT_CONE_WINDOWS,
    cone: Cone | None = None,
) -> Comparison:
    """Set a proposed pricing vol against the history and reprice the option at each candidate vol.

    Parameters
    ----------
    history
        Price history; its last row is the as-of date and (by default) the spot.
    pricing_vol
        Proposed annualized vol, decimal in (0, 5).
    days
        Option life in bars (>= 1); years = days / annualization.
    option
        Strike, rate, dividend yield, call/put and spot; defaults to an at-the-money call at the
        last close with zero rate and yield.
    annualization
        Bars per year.
    window
        Estimator window in bars; defaults to ``days`` (at least 2, the smallest window a vol needs).
    scaling
        A scaling-check result (``volbench.scaling.ScalingResult``); its horizon vol for ``days``
        comes from ``volbench.scaling.horizon_vol``.
    garch
        A ``GarchComparison`` (every fit becomes a candidate) or a ``GarchFit``; each must offer
        ``forward_vol(days)``.
    cone_estimator, cone_windows
        Estimator and windows of the cone the pricing vol is placed in.
    cone
        A cone already built on this history (e.g. the one a caller shows); used instead of
        building the same cone again. It must match the history (name, last date, rows),
        ``annualization`` and ``cone_estimator``.

    Returns
    -------
    Comparison

    Raises
    ------
    VolbenchError
        Bad pricing vol (also when it looks like a percent), days, window, annualization or option;
        a ``cone`` built on another history or with other settings.

    Notes
    -----
    Repricing uses Black-Scholes-Merton (:func:`volbench.pricing.bsm.bsm_greeks`). The exact price
    difference is set beside the first-order estimate vega x (vol - pricing vol), which misses the
    curvature (volga) and so drifts apart for large gaps or far-from-the-money options. The cone
    percentile follows :meth:`volbench.pricing.cone.Cone.place` (Burghardt & Lane 1990).
    """
    pv = check_pricing_vol(pricing_vol)
    d = _check_days(days)
    a = check_annualization(annualization)
    if window is None:
        w = max(d, 2)
        window_note = "" if d >= 2 else "window raised to 2 bars, the fewest a vol estimate needs"
    else:
        w = check_window(window, minimum=2)
        if w is None:
            raise VolbenchError("window must be a whole number of bars for a comparison, not 'all'")
        window_note = ""
    get_spec(cone_estimator)
    if cone is not None:
        _check_cone(cone, history, a, cone_estimator)
    spot, strike, rate, q, kind = _option(history, option)
    years = d / a

    report = estimate_all(history, w, annualization=a)
    rows: list[dict] = []
    unavailable: dict[str, str] = {}
    for key, spec in REGISTRY.items():
        if key in report.estimates:
            note = window_note
            if key == "ewma":
                note = "all past returns, half-life ~11 bars"
            rows.append({"source": "estimator", "key": key, "label": spec.label, "window": w,
                         "vol": report.estimates[key].vol, "note": note})
        elif key in report.unavailable:
            unavailable[key] = report.unavailable[key]
    if garch is None:
        unavailable["garch"] = "not requested"
    else:
        r, m = _garch_candidates(garch, d)
        rows += r
        unavailable.update(m)
    if scaling is None:
        unavailable["scaling"] = "not requested"
    else:
        r, m = _scaling_candidate(scaling, d)
        rows += r
        unavailable.update(m)

    pricing_row = {"source": "pricing", "key": "pricing", "label": "Pricing vol", "window": None,
                   "vol": pv, "note": ""}
    table = pd.DataFrame([pricing_row] + rows, columns=["source", "key", "label", "window", "vol", "note"])
    table["window"] = table["window"].astype("Int64")
    vols = table["vol"].to_numpy(dtype=float)
    g = bsm_greeks(spot, strike, years, rate, vols, q, kind)
    p0, v0 = float(g.price[0]), float(g.vega[0])
    table["gap_points"] = 100.0 * (vols - pv)
    table["price"] = g.price
    table["vega"] = g.vega
    table["vega_point"] = g.vega_point
    table["price_diff"] = g.price - p0
    table["vega_approx_diff"] = v0 * (vols - pv)
    table = table[list(TABLE_COLUMNS)]

    placement = None
    try:
        if cone is None:
            cone = vol_cone(history, cone_estimator, cone_windows, annualization=a)
        placement = cone.place(pv, d)
    except VolbenchError as exc:
        unavailable["cone"] = str(exc)

    comp = Comparison(
        name=history.name, as_of=history.last_date, pricing_vol=pv, days=d, window=w, years=years,
        annualization=a, spot=spot, strike=strike, rate=rate, dividend_yield=q, kind=kind,
        price=p0, vega=v0, table=table, unavailable=unavailable,
        cone_percentile=None if placement is None else placement.percentile, cone=placement,
        cone_estimator=cone_estimator,
    )
    return _with_reading(comp)


# ---------------------------------------------------------------------------- plain reading
def _cone_line(c: Comparison) -> list[str]:
    if c.cone is None:
        return []
    p = c.cone.percentile
    if p >= 100:
        where = "above every value in the history of"
    elif p <= 0:
        where = "below every value in the history of"
    else:
        where = f"at the {ordinal(round(p))} percentile of"
    return [f"pricing vol {pct(c.pricing_vol, 1)} sits {where} {c.cone.note}"]


def _reference_lines(c: Comparison, cand: pd.DataFrame) -> list[str]:
    """Gap to the reference estimator and what it is worth on the option."""
    ref = next((cand[cand["key"] == k].iloc[0] for k in REFERENCE_ESTIMATORS if (cand["key"] == k).any()),
               cand.iloc[0])
    name, rv = ref["label"], pct(ref["vol"], 1)
    gap = -float(ref["gap_points"])
    if abs(gap) < 0.05:
        return [f"the pricing vol matches {name} ({rv}) within 0.1 vol point"]
    span = f" over the last {c.window} bars" if ref["source"] == "estimator" else ""
    lines = [f"the pricing vol is {points(abs(gap))} vol points {'above' if gap > 0 else 'below'} {name} ({rv}{span})"]
    if float(c.table["price"].max()) < 0.005:
        lines.append(f"the {c.kind} is worth under 0.01 at every vol here, so the choice of vol barely moves its price")
    else:
        diff = float(ref["price_diff"])
        more = "more" if diff > 0 else "less"
        lines.append(f"the {c.kind} is worth {money(diff)} {more} at {name}'s vol ({c.price:.2f} at the pricing "
                     f"vol; the vega approximation says {money(float(ref['vega_approx_diff']))} {more})")
    return lines


def _range_line(c: Comparison, cand: pd.DataFrame) -> list[str]:
    lo, hi = cand.loc[cand["vol"].idxmin()], cand.loc[cand["vol"].idxmax()]
    n_below = int((cand["vol"] < c.pricing_vol).sum())
    if n_below == len(cand):
        pos = f"the pricing vol is above all {len(cand)} of them"
    elif n_below == 0:
        pos = f"the pricing vol is below all {len(cand)} of them"
    else:
        pos = f"the pricing vol is above {n_below} of {len(cand)}"
    return [(f"candidate vols run from {pct(lo['vol'], 1)} ({lo['label']}) to "
            f"{pct(hi['vol'], 1)} ({hi['label']}); {pos}")]


def _garch_line(c: Comparison, cand: pd.DataFrame) -> list[str]:
    """The preferred model's forward vol; when no fit is usable, the fallback named as such."""
    gar = cand[cand["source"] == "garch"]
    if not len(gar):
        return []
    pref = gar[gar["note"].str.contains("preferred")]
    usable = gar[~gar["label"].str.contains(" → ", regex=False)]
    row = pref.iloc[0] if len(pref) else (usable.iloc[0] if len(usable) else gar.iloc[0])
    side = "below" if row["gap_points"] < 0 else "above"
    gap = f"{points(abs(row['gap_points']))} vol points {side} the pricing vol"
    if " → " not in row["label"]:
        return [f"{row['label']} forward vol over {c.days} bars is {pct(row['vol'], 1)}, {gap}"]
    source = str(row["note"]).split("forward vol from ", 1)[-1]
    return [(f"no GARCH-family fit gave a usable forecast, so the forward vol over {c.days} bars is a fallback's: "
             f"{pct(row['vol'], 1)} from {source}; {gap}")]


def _moneyness_line(c: Comparison) -> list[str]:
    m = c.strike / c.spot
    if FAR_MONEYNESS[0] <= m <= FAR_MONEYNESS[1]:
        return []
    return [f"strike {c.strike:g} is {100 * m:.3g}% of spot {c.spot:g}; check that both are in the same units"]


def _with_reading(c: Comparison) -> Comparison:
    cand = c.candidates
    lines = _moneyness_line(c) + _cone_line(c)
    if len(cand):
        lines += _reference_lines(c, cand) + _range_line(c, cand) + _garch_line(c, cand)
    return replace(c, reading=tuple(lines))
