"""Check each candidate vol's promise about the price against the history: bands, straddle, breakeven.

:func:`promise_check` draws the +-k sigma bands and the at-the-money straddle and option
breakevens of every candidate vol at once, counts the history's non-overlapping h-bar moves beyond
each edge (:mod:`volbench.pricing.bands` holds the building blocks and the conventions: zero log
drift, Clopper-Pearson intervals, the G-statistic scoring rule), and words the result.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace

import numpy as np
import pandas as pd
from scipy.stats import rankdata

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.format import share
from volbench.pricing.bands import (
    DEFAULT_SIGMAS,
    band_scores,
    check_level,
    check_sigmas,
    count_outside,
    h_bar_moves,
)
from volbench.pricing.bsm import bsm_price, check_kind, check_pricing_vol, check_rate
from volbench.pricing.cone import _check_days
from volbench.types import DEFAULT_ANNUALIZATION, OptionType, check_annualization, check_positive

MIN_WINDOWS = 20
"""Fewer non-overlapping windows than this draw a warning about the width of the intervals."""

CI_METHOD = "Clopper-Pearson (exact binomial)"
DRIFT = "zero drift in the log price: bands spot x exp(+-k sigma sqrt(h/A)), median at spot"
SCORING = ("G = 2 sum O ln(O/E) over the 2k+1 zones the bands cut, observed against normal-promised "
           "counts in non-overlapping windows; smallest wins")

BAND_COLUMNS = ("key", "label", "vol", "sigmas", "low_price", "high_price", "low_move", "high_move",
                "promised", "promised_below", "promised_above", "observed", "observed_ci_low",
                "observed_ci_high", "observed_below", "observed_below_ci_low", "observed_below_ci_high",
                "observed_above", "observed_above_ci_low", "observed_above_ci_high", "promise_in_ci",
                "windows", "overlapping_observed", "overlapping_windows")
STRADDLE_COLUMNS = ("key", "label", "vol", "strike", "premium", "breakeven_move", "breakeven_low",
                    "breakeven_high", "promised_share_beyond", "observed_share_beyond", "observed_ci_low",
                    "observed_ci_high", "observed_below", "observed_above", "promise_in_ci", "windows",
                    "overlapping_share_beyond", "overlapping_windows")
BREAKEVEN_COLUMNS = ("key", "label", "vol", "kind", "strike", "premium", "breakeven_price", "breakeven_move",
                     "promised_share_beyond", "observed_share_beyond", "observed_ci_low", "observed_ci_high",
                     "promise_in_ci", "windows", "overlapping_share_beyond", "overlapping_windows")


# ---------------------------------------------------------------------------- result
def _row_dicts(df: pd.DataFrame) -> list[dict]:
    out = []
    for rec in df.to_dict(orient="records"):
        row = {}
        for k, v in rec.items():
            if isinstance(v, (np.floating, float)):
                v = float(v)
                v = v if math.isfinite(v) else None
            elif isinstance(v, (np.integer,)):
                v = int(v)
            elif isinstance(v, np.bool_):
                v = bool(v)
            row[k] = v
        for name in ("observed", "observed_below", "observed_above"):
            if f"{name}_ci_low" in row:
                row[f"{name}_ci"] = [row.pop(f"{name}_ci_low"), row.pop(f"{name}_ci_high")]
        out.append(row)
    return out


@dataclass(frozen=True)
class PromiseCheck:
    """Bands and breakevens promised by each candidate vol, against the history's h-bar moves.

    Attributes
    ----------
    name, as_of
        Series and the last date used (the as-of date; the newest window ends here).
    days, annualization, years
        Option life in bars; bars per year; years used for the premiums (default days / A).
    spot, strike, kind, rate, dividend_yield
        Spot the bands are drawn around; the call or put whose breakeven is checked; rate and
        yield of the premiums (continuous decimals).
    sigmas, level
        Band half-widths in standard deviations (ascending); interval confidence level.
    primary
        Key of the first candidate (the pricing vol when called from a comparison).
    bands
        One row per candidate and band (:data:`BAND_COLUMNS`): band prices and moves (fraction of
        spot), promised shares outside (total, below, above), observed shares with Clopper-Pearson
        intervals, whether the promise lies in the interval, windows, and the overlapping estimate.
    straddles
        One row per candidate (:data:`STRADDLE_COLUMNS`): at-the-money (strike = spot) straddle
        premium, breakeven move (premium / spot) and prices, promised and observed share of moves
        beyond either breakeven.
    breakevens
        One row per candidate (:data:`BREAKEVEN_COLUMNS`): the chosen call (breakeven strike +
        premium) or put (strike - premium) and the share of moves ending beyond it.
    scores
        Indexed by key: label, vol, g_statistic (see :func:`band_scores`), rank (1 = best; equal
        scores, which discrete counts make common, share a rank).
    windows, overlapping_windows, unused_bars
        Non-overlapping and overlapping h-bar windows; oldest returns left out of the former.
    moves, overlapping_moves
        The h-bar log moves behind the counts (for histograms), indexed by window end date.
    warnings
        Caveats (too few windows, bands whose promise is too small to test on this history).
    verdict
        One sentence: which candidate's bands history kept best, and by which rule.
    reading
        Plain sentences for the reader: the primary candidate's +-1st band, straddle and option
        breakeven, then the verdict.
    """

    name: str
    as_of: str
    days: int
    annualization: float
    years: float
    spot: float
    strike: float
    kind: str
    rate: float
    dividend_yield: float
    sigmas: tuple[float, ...]
    level: float
    primary: str
    bands: pd.DataFrame
    straddles: pd.DataFrame
    breakevens: pd.DataFrame
    scores: pd.DataFrame
    windows: int
    overlapping_windows: int
    unused_bars: int
    moves: pd.Series = field(repr=False)
    overlapping_moves: pd.Series = field(repr=False)
    warnings: tuple[str, ...] = ()
    verdict: str = ""
    reading: tuple[str, ...] = ()

    def bands_of(self, key: str) -> pd.DataFrame:
        """The band rows of one candidate."""
        if key not in self.scores.index:
            raise VolbenchError(f"no candidate {key!r}; candidates: {', '.join(self.scores.index)}")
        return self.bands[self.bands["key"] == key]

    def as_dict(self) -> dict:
        keys = list(self.scores.index)
        by_band = {k: _row_dicts(self.bands[self.bands["key"] == k].drop(columns=["key", "label", "vol"]))
                   for k in keys}
        straddle = {r["key"]: r for r in _row_dicts(self.straddles)}
        breakeven = {r["key"]: r for r in _row_dicts(self.breakevens)}
        return {
            "name": self.name, "as_of": self.as_of, "days": self.days, "annualization": self.annualization,
            "years": self.years, "spot": self.spot, "sigmas": list(self.sigmas), "level": self.level,
            "primary": self.primary, "windows": self.windows, "overlapping_windows": self.overlapping_windows,
            "unused_bars": self.unused_bars,
            "bands": by_band[self.primary], "bands_by_candidate": by_band,
            "band_scores": {k: {"label": r["label"], "vol": float(r["vol"]), "g_statistic": float(r["g_statistic"]),
                                "rank": int(r["rank"])} for k, r in self.scores.iterrows()},
            "straddle": straddle[self.primary], "straddle_by_candidate": straddle,
            "breakeven": breakeven[self.primary], "breakeven_by_candidate": breakeven,
            "warnings": list(self.warnings), "verdict": self.verdict, "reading": list(self.reading),
            "conventions": {
                "drift": DRIFT, "interval": f"{CI_METHOD}, {100 * self.level:g} %",
                "windows": "non-overlapping h-bar windows anchored at the last close; overlapping_* "
                           "uses every window (smoother, no interval)",
                "moves": "low_move, high_move, breakeven_move: fraction of spot",
                "straddle": "at the money: strike = spot; breakevens strike -+ premium (premium not carried "
                            "to expiry)",
                "scoring": SCORING,
            },
        }


# ---------------------------------------------------------------------------- validation
def _check_vols(vols, labels) -> tuple[list[str], list[str], np.ndarray]:
    try:
        items = list(dict(vols).items())
    except (TypeError, ValueError):
        raise VolbenchError(f"vols must map candidate keys to vols, e.g. {{'pricing': 0.25}}; "
                            f"got {type(vols).__name__}") from None
    if not items:
        raise VolbenchError("vols is empty: give at least one candidate vol, e.g. {'pricing': 0.25}")
    labels = dict(labels or {})
    keys = [str(k) for k, _ in items]
    v = np.array([check_pricing_vol(x, f"vol of candidate {k!r}") for k, x in items])
    return keys, [str(labels.get(k, k)) for k in keys], v


# ---------------------------------------------------------------------------- main entry
def promise_check(
    history: PriceHistory,
    vols: Mapping[str, float],
    days: int,
    *,
    labels: Mapping[str, str] | None = None,
    spot: float | None = None,
    strike: float | None = None,
    kind: OptionType = "call",
    rate: float = 0.0,
    dividend_yield: float = 0.0,
    annualization: float = DEFAULT_ANNUALIZATION,
    years: float | None = None,
    sigmas: Sequence[float] = DEFAULT_SIGMAS,
    level: float = 0.95,
) -> PromiseCheck:
    """Bands, straddle and option breakevens of each candidate vol, checked against the history.

    Parameters
    ----------
    history
        Price history; its closes give the h-bar moves, its last close the default spot.
    vols
        Candidate key -> annualized vol (decimal); the first is the primary (e.g. the pricing vol).
    days
        Option life h in bars (>= 1).
    labels
        Candidate key -> label for the reading (default: the key).
    spot, strike, kind
        Spot (default last close); the call or put whose breakeven is checked (strike default spot).
    rate, dividend_yield
        Continuous decimals for the Black-Scholes-Merton premiums only (bands have zero drift).
    annualization
        Bars per year A; the h-bar log move has standard deviation vol x sqrt(days / A).
    years
        Time to expiry of the premiums; default days / annualization (as ``volbench compare``).
    sigmas
        Band half-widths in standard deviations (default 1, 2, 3).
    level
        Confidence level of the Clopper-Pearson intervals (default 0.95).

    Returns
    -------
    PromiseCheck

    Raises
    ------
    VolbenchError
        No candidates or a bad vol (also one that looks like a percent); bad days, spot, strike,
        kind, rate, yield, annualization, years, sigmas or level; fewer than days + 1 closes.

    Notes
    -----
    Under Black-Scholes with zero log drift, ln(S_T / S) ~ N(0, s^2), s = sigma sqrt(h / A)
    (docs/METHODS.md, Probability bands and breakevens). Band k: spot x exp(+-k s), promised
    share outside 2 N(-k). ATM straddle: premium c + p at strike = spot from
    :func:`volbench.pricing.bsm.bsm_price` (about 0.8 S sigma sqrt(T) for small sigma sqrt(T) and
    zero rates, Brenner & Subrahmanyam 1988, from memory); breakeven move b = premium / S; promised
    share beyond N(ln(1 - b) / s) + N(-ln(1 + b) / s). Call: breakeven K + c, promised
    N(-ln((K + c) / S) / s); put: K - p, promised N(ln((K - p) / S) / s) (0 when K <= p). The
    premium is compared with the payoff at expiry without carrying it at the rate. Observed shares
    count non-overlapping h-bar moves strictly beyond an edge; intervals are Clopper-Pearson.
    """
    d = _check_days(days)
    a = check_annualization(annualization)
    keys, labs, v = _check_vols(vols, labels)
    k = check_sigmas(sigmas)
    level = check_level(level)
    s0 = float(history.close[-1]) if spot is None else check_positive(spot, "spot must be a positive price")
    kk = s0 if strike is None else check_positive(strike, "strike must be a positive price")
    kind = check_kind(kind)
    r, q = check_rate(rate, "rate"), check_rate(dividend_yield, "dividend yield")
    t = d / a if years is None else check_positive(years, "years to expiry must be a positive number")
    non, over = h_bar_moves(history, d)
    sn, so = np.sort(non.to_numpy()), np.sort(over.to_numpy())
    m, mo = len(sn), len(so)
    s = v * math.sqrt(d / a)

    # bands: all candidates x all sigmas at once
    ks = np.asarray(k)
    hi = s[:, None] * ks[None, :]
    res = count_outside(sn, so, -hi, hi, np.broadcast_to(s[:, None], hi.shape), level)
    nc, nb = hi.shape
    bands = pd.DataFrame({
        "key": np.repeat(keys, nb), "label": np.repeat(labs, nb), "vol": np.repeat(v, nb),
        "sigmas": np.tile(ks, nc), "low_price": (s0 * np.exp(-hi)).ravel(), "high_price": (s0 * np.exp(hi)).ravel(),
        "low_move": np.expm1(-hi).ravel(), "high_move": np.expm1(hi).ravel(),
        "promised": res["promised"].ravel(), "promised_below": res["promised_below"].ravel(),
        "promised_above": res["promised_above"].ravel(), "observed": res["observed"].ravel(),
        "observed_ci_low": res["ci_low"].ravel(), "observed_ci_high": res["ci_high"].ravel(),
        "observed_below": res["observed_below"].ravel(), "observed_below_ci_low": res["below_ci_low"].ravel(),
        "observed_below_ci_high": res["below_ci_high"].ravel(), "observed_above": res["observed_above"].ravel(),
        "observed_above_ci_low": res["above_ci_low"].ravel(), "observed_above_ci_high": res["above_ci_high"].ravel(),
        "promise_in_ci": res["promise_in_ci"].ravel(), "windows": m,
        "overlapping_observed": res["overlapping"].ravel(), "overlapping_windows": mo,
    }, columns=list(BAND_COLUMNS))

    # at-the-money straddle
    prem = bsm_price(s0, s0, t, r, v, q, "call") + bsm_price(s0, s0, t, r, v, q, "put")
    b = prem / s0
    lo_edge = np.where(b < 1.0, np.log1p(-np.where(b < 1.0, b, 0.0)), -np.inf)  # no lower breakeven if b >= 1
    st = count_outside(sn, so, lo_edge, np.log1p(b), s, level)
    straddles = pd.DataFrame({
        "key": keys, "label": labs, "vol": v, "strike": s0, "premium": prem, "breakeven_move": b,
        "breakeven_low": s0 - prem, "breakeven_high": s0 + prem, "promised_share_beyond": st["promised"],
        "observed_share_beyond": st["observed"], "observed_ci_low": st["ci_low"], "observed_ci_high": st["ci_high"],
        "observed_below": st["observed_below"], "observed_above": st["observed_above"],
        "promise_in_ci": st["promise_in_ci"], "windows": m, "overlapping_share_beyond": st["overlapping"],
        "overlapping_windows": mo,
    }, columns=list(STRADDLE_COLUMNS))

    # the chosen call or put
    opt = np.broadcast_to(np.asarray(bsm_price(s0, kk, t, r, v, q, kind), dtype=float), v.shape)
    if kind == "call":
        price = kk + opt
        lo, up = np.full_like(v, -np.inf), np.log(price / s0)
    else:
        price = kk - opt
        lo, up = np.where(price > 0, np.log(np.where(price > 0, price, 1.0) / s0), -np.inf), np.full_like(v, np.inf)
    be = count_outside(sn, so, lo, up, s, level)
    breakevens = pd.DataFrame({
        "key": keys, "label": labs, "vol": v, "kind": kind, "strike": kk, "premium": opt,
        "breakeven_price": price, "breakeven_move": price / s0 - 1.0,
        "promised_share_beyond": be["promised"], "observed_share_beyond": be["observed"],
        "observed_ci_low": be["ci_low"], "observed_ci_high": be["ci_high"], "promise_in_ci": be["promise_in_ci"],
        "windows": m, "overlapping_share_beyond": be["overlapping"], "overlapping_windows": mo,
    }, columns=list(BREAKEVEN_COLUMNS))

    g = band_scores(res["below"], res["above"], m, k)
    # equal counts give equal scores: tied candidates share the best rank among them
    rank = rankdata(np.round(g, 9), method="min").astype(int)
    scores = pd.DataFrame({"label": labs, "vol": v, "g_statistic": g, "rank": rank},
                          index=pd.Index(keys, name="key"))

    check = PromiseCheck(
        name=history.name, as_of=history.last_date, days=d, annualization=a, years=t, spot=s0, strike=kk,
        kind=kind, rate=r, dividend_yield=q, sigmas=k, level=float(level), primary=keys[0], bands=bands,
        straddles=straddles, breakevens=breakevens, scores=scores, windows=m, overlapping_windows=mo,
        unused_bars=(history.n - 1) - m * d, moves=non, overlapping_moves=over,
    )
    return _with_text(check)


def promises_for(comparison, history: PriceHistory, **kwargs) -> PromiseCheck:
    """:func:`promise_check` for every vol of a comparison (pricing vol first), on its option.

    ``comparison`` is used duck-typed (a :class:`volbench.pricing.compare.Comparison`: ``table``
    with key, label and vol columns, ``days``, ``annualization``, ``years``, ``spot``, ``strike``,
    ``kind``, ``rate``, ``dividend_yield``), so the command line, the window and the exports get
    the same numbers from one call. ``kwargs`` (``sigmas``, ``level``) pass through.
    """
    t = comparison.table
    return promise_check(
        history, dict(zip(t["key"], t["vol"])), comparison.days, labels=dict(zip(t["key"], t["label"])),
        spot=comparison.spot, strike=comparison.strike, kind=comparison.kind, rate=comparison.rate,
        dividend_yield=comparison.dividend_yield, annualization=comparison.annualization,
        years=comparison.years, **kwargs)


# ---------------------------------------------------------------------------- plain reading
def _sig(k: float) -> str:
    return f"±{k:g} sigma"


def _warnings(c: PromiseCheck) -> tuple[str, ...]:
    out = []
    first = c.bands_of(c.primary).iloc[0]
    if c.windows < MIN_WINDOWS:
        out.append(f"only {c.windows} non-overlapping {c.days}-bar windows in the history (fewer than "
                   f"{MIN_WINDOWS}): the observed shares are rough; the {100 * c.level:g}% interval of "
                   f"the {_sig(first['sigmas'])} share runs from {share(first['observed_ci_low'])} to "
                   f"{share(first['observed_ci_high'])}")
    widest = c.bands_of(c.primary).iloc[-1]
    expected = c.windows * float(widest["promised"])
    if expected < 1.0:
        out.append(f"the {_sig(widest['sigmas'])} band promises {share(widest['promised'])} of moves outside it: "
                   f"{c.windows} window{'s' if c.windows != 1 else ''} make {expected:.2g} such moves the "
                   f"expected count, too few to test that promise")
    return tuple(out)


def _verdict(c: PromiseCheck) -> str:
    """One sentence: the candidate whose bands history kept best (smallest G) and how well it did."""
    sc = c.scores.sort_values("rank", kind="stable")
    best_key, best = sc.index[0], sc.iloc[0]
    rows = c.bands_of(best_key)
    ties = [str(lab) for key, lab in sc.loc[sc["rank"] == 1, "label"].items() if key != best_key]
    who = f"{best['label']} ({share(best['vol'])}" + (f", tied with {', '.join(ties)}" if ties else "") + ")"
    shares = ", ".join(f"{share(r.observed)} outside {_sig(r.sigmas)} (promised {share(r.promised)})"
                       for r in rows.itertuples())
    broken = [_sig(x) for x in rows.loc[~rows["promise_in_ci"], "sigmas"]]
    lvl = f"{100 * c.level:g}%"
    if broken:
        kept = f"the {', '.join(broken)} promise{'s lie' if len(broken) > 1 else ' lies'} outside the {lvl} interval"
    else:
        kept = f"every promise lies inside the {lvl} interval of its observed share"
    over = f"over {c.windows} non-overlapping {c.days}-bar moves, {shares}"
    if len(sc) == 1:
        return f"History {'did not keep' if broken else 'kept'} the bands of {who}: {over}; {kept}."
    fragile = f"; with only {c.windows} windows the ranking is fragile" if c.windows < MIN_WINDOWS else ""
    return (f"History kept the bands of {who} best of {len(sc)} candidates (smallest G statistic of the "
            f"zone counts against the normal promise): {over}; {kept}{fragile}.")


def _with_text(c: PromiseCheck) -> PromiseCheck:
    """The check with its warnings, verdict and reading filled in."""
    verdict = _verdict(c)
    band = c.bands_of(c.primary).iloc[0]
    st, be = c.straddles.iloc[0], c.breakevens.iloc[0]
    lvl = f"{100 * c.level:g}%"
    reading = (
        (f"at {share(band['vol'])}, a {c.days}-bar move outside {_sig(band['sigmas'])} "
        f"({100 * band['low_move']:+.1f}% to {100 * band['high_move']:+.1f}%) should happen "
        f"{share(band['promised'])} of the time; in this history it happened {share(band['observed'])} "
        f"({lvl} interval {share(band['observed_ci_low'])} to {share(band['observed_ci_high'])}, {c.windows} windows): "
        f"{share(band['observed_below'])} on the downside, {share(band['observed_above'])} on the upside"),
        (f"an at-the-money straddle at {share(st['vol'])} costs {st['premium']:.2f} ({share(st['breakeven_move'])} of spot) "
        f"and pays back only on a {c.days}-bar move beyond that: promised {share(st['promised_share_beyond'])} "
        f"of the time, seen {share(st['observed_share_beyond'])} ({lvl} interval {share(st['observed_ci_low'])} to "
        f"{share(st['observed_ci_high'])})"),
        (f"the {c.kind} struck at {c.strike:g} costs {be['premium']:.2f} at {share(be['vol'])} and pays back only "
         f"if the price ends {'above' if c.kind == 'call' else 'below'} {be['breakeven_price']:.2f} "
         f"({100 * be['breakeven_move']:+.1f}%): promised {share(be['promised_share_beyond'])} of the time, seen "
         f"{share(be['observed_share_beyond'])} ({lvl} interval {share(be['observed_ci_low'])} to "
         f"{share(be['observed_ci_high'])})"),
        verdict,
    )
    return replace(c, warnings=_warnings(c), verdict=verdict, reading=reading)
