"""The market's implied vols from option quotes: per quote, at the money per expiry, and over time.

:func:`implied_surface` solves every quote's implied vol, finds each expiry's forward from
put-call parity, interpolates an at-the-money implied vol on the forward-moneyness axis, and lays
the expiries out as a term structure with the forward implied vol between them (flagging calendar
arbitrage). See docs/METHODS.md, "Implied vol and option quotes".
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from volbench.data.history import Finding
from volbench.errors import VolbenchError
from volbench.market.quotes import OptionQuotes
from volbench.pricing.bsm import check_rate
from volbench.pricing.daycount import Holidays, OptionLife, _date, option_life
from volbench.pricing.implied import solve_implied_vol
from volbench.types import check_positive

PARITY_PAIRS = 3
"""Call/put pairs (the strikes with the smallest |C - P|) whose parity forwards are averaged (median)."""

ATM_METHOD = ("linear interpolation, at ln(K/F) = 0, of the implied vols of the two quoted strikes either "
              "side of the forward F, each strike taken on its out-of-the-money side (calls at and above F, "
              "puts below; the other side where that one has no vol); F from put-call parity, "
              "F = K + e^{rT} (C - P), median over the three strikes with the smallest |C - P|, or "
              "S e^{(r - q)T} where no strike has both a call and a put")

QUOTE_TABLE_COLUMNS = ("line", "expiry", "strike", "type", "premium", "bid", "ask", "calendar_days",
                       "trading_days", "years", "forward", "moneyness", "out_of_the_money", "implied_vol",
                       "iv_bid", "iv_ask", "vega", "price_check", "status", "message")


@dataclass(frozen=True)
class ExpiryView:
    """One expiry of the quotes: its life, forward, smile and at-the-money implied vol.

    Attributes
    ----------
    life
        The option's life to this expiry (calendar and trading days, ACT/365 years).
    forward, forward_source
        Forward price for the expiry and where it came from ("put-call parity, N pairs" or
        "spot and carry").
    implied_dividend_yield
        The continuous yield q with S e^{(r - q)T} = forward; the quotes of this expiry are solved
        with it, so a call and a put at the same strike give the same vol when parity holds.
    smile
        The points used for the at-the-money vol: ``strike``, ``moneyness`` = ln(K/F), ``type``,
        ``implied_vol``, sorted by moneyness (one per strike, out-of-the-money side first).
    atm_implied_vol, atm_note
        The interpolated at-the-money vol, or ``None`` with the reason in ``atm_note``.
    total_variance
        atm_implied_vol^2 x years.
    forward_variance, forward_implied_vol, previous_expiry
        (s2^2 T2 - s1^2 T1) / (T2 - T1) from the previous expiry with an at-the-money vol (from
        the as-of date for the first one, where it is s^2 itself) and its square root; ``None``
        when negative or not computable.
    calendar_arbitrage
        True when the forward variance is negative: total implied variance falls with expiry.
    """

    life: OptionLife
    forward: float
    forward_source: str
    implied_dividend_yield: float
    n_quotes: int
    smile: pd.DataFrame
    atm_implied_vol: float | None
    atm_note: str | None
    total_variance: float | None = None
    forward_variance: float | None = None
    forward_implied_vol: float | None = None
    previous_expiry: str | None = None
    calendar_arbitrage: bool = False

    @property
    def expiry(self) -> str:
        return self.life.expiry

    def as_dict(self) -> dict:
        """The term-structure row of the JSON output."""
        return {
            "expiry": self.life.expiry, "calendar_days": self.life.calendar_days,
            "trading_days": self.life.trading_days, "years": self.life.years,
            "atm_implied_vol": self.atm_implied_vol, "forward_implied_vol": self.forward_implied_vol,
            "forward_variance": self.forward_variance, "calendar_arbitrage": self.calendar_arbitrage,
            "previous_expiry": self.previous_expiry, "total_variance": self.total_variance,
            "forward": self.forward, "forward_source": self.forward_source,
            "implied_dividend_yield": self.implied_dividend_yield, "quotes": self.n_quotes,
            "atm_note": self.atm_note, "notes": list(self.life.notes),
        }


@dataclass(frozen=True)
class ImpliedSurface:
    """Implied vols of a quotes file at an as-of date.

    Attributes
    ----------
    as_of, spot, rate, dividend_yield
        The market inputs (``dividend_yield`` is used only for expiries without a call/put pair).
    quotes
        One row per quote analysed, columns :data:`QUOTE_TABLE_COLUMNS`; ``status`` is an
        :data:`~volbench.pricing.implied.IV_STATUSES` value and ``implied_vol`` is NaN unless "ok".
    expiries
        One :class:`ExpiryView` per expiry, in date order.
    findings
        The reader's findings plus one per expired quote (left out).
    source
        Provenance of the quotes file.
    """

    as_of: str
    spot: float
    rate: float
    dividend_yield: float
    quotes: pd.DataFrame
    expiries: tuple[ExpiryView, ...]
    findings: tuple[Finding, ...] = ()
    source: dict = field(default_factory=dict)
    method: str = ATM_METHOD

    def expiry(self, date) -> ExpiryView:
        """The view of one expiry (``YYYY-MM-DD``); a clear error listing the expiries otherwise."""
        d = str(_date(date, "expiry"))
        for e in self.expiries:
            if e.expiry == d:
                return e
        raise VolbenchError(f"no expiry {d} in the quotes; they hold: {', '.join(e.expiry for e in self.expiries)}")

    def term_structure(self) -> pd.DataFrame:
        """One row per expiry: the JSON term-structure fields as columns."""
        return pd.DataFrame([e.as_dict() for e in self.expiries])

    def quote_records(self) -> list[dict]:
        out = []
        for r in self.quotes.itertuples(index=False):
            d = r._asdict()
            d["expiry"] = pd.Timestamp(d["expiry"]).strftime("%Y-%m-%d")
            for k, v in d.items():
                if isinstance(v, (float, np.floating)):
                    d[k] = None if not math.isfinite(v) else float(v)
                elif isinstance(v, (np.integer,)):
                    d[k] = int(v)
                elif isinstance(v, np.bool_):
                    d[k] = bool(v)
            out.append(d)
        return out

    def as_dict(self) -> dict:
        return {
            "as_of": self.as_of, "spot": self.spot, "rate": self.rate, "dividend_yield": self.dividend_yield,
            "quotes": self.quote_records(),
            "term_structure": [e.as_dict() for e in self.expiries],
            "atm_method": self.method,
            "findings": [f.as_dict() for f in self.findings],
            "source": dict(self.source),
        }


# ---------------------------------------------------------------------------- pieces
def parity_forward(calls: pd.Series, puts: pd.Series, years: float, rate: float,
                   pairs: int = PARITY_PAIRS) -> tuple[float, int] | None:
    """Forward from put-call parity: median of K + e^{rT}(C - P) over the ``pairs`` closest strikes.

    Parameters
    ----------
    calls, puts
        Premiums indexed by strike.
    years, rate
        ACT/365 years to expiry and the continuous rate.

    Returns
    -------
    (forward, pairs used), or ``None`` when no strike has both a call and a put (or the result is
    not positive).

    Notes
    -----
    C - P = e^{-rT} (F - K) for European options (put-call parity; e.g. Hull, *Options, Futures and
    Other Derivatives*), so F = K + e^{rT} (C - P). The strikes with the smallest |C - P| lie
    nearest the forward, where both quotes carry the most time value; the median of a few resists
    one bad quote (common practice, no source).
    """
    common = calls.index.intersection(puts.index)
    if common.empty:
        return None
    diff = (calls.loc[common] - puts.loc[common]).astype(float)
    nearest = diff.abs().sort_values(kind="stable").index[:pairs]
    fwd = np.asarray(nearest, dtype=float) + math.exp(rate * years) * diff.loc[nearest].to_numpy()
    f = float(np.median(fwd))
    return (f, len(nearest)) if f > 0 else None


def atm_from_smile(smile: pd.DataFrame) -> tuple[float | None, str | None]:
    """Implied vol at ln(K/F) = 0 by linear interpolation between the bracketing strikes.

    Returns the vol and ``None``, or ``None`` and the reason (no extrapolation beyond the strikes).
    """
    if smile.empty:
        return None, "no quote of this expiry has an implied vol"
    x = smile["moneyness"].to_numpy()
    v = smile["implied_vol"].to_numpy()
    exact = np.flatnonzero(x == 0.0)
    if exact.size:
        return float(v[exact[0]]), None
    below, above = np.flatnonzero(x < 0), np.flatnonzero(x > 0)
    if not below.size or not above.size:
        side = "above" if not above.size else "below"
        return None, (f"every strike with an implied vol lies {'below' if side == 'above' else 'above'} the "
                      f"forward, so none brackets it; volbench does not extrapolate the smile")
    i, j = below[-1], above[0]
    w = (0.0 - x[i]) / (x[j] - x[i])
    return float(v[i] + w * (v[j] - v[i])), None


def _solve_side(premium: float, spot, strike, years, rate, q, kind) -> float:
    if not (np.isfinite(premium) and premium > 0):
        return float("nan")
    r = solve_implied_vol(premium, spot, strike, years, rate, q, kind)
    return r.implied_vol if r.ok else float("nan")


def _expiry_view(group: pd.DataFrame, life: OptionLife, spot: float, rate: float, q: float):
    t = life.years
    calls = group[group.type == "call"].set_index("strike")["premium"]
    puts = group[group.type == "put"].set_index("strike")["premium"]
    parity = parity_forward(calls, puts, t, rate)
    if parity is None:
        forward, source = spot * math.exp((rate - q) * t), "spot and carry"
    else:
        forward, n = parity
        source = f"put-call parity, {n} pair{'s' if n != 1 else ''}"
    q_t = rate - math.log(forward / spot) / t
    rows = []
    for r in group.itertuples(index=False):
        res = solve_implied_vol(r.premium, spot, r.strike, t, rate, q_t, r.type)
        rows.append({
            "line": int(r.line), "expiry": r.expiry, "strike": float(r.strike), "type": r.type,
            "premium": float(r.premium), "bid": float(r.bid), "ask": float(r.ask),
            "calendar_days": life.calendar_days, "trading_days": life.trading_days, "years": t,
            "forward": forward, "moneyness": math.log(r.strike / forward),
            "out_of_the_money": bool(r.strike >= forward if r.type == "call" else r.strike < forward),
            "implied_vol": res.implied_vol if res.ok else float("nan"),
            "iv_bid": _solve_side(r.bid, spot, r.strike, t, rate, q_t, r.type),
            "iv_ask": _solve_side(r.ask, spot, r.strike, t, rate, q_t, r.type),
            "vega": float("nan") if res.vega is None else res.vega,
            "price_check": float("nan") if res.price_check is None else res.price_check,
            "status": res.status, "message": res.message,
        })
    table = pd.DataFrame(rows, columns=list(QUOTE_TABLE_COLUMNS))
    good = table[table.status == "ok"]
    # one point per strike: its out-of-the-money quote, else the other side
    good = good.sort_values(["strike", "out_of_the_money"], ascending=[True, False], kind="stable")
    smile = good.drop_duplicates("strike", keep="first")[["strike", "moneyness", "type", "implied_vol"]]
    smile = smile.sort_values("moneyness", kind="stable").reset_index(drop=True)
    atm, note = atm_from_smile(smile)
    view = ExpiryView(life=life, forward=forward, forward_source=source, implied_dividend_yield=q_t,
                      n_quotes=len(group), smile=smile, atm_implied_vol=atm, atm_note=note,
                      total_variance=None if atm is None else atm * atm * t)
    return view, table


def forward_variance(vol1: float, years1: float, vol2: float, years2: float) -> float:
    """Forward implied variance between two expiries T1 < T2: (s2^2 T2 - s1^2 T1) / (T2 - T1).

    Notes
    -----
    Total implied variance s^2 T must not fall with expiry; a negative forward variance is a
    calendar arbitrage in the quotes (docs/METHODS.md, "Implied vol and option quotes";
    e.g. Gatheral, *The Volatility Surface*, 2006, from memory).
    """
    if not years2 > years1:
        raise VolbenchError(f"forward variance needs T2 > T1, got T1 = {years1:g}, T2 = {years2:g}")
    return (vol2 * vol2 * years2 - vol1 * vol1 * years1) / (years2 - years1)


def _chain(views: list[ExpiryView]) -> list[ExpiryView]:
    from dataclasses import replace

    out: list[ExpiryView] = []
    prev: ExpiryView | None = None
    for v in views:
        if v.atm_implied_vol is None:
            out.append(v)
            continue
        if prev is None:
            fv = v.atm_implied_vol ** 2
            out.append(replace(v, forward_variance=fv, forward_implied_vol=v.atm_implied_vol, previous_expiry=None))
        else:
            fv = forward_variance(prev.atm_implied_vol, prev.life.years, v.atm_implied_vol, v.life.years)
            arb = fv < 0
            out.append(replace(v, forward_variance=fv, forward_implied_vol=None if arb else math.sqrt(fv),
                               previous_expiry=prev.expiry, calendar_arbitrage=bool(arb)))
        prev = v
    return out


def implied_surface(quotes: OptionQuotes, *, spot, rate, as_of, dividend_yield=0.0,
                    holidays: Holidays | None = None) -> ImpliedSurface:
    """Implied vols of every quote, the at-the-money vol per expiry and the implied term structure.

    Parameters
    ----------
    quotes
        From :func:`volbench.market.quotes.read_quotes`.
    spot
        Underlying price at ``as_of``.
    rate
        Continuously compounded risk-free rate, decimal (used for every expiry).
    as_of
        Valuation date; quotes expiring on or before it are left out (each a finding).
    dividend_yield
        Continuous yield for the forward of expiries without a call/put pair at a common strike.
    holidays
        Holidays for the trading-day count of each expiry.

    Returns
    -------
    ImpliedSurface

    Raises
    ------
    VolbenchError
        Bad spot, rate, yield or date; every quote expired.

    Notes
    -----
    Per expiry: ACT/365 years and trading days (:func:`volbench.pricing.daycount.option_life`);
    forward from put-call parity (:func:`parity_forward`) or S e^{(r - q)T}; each premium's implied
    vol by :func:`volbench.pricing.implied.solve_implied_vol` with spot S and the yield
    q_T = r - ln(F/S)/T that makes S e^{(r - q_T)T} = F (so the Black-Scholes-Merton price is Black's
    price on the forward); at-the-money vol by :func:`atm_from_smile` (:data:`ATM_METHOD`);
    forward variance by :func:`forward_variance`. Docs: docs/METHODS.md, "Implied vol and option quotes".
    """
    s = check_positive(spot, "spot must be a positive price")
    r = check_rate(rate, "rate")
    q = check_rate(dividend_yield, "dividend yield")
    a = _date(as_of, "as-of")
    table = quotes.table
    expired = table.expiry.to_numpy(dtype="datetime64[D]") <= a
    findings = list(quotes.findings)
    for row in table[expired].itertuples(index=False):
        findings.append(Finding("error", "expired", int(row.line), None, "expiry",
                                f"line {row.line}: expiry {pd.Timestamp(row.expiry).date()} is not after the "
                                f"as-of date {a}; row left out", (int(row.line),)))
    live = table[~expired]
    if live.empty:
        raise VolbenchError(f"{quotes.source}: every quote expires on or before the as-of date {a}; "
                            "check --as-of and the expiry column")
    views, tables = [], []
    for expiry, group in live.groupby("expiry", sort=True):
        life = option_life(a, expiry=expiry, holidays=holidays)
        view, t = _expiry_view(group, life, s, r, q)
        views.append(view)
        tables.append(t)
    quotes_out = pd.concat(tables, ignore_index=True).sort_values("line", kind="stable").reset_index(drop=True)
    findings.sort(key=lambda f: (f.line or 0, f.kind))
    return ImpliedSurface(as_of=str(a), spot=s, rate=r, dividend_yield=q, quotes=quotes_out,
                          expiries=tuple(_chain(views)), findings=tuple(findings),
                          source=quotes.provenance())
