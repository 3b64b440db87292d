"""The market's at-the-money implied vol for the option being priced, as a comparison candidate,
and the market comparison: implied against the pricing vol, realized history and a forecast.

:func:`market_view` reads the implied surface of a quotes file at the comparison's as-of date and
finds the at-the-money implied vol for the option's own expiry (:func:`atm_for_life`);
:class:`MarketView` offers it to :func:`volbench.pricing.compare.compare` through the
:class:`~volbench.candidates.CandidateSource` protocol. :func:`market_comparison` then sets that
implied vol against the comparison's numbers: the gap to the pricing vol, to the realized vol and
to the forecast (the variance risk premium in vol points), and its place in the volatility cone.
See docs/METHODS.md, "Implied vol and option quotes".
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field

from volbench.candidates import Candidate, CandidateSet
from volbench.format import ordinal, pct, points
from volbench.market.surface import ImpliedSurface
from volbench.market.versus import VersusHistory
from volbench.pricing.daycount import OptionLife

TERM_METHOD = ("the at-the-money implied vol of the quoted expiry equal to the option's, else linear "
               "interpolation of total implied variance s^2 T in ACT/365 years between the quoted expiries "
               "either side (before the first expiry: the first expiry's vol, total variance growing from "
               "zero at the as-of date); no extrapolation beyond the last expiry")


def atm_for_life(surface: ImpliedSurface, life: OptionLife) -> tuple[float | None, str]:
    """At-the-money implied vol for an option expiring at ``life.expiry``, and how it was found.

    Returns
    -------
    (vol, text)
        ``vol`` is ``None`` when the quotes cannot give one; ``text`` then says why, else how.

    Notes
    -----
    Total implied variance w(T) = s^2 T is interpolated linearly in T (ACT/365 years) between the
    two quoted expiries T1 <= T <= T2 with an at-the-money vol: w = w1 + (w2 - w1)(T - T1)/(T2 - T1),
    s = sqrt(w / T); between the as-of date and the first expiry w grows from 0, so s is the first
    expiry's vol. A negative forward variance between T1 and T2 (calendar arbitrage) is refused
    (common practice, e.g. Gatheral, *The Volatility Surface*, 2006, from memory).
    """
    views = [e for e in surface.expiries if e.atm_implied_vol is not None]
    if not views:
        return None, "no quoted expiry has an at-the-money implied vol"
    t = life.years
    for e in views:
        if e.expiry == life.expiry:
            return e.atm_implied_vol, f"the at-the-money implied vol of the quoted expiry {e.expiry}"
    if t < views[0].life.years:
        first = views[0]
        return first.atm_implied_vol, (f"the first quoted expiry's ({first.expiry}) at-the-money implied vol, "
                                       f"the option expiring before it on {life.expiry}")
    if t > views[-1].life.years:
        return None, (f"the option expires on {life.expiry}, after the last quoted expiry with an at-the-money "
                      f"vol ({views[-1].expiry}); volbench does not extrapolate the term structure")
    for lo, hi in itertools.pairwise(views):
        if lo.life.years <= t <= hi.life.years:
            w1, w2 = lo.atm_implied_vol ** 2 * lo.life.years, hi.atm_implied_vol ** 2 * hi.life.years
            if w2 < w1:
                return None, (f"total implied variance falls from {lo.expiry} to {hi.expiry} (calendar "
                              "arbitrage in the quotes), so no vol is interpolated between them")
            w = w1 + (w2 - w1) * (t - lo.life.years) / (hi.life.years - lo.life.years)
            return math.sqrt(w / t), (f"interpolated in total variance between the quoted expiries {lo.expiry} "
                                      f"and {hi.expiry}")
    return None, "no quoted expiries bracket the option's"  # pragma: no cover - the cases above cover every t


@dataclass(frozen=True)
class MarketView:
    """The quotes' implied vols at the comparison's as-of date, and the one for the option's life.

    Attributes
    ----------
    surface
        Every quote's implied vol, the at-the-money vol per expiry and the term structure.
    life
        The option's life (its expiry, calendar and trading days, ACT/365 years).
    atm_implied_vol, how
        The at-the-money implied vol for the option's expiry (:func:`atm_for_life`), or ``None``
        with the reason in ``how``.
    versus
        Each quoted expiry against the history (:func:`volbench.market.versus.versus_history`).
    """

    surface: ImpliedSurface
    life: OptionLife
    atm_implied_vol: float | None
    how: str
    versus: VersusHistory | None = None

    def candidates(self, days: int) -> CandidateSet:
        """The at-the-money implied vol as a candidate; it is quoted on the ACT/365 basis already."""
        if self.atm_implied_vol is None:
            return CandidateSet.missing("market", self.how)
        src = self.surface.source.get("source_file") or "quotes"
        c = Candidate("market", "market:atm_implied", "ATM implied (quotes)", self.atm_implied_vol,
                      note=f"{src}: {self.how}", headline=True, on_pricing_basis=True)
        return CandidateSet("market", (c,), title="market quotes file", what="vol")

    def as_dict(self) -> dict:
        return {"expiry": self.life.expiry, "atm_implied_vol": self.atm_implied_vol, "how": self.how,
                "term_method": TERM_METHOD, "surface": self.surface.as_dict(),
                "versus_history": None if self.versus is None else self.versus.as_dict()}


def market_view(surface: ImpliedSurface, life: OptionLife, versus: VersusHistory | None = None) -> MarketView:
    """:class:`MarketView` of ``surface`` for an option with ``life``."""
    vol, how = atm_for_life(surface, life)
    return MarketView(surface, life, vol, how, versus)


@dataclass(frozen=True)
class MarketComparison:
    """The market's at-the-money implied vol set against a comparison (vols on the ACT/365 basis).

    Attributes
    ----------
    expiry, trading_days, years
        The option's life.
    atm_implied_vol, how
        The implied vol for the option's expiry and how it was found.
    pricing_vol, implied_minus_pricing_points
        The proposed vol and 100 x (implied - pricing).
    realized_vol, realized_label, implied_minus_realized_points
        The comparison's reference estimator (over its window, on the pricing basis) and
        100 x (implied - realized).
    forecast_vol, forecast_label, spread_points
        The forecast over the life (the GARCH-family headline when fitted, else EWMA) and
        100 x (implied - forecast): the variance risk premium in vol points.
    cone_percentile, cone_note
        Where the implied vol (divided by the basis factor, onto trading bars) sits in the cone
        column of the option's life.
    reading
        Plain sentences.
    """

    expiry: str
    trading_days: int
    years: float
    atm_implied_vol: float | None
    how: str
    pricing_vol: float
    implied_minus_pricing_points: float | None = None
    realized_vol: float | None = None
    realized_label: str | None = None
    implied_minus_realized_points: float | None = None
    forecast_vol: float | None = None
    forecast_label: str | None = None
    spread_points: float | None = None
    cone_percentile: float | None = None
    cone_note: str | None = None
    reading: tuple[str, ...] = ()
    unavailable: dict[str, str] = field(default_factory=dict)

    def as_dict(self) -> dict:
        return {
            "expiry": self.expiry, "trading_days": self.trading_days, "years": self.years,
            "atm_implied_vol": self.atm_implied_vol, "how": self.how, "pricing_vol": self.pricing_vol,
            "implied_minus_pricing_points": self.implied_minus_pricing_points,
            "realized_vol": self.realized_vol, "realized_label": self.realized_label,
            "implied_minus_realized_points": self.implied_minus_realized_points,
            "forecast_vol": self.forecast_vol, "forecast_label": self.forecast_label,
            "spread_points": self.spread_points, "cone_percentile": self.cone_percentile,
            "cone_note": self.cone_note, "reading": list(self.reading), "unavailable": dict(self.unavailable),
            "conventions": {"spread_points": "100 x (implied - forecast): the variance risk premium in vol points",
                            "vols": "on the ACT/365 basis of the implied vol (history's vols x basis_factor)"},
        }


def market_comparison(comparison, view: MarketView, *, forecast: Candidate | None = None, cone=None,
                      reference=("yang_zhang", "close_to_close")) -> MarketComparison:
    """Set ``view``'s implied vol against a :class:`~volbench.pricing.compare.Comparison`.

    Parameters
    ----------
    comparison
        The comparison of the same history and option (its table's vols are on the pricing basis).
    view
        The market view for the comparison's option.
    forecast
        The forecast candidate over the life as offered by its source (annualized over trading
        bars; multiplied here by the comparison's basis factor); ``None``: the comparison's EWMA row.
    cone
        The :class:`~volbench.pricing.cone.Cone` of the history, to place the implied vol.
    reference
        Estimator keys tried in order for the realized vol.

    Notes
    -----
    The variance risk premium is implied minus expected realized variance over the same horizon
    (Carr & Wu 2009, Review of Financial Studies 22(3); Bollerslev, Tauchen & Zhou 2009, Review of
    Financial Studies 22(11)); the spread shows it in vol points, implied minus forecast.
    """
    c, iv = comparison, view.atm_implied_vol
    life = view.life
    out = {"expiry": life.expiry, "trading_days": c.days, "years": c.years, "atm_implied_vol": iv, "how": view.how,
           "pricing_vol": c.pricing_vol}
    missing: dict[str, str] = {}
    if iv is None:
        return MarketComparison(**out, reading=(f"no market implied vol for this option: {view.how}",),
                                unavailable={"atm_implied_vol": view.how})
    table = c.table
    ref = next((table[table["key"] == k].iloc[0] for k in reference if (table["key"] == k).any()), None)
    if forecast is not None:
        f_vol, f_label = forecast.vol * c.basis_factor, forecast.label
    elif (table["key"] == "ewma").any():
        row = table[table["key"] == "ewma"].iloc[0]
        f_vol, f_label = float(row["vol"]), str(row["label"])
    else:
        f_vol, f_label = None, None
        missing["forecast"] = "no forecast in the comparison"
    out["implied_minus_pricing_points"] = 100.0 * (iv - c.pricing_vol)
    if ref is not None:
        out.update(realized_vol=float(ref["vol"]), realized_label=str(ref["label"]),
                   implied_minus_realized_points=100.0 * (iv - float(ref["vol"])))
    else:
        missing["realized"] = "no reference estimator in the comparison"
    if f_vol is not None:
        out.update(forecast_vol=f_vol, forecast_label=f_label, spread_points=100.0 * (iv - f_vol))
    if cone is not None:
        from volbench.errors import VolbenchError

        try:
            placed = cone.place(iv / c.basis_factor, c.days)
            out.update(cone_percentile=placed.percentile, cone_note=placed.note)
        except VolbenchError as exc:
            missing["cone"] = str(exc)
    m = MarketComparison(**out, unavailable=missing)
    return _with_reading(m)


def _gap(points_: float, what: str) -> str:
    return f"{points(abs(points_))} vol points {'above' if points_ >= 0 else 'below'} {what}"


def _with_reading(m: MarketComparison) -> MarketComparison:
    from dataclasses import replace

    lines = [(f"the market's at-the-money implied vol for {m.expiry} is {pct(m.atm_implied_vol, 1)} ({m.how}), "
              f"{_gap(m.implied_minus_pricing_points, 'the pricing vol')}")]
    if m.realized_vol is not None:
        lines.append(f"implied is {_gap(m.implied_minus_realized_points, m.realized_label)} "
                     f"({pct(m.realized_vol, 1)}, realized)")
    if m.forecast_vol is not None:
        lines.append(f"implied minus forecast ({m.forecast_label}, {pct(m.forecast_vol, 1)}) is "
                     f"{m.spread_points:+.2f} vol points: the variance risk premium in vol terms, usually "
                     "positive; a forecast carries its own error, so a point or two is within what it can miss")
    if m.cone_percentile is not None:
        p = m.cone_percentile
        where = ("above every value of" if p >= 100 else "below every value of" if p <= 0
                 else f"at the {ordinal(round(p))} percentile of")
        lines.append(f"the implied vol sits {where} {m.cone_note}")
    return replace(m, reading=tuple(lines))
