"""Compare a proposed pricing vol with what the history supports, and what the gap is worth.

Candidates are every estimator's latest vol over a window matching the option's life, plus the
candidates of any result passed in as a source (:class:`volbench.candidates.CandidateSource`: a
GARCH-type comparison's forward vols, the scaling check's horizon vol, and whatever offers
candidates next). This module knows nothing about those results beyond the protocol. The
comparison also carries what each vol promises about the price (bands, straddle and breakevens,
:mod:`volbench.pricing.promise`), so every front end shows the same.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field, replace

import pandas as pd

from volbench import validate
from volbench.candidates import Candidate, CandidateSet, CandidateSource
from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.estimators import estimate_all, get_spec
from volbench.format import money, ordinal, pct, points
from volbench.pricing.bsm import bsm_greeks, check_kind, check_pricing_vol, check_rate
from volbench.pricing.cone import DEFAULT_CONE_WINDOWS, Cone, ConePlacement, _check_days, vol_cone
from volbench.pricing.daycount import OptionLife
from volbench.pricing.promise import PromiseCheck, promises_for
from volbench.types import (
    DEFAULT_ANNUALIZATION,
    OptionType,
    check_annualization,
    check_window,
)

REFERENCE_ESTIMATORS = ("yang_zhang", "close_to_close")
"""Estimator the reading compares against first: the most efficient one available, else close-to-close."""

REFERENCE_WHY = {
    "yang_zhang": "the reference estimator: the most efficient one here that uses every price of the bar "
                  "and allows for opening jumps",
    "close_to_close": "the reference estimator: Yang-Zhang needs open, high and low, which this file lacks",
}
"""Why the reading measures the gap against each reference estimator (said in the reading)."""

FAR_MONEYNESS = (0.2, 5.0)
"""Strike/spot outside this range draws a units check in the reading (common practice, no source)."""

TABLE_COLUMNS = ("source", "key", "label", "window", "vol", "ci_low", "ci_high", "gap_points", "price", "vega",
                 "vega_point", "price_diff", "vega_approx_diff", "note")
PROMISE_KEYS = ("bands", "bands_by_candidate", "band_scores", "straddle", "straddle_by_candidate", "breakeven",
                "breakeven_by_candidate")
"""Price-promise fields placed at the top level of a comparison's JSON; the rest go under ``price_promise``."""


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
        source ("pricing", "estimator", or the source of each candidate: "garch", "scaling", ...),
        key, label, window (bars, or None), vol, ci_low and ci_high (the candidate's interval when it
        has one), gap_points = 100 (vol - pricing_vol), price and vega (per 1.00) and vega_point at that
        vol, price_diff = price(vol) - price(pricing_vol) (exact repricing), vega_approx_diff =
        vega(pricing_vol) x (vol - pricing_vol) (first-order approximation), note.
    unavailable
        Candidate -> reason it is missing (estimators lacking columns, GARCH not requested, ...).
    cone_percentile, cone
        Percentile (0-100) of the pricing vol in the cone at the option's life, and the placement
        behind it; ``None`` (with the reason under ``unavailable["cone"]``) when no cone fits.
    reading
        A few plain sentences for the reader.
    promises
        What each vol promises about the price (bands, straddle, breakevens) against the history's
        moves (:func:`volbench.pricing.promise.promises_for`); ``None`` with the reason under
        ``unavailable["bands"]``.
    life
        The option's life by date (expiry, calendar days, ACT/365 years, trading days) when it was
        given as an expiry or days on a basis; ``None`` when the life is ``days`` bars.
    basis_factor
        sqrt((days / annualization) / years): the history's vols (annualized over trading bars) are
        multiplied by it to put them on the pricing vol's ACT/365 basis (1 without a ``life``).
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
    promises: PromiseCheck | None = None
    life: OptionLife | None = None
    basis_factor: float = 1.0

    @property
    def candidates(self) -> pd.DataFrame:
        """The table without the pricing-vol row."""
        return self.table[self.table["source"] != "pricing"]

    @property
    def full_reading(self) -> tuple[str, ...]:
        """The comparison's reading, then what the price promises say."""
        return self.reading + (() if self.promises is None else self.promises.reading)

    @property
    def caveats(self) -> tuple[str, ...]:
        """Caveats on the reading (too few windows to test a band, ...)."""
        return () if self.promises is None else self.promises.warnings

    def as_dict(self) -> dict:
        rows = []
        for rec in self.table.to_dict(orient="records"):
            rows.append({k: (None if isinstance(v, float) and not math.isfinite(v) else v)
                         for k, v in rec.items()})
        out = {
            "name": self.name, "as_of": self.as_of, "pricing_vol": self.pricing_vol, "days": self.days,
            "window": self.window, "years": self.years, "annualization": self.annualization,
            "expiry": None if self.life is None else self.life.expiry,
            "calendar_days": None if self.life is None else self.life.calendar_days,
            "trading_days": self.days,
            "life": None if self.life is None else self.life.as_dict(),
            "basis_factor": self.basis_factor,
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
                            "vega": "per 1.00 of vol; vega_point per vol point",
                            "ci_low": "the candidate's own interval, when it has one (null otherwise)",
                            "years": ("calendar days / 365 (ACT/365)" if self.life is not None
                                      else "days / annualization"),
                            "basis_factor": ("history's vols x sqrt((trading_days / annualization) / years), "
                                             "the same variance over the ACT/365 years; the pricing vol is "
                                             "divided by it to place it in the cone")},
        }
        if self.promises is not None:
            p = self.promises.as_dict()
            out.update({k: p.pop(k) for k in PROMISE_KEYS})
            out["price_promise"] = p
        return out


def _option(history: PriceHistory, option: OptionSpec | None) -> tuple[float, float, float, float, str]:
    o = option or OptionSpec()
    if not isinstance(o, OptionSpec):
        raise VolbenchError(f"option must be an OptionSpec, got {type(o).__name__}")
    kind = check_kind(o.kind)
    spot = float(history.close[-1]) if o.spot is None else validate.price(o.spot, "spot")
    strike = spot if o.strike is None else validate.price(o.strike, "strike")
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
    sources: Sequence[CandidateSource] = (),
    cone_estimator: str = "close_to_close",
    cone_windows: Sequence[int] = DEFAULT_CONE_WINDOWS,
    cone: Cone | None = None,
    estimator_options: dict | None = None,
    life: OptionLife | None = None,
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
    sources
        Results offering more candidates (:class:`volbench.candidates.CandidateSource`: a
        ``GarchComparison``, a ``ScalingResult``, a ready-made ``CandidateSet``...), in table order.
        A set with no candidate says why under its source in ``unavailable``.
    cone_estimator, cone_windows
        Estimator and windows of the cone the pricing vol is placed in.
    cone
        A cone already built on this history (e.g. the one a caller shows); used instead of
        building the same cone again. It must match the history (name, last date, rows),
        ``annualization`` and ``cone_estimator``.
    estimator_options
        ``zero_mean``, ``lam`` for the estimators (their notes follow, e.g. EWMA's half-life).
    life
        The option's life by date (:func:`volbench.pricing.daycount.option_life`); its
        ``trading_days`` must equal ``days``. Then years = calendar days / 365 (ACT/365) and every
        vol from the history is put on that basis (see Notes).

    Returns
    -------
    Comparison

    Raises
    ------
    VolbenchError
        Bad pricing vol (also when it looks like a percent), days, window, annualization or option;
        a ``cone`` built on another history or with other settings; a source that is not one.

    Notes
    -----
    Repricing uses Black-Scholes-Merton (:func:`volbench.pricing.bsm.bsm_greeks`). The exact price
    difference is set beside the first-order estimate vega x (vol - pricing vol), which misses the
    curvature (volga) and so drifts apart for large gaps or far-from-the-money options. The cone
    percentile follows :meth:`volbench.pricing.cone.Cone.place` (Burghardt & Lane 1990).

    With a ``life``, the history's vols (annualized over A trading bars) are multiplied by
    f = sqrt((N / A) / T), N trading days and T ACT/365 years, so that f^2 sigma^2 T = sigma^2 N / A,
    the same variance over the life; the pricing vol is divided by f to place it in the cone, and
    the price promises use the total deviation vol x sqrt(T) (docs/METHODS.md, "Day counts and the
    option's life"; common practice, no source).
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
    years, factor = d / a, 1.0
    if life is not None:
        if not isinstance(life, OptionLife):
            raise VolbenchError(f"life must be an OptionLife, got {type(life).__name__}")
        if life.trading_days != d:
            raise VolbenchError(f"the option's life has {life.trading_days} trading days but days is {d}")
        years, factor = life.years, life.pricing_basis_factor(a)
    for src in sources:
        if not isinstance(src, CandidateSource):
            raise VolbenchError(f"a comparison source must offer candidates(days), got {type(src).__name__}")

    opts = {k: v for k, v in dict(estimator_options or {}).items() if v is not None}
    report = estimate_all(history, w, annualization=a, **opts)
    sets = [report.candidates(d)] + [src.candidates(d) for src in sources]
    rows: list[dict] = []
    unavailable: dict[str, str] = {}
    for cs in sets:
        for c in cs.items:
            rows.append(_row(c, window_note if c.source == "estimator" else "", factor))
        unavailable.update(cs.unavailable)

    pricing_row = {"source": "pricing", "key": "pricing", "label": "Pricing vol", "window": None,
                   "vol": pv, "ci_low": None, "ci_high": None, "note": ""}
    table = pd.DataFrame([pricing_row] + rows,
                         columns=["source", "key", "label", "window", "vol", "ci_low", "ci_high", "note"])
    table["window"] = table["window"].astype("Int64")
    for col in ("ci_low", "ci_high"):
        table[col] = table[col].astype(float)
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
        placement = cone.place(pv / factor, d)
    except VolbenchError as exc:
        unavailable["cone"] = str(exc)

    comp = Comparison(
        name=history.name, as_of=history.last_date, pricing_vol=pv, days=d, window=w, years=years,
        annualization=a, spot=spot, strike=strike, rate=rate, dividend_yield=q, kind=kind,
        price=p0, vega=v0, table=table, unavailable=unavailable,
        cone_percentile=None if placement is None else placement.percentile, cone=placement,
        cone_estimator=cone_estimator, life=life, basis_factor=factor,
    )
    try:  # the promises use vol x sqrt(days / annualization) = vol x sqrt(years) with this annualization
        basis = comp if life is None else replace(comp, annualization=d / years)
        comp = replace(comp, promises=promises_for(basis, history))
    except VolbenchError as exc:
        comp = replace(comp, unavailable={**comp.unavailable, "bands": str(exc)})
    return _with_reading(comp, [cs for cs in sets[1:] if cs.headline is not None], sources)


def _row(c: Candidate, default_note: str, factor: float = 1.0) -> dict:
    """A candidate's row; ``factor`` puts its vol and interval on the pricing vol's basis."""
    def scaled(v):
        return None if v is None else v * factor

    if c.on_pricing_basis:  # an implied vol is already on the pricing vol's basis
        factor = 1.0
    return {"source": c.source, "key": c.key, "label": c.label, "window": c.window, "vol": c.vol * factor,
            "ci_low": scaled(c.ci_low), "ci_high": scaled(c.ci_high), "note": c.note or default_note}


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
    basis = ("" if c.life is None else
             f" (as {pct(c.pricing_vol / c.basis_factor, 1)} over {c.days} trading days, the cone's basis)")
    return [f"pricing vol {pct(c.pricing_vol, 1)}{basis} sits {where} {c.cone.note}"]


def _reference_lines(c: Comparison, cand: pd.DataFrame) -> list[str]:
    """Gap to the reference estimator and what it is worth on the option."""
    ref = next((cand[cand["key"] == k].iloc[0] for k in REFERENCE_ESTIMATORS if (cand["key"] == k).any()),
               cand.iloc[0])
    name, rv = ref["label"], pct(ref["vol"], 1)
    why = REFERENCE_WHY.get(ref["key"], "the first candidate, as neither Yang-Zhang nor close-to-close is available")
    gap = -float(ref["gap_points"])
    if abs(gap) < 0.05:
        return [f"the pricing vol matches {name} ({rv}; {why}) within 0.1 vol point"]
    span = f" over the last {c.window} bars" if ref["source"] == "estimator" else ""
    lines = [(f"the pricing vol is {points(abs(gap))} vol points {'above' if gap > 0 else 'below'} {name} "
             f"({rv}{span}; {why})")]
    if float(c.table["price"].max()) < 0.005:
        lines.append(f"the {c.kind} is worth under 0.01 at every vol here, so the choice of vol barely moves its price")
    else:
        diff = float(ref["price_diff"])
        more = "more" if diff > 0 else "less"
        lines.append(f"the {c.kind} is worth {money(diff)} {more} at {name}'s vol ({c.price:.2f} at the pricing "
                     f"vol; the vega approximation says {money(float(ref['vega_approx_diff']))} {more})")
    return lines


def distinct_candidates(cand: pd.DataFrame) -> pd.DataFrame:
    """The candidates with a number repeated by a later one (a fallback giving another candidate's
    vol, e.g. a GARCH fit falling back to EWMA) counted once: later exact repeats are dropped."""
    vols = cand["vol"].to_numpy(dtype=float)
    keep = [i for i in range(len(vols)) if not any(abs(vols[i] - vols[j]) <= 1e-12 * max(1.0, abs(vols[j]))
                                                   for j in range(i))]
    return cand.iloc[keep]


def _range_line(c: Comparison, cand: pd.DataFrame) -> list[str]:
    lo, hi = cand.loc[cand["vol"].idxmin()], cand.loc[cand["vol"].idxmax()]
    repeated = len(cand) - len(distinct := distinct_candidates(cand))
    cand = distinct
    n_below = int((cand["vol"] < c.pricing_vol).sum())
    of = f"{len(cand)} distinct vols" if repeated else f"{len(cand)}"
    if n_below == len(cand):
        pos = f"the pricing vol is above all {of}" + ("" if repeated else " of them")
    elif n_below == 0:
        pos = f"the pricing vol is below all {of}" + ("" if repeated else " of them")
    else:
        pos = f"the pricing vol is above {n_below} of {of}"
    if repeated:
        pos += f" ({repeated} repeating another candidate's number, such as a fallback, counted once)"
    return [(f"candidate vols run from {pct(lo['vol'], 1)} ({lo['label']}) to "
            f"{pct(hi['vol'], 1)} ({hi['label']}); {pos}")]


def _headline_line(c: Comparison, cs: CandidateSet) -> list[str]:
    """A source's lead candidate (e.g. the preferred fit); a fallback's number is named as such."""
    head = cs.headline
    vol = head.vol * (1.0 if head.on_pricing_basis else c.basis_factor)  # on the pricing vol's basis, as in the table
    gap_points = 100.0 * (vol - c.pricing_vol)
    side = "below" if gap_points < 0 else "above"
    gap = f"{points(abs(gap_points))} vol points {side} the pricing vol"
    if head.fallback is None:
        over = f"for {c.life.expiry}" if head.on_pricing_basis and c.life is not None else f"over {c.days} bars"
        return [f"{head.label} {cs.what} {over} is {pct(vol, 1)}, {gap}"]
    return [(f"no {cs.title} gave a usable forecast, so the {cs.what} over {c.days} bars is a fallback's: "
             f"{pct(vol, 1)} from {head.fallback}; {gap}")]


def _moneyness_line(c: Comparison) -> list[str]:
    m = c.strike / c.spot
    if FAR_MONEYNESS[0] <= m <= FAR_MONEYNESS[1]:
        return []
    return [f"strike {c.strike:g} is {100 * m:.3g}% of spot {c.spot:g}; check that both are in the same units"]


def _verdict_lines(sources: Sequence[CandidateSource]) -> list[str]:
    """Rejected scaling verdicts (any source with ``verdicts``): they bear on every candidate."""
    lines = []
    for src in sources:
        for v in getattr(src, "verdicts", ()) or ():
            if getattr(v, "status", None) == "rejected":
                lines.append(f"the scaling check rejects {v.property.replace('_', ' ')}: {v.message}")
    return lines


def _with_reading(c: Comparison, headlined: Sequence[CandidateSet] = (),
                  sources: Sequence[CandidateSource] = ()) -> Comparison:
    cand = c.candidates
    lines = _moneyness_line(c) + _cone_line(c)
    if len(cand):
        lines += _reference_lines(c, cand) + _range_line(c, cand)
        for cs in headlined:
            lines += _headline_line(c, cs)
    lines += _verdict_lines(sources)
    return replace(c, reading=tuple(lines))
