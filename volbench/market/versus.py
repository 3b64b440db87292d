"""The market's at-the-money implied vols set against the price history, expiry by expiry.

For each expiry: every realized estimator over that expiry's trading days, the GARCH-family
forward vol over them (the EWMA fallback when the fit cannot be used), the cone percentile of the
implied vol, and the implied-minus-forecast spread in vol points (the variance risk premium in
vol terms). Historical vols are annualized over trading bars; they are put on the implied vols'
ACT/365 basis before any comparison (docs/METHODS.md, "Day counts and the option's life").
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.estimators import REGISTRY, estimate_all
from volbench.market.surface import ImpliedSurface
from volbench.models import MODEL_REGISTRY, fit_garch
from volbench.models.term import MAX_HORIZON
from volbench.pricing.cone import DEFAULT_CONE_WINDOWS, vol_cone
from volbench.settings import GarchSettings
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization

REALIZED_REFERENCE = ("yang_zhang", "close_to_close")
"""The estimator reported as ``realized_vol``: the first of these the history supports."""

STALE_DAYS = 7
"""A history ending more than this many calendar days before the quotes' as-of date draws a note."""


@dataclass(frozen=True)
class VersusRow:
    """One expiry's implied vol against the history (vols on the ACT/365 pricing basis).

    Attributes
    ----------
    expiry, trading_days, years
        The expiry and its life.
    atm_implied_vol
        The expiry's at-the-money implied vol (``None`` when the quotes give none).
    basis_factor
        sqrt((trading_days / A) / years): multiplies a vol annualized over A trading bars to put it
        on the ACT/365 basis of the implied vol.
    realized, realized_vol, realized_estimator
        Every estimator's vol over the last ``trading_days`` bars (pricing basis), and the
        reference one (:data:`REALIZED_REFERENCE`).
    forecast_vol, forecast_source
        GARCH-family forward vol over ``trading_days`` bars (pricing basis) and what produced it.
    cone_percentile, cone_note
        Percentile (0-100) of the implied vol in the cone column for ``trading_days`` bars; the
        implied vol is put on the cone's trading-bar basis (divided by ``basis_factor``) first.
    spread_points
        100 x (atm_implied_vol - forecast_vol): implied minus forecast in vol points.
    unavailable
        Part -> reason for whatever could not be computed.
    """

    expiry: str
    trading_days: int
    years: float
    atm_implied_vol: float | None
    basis_factor: float | None
    realized: dict[str, float]
    realized_vol: float | None
    realized_estimator: str | None
    forecast_vol: float | None
    forecast_source: str | None
    cone_percentile: float | None
    cone_note: str | None
    spread_points: float | None
    unavailable: dict[str, str] = field(default_factory=dict)

    def as_dict(self) -> dict:
        return {
            "expiry": self.expiry, "trading_days": self.trading_days, "years": self.years,
            "atm_implied_vol": self.atm_implied_vol, "realized_vol": self.realized_vol,
            "realized_estimator": self.realized_estimator, "realized": dict(self.realized),
            "forecast_vol": self.forecast_vol, "forecast_source": self.forecast_source,
            "cone_percentile": self.cone_percentile, "cone_note": self.cone_note,
            "spread_points": self.spread_points, "basis_factor": self.basis_factor,
            "unavailable": dict(self.unavailable),
        }


@dataclass(frozen=True)
class VersusHistory:
    """Every expiry of an :class:`ImpliedSurface` set against one price history."""

    series: str
    history_as_of: str
    annualization: float
    model: str
    cone_estimator: str
    rows: tuple[VersusRow, ...]
    notes: tuple[str, ...] = ()
    provenance: dict = field(default_factory=dict)

    def as_dict(self) -> dict:
        return {"series": self.series, "history_as_of": self.history_as_of, "annualization": self.annualization,
                "model": self.model, "cone_estimator": self.cone_estimator,
                "rows": [r.as_dict() for r in self.rows], "notes": list(self.notes),
                "provenance": dict(self.provenance)}


def versus_history(surface: ImpliedSurface, history: PriceHistory, *, annualization: float = DEFAULT_ANNUALIZATION,
                   model: str = "garch", dist: str = "normal", cone_estimator: str = "close_to_close",
                   cone_windows=DEFAULT_CONE_WINDOWS) -> VersusHistory:
    """Set each expiry's at-the-money implied vol against ``history`` up to the quotes' as-of date.

    Parameters
    ----------
    surface
        From :func:`volbench.market.surface.implied_surface`.
    history
        Price history of the underlying; rows after the quotes' as-of date are not used.
    annualization
        Bars per year of the history.
    model, dist
        GARCH-family model and innovation distribution for the forward vol
        (:func:`volbench.models.fit_garch`; EWMA fallback when the fit cannot be used).
    cone_estimator, cone_windows
        Estimator and windows of the volatility cone.

    Returns
    -------
    VersusHistory

    Raises
    ------
    VolbenchError
        Bad settings; the history starts after the as-of date.

    Notes
    -----
    Realized: :func:`volbench.estimators.estimate_all` over the last N = trading_days bars. Forecast:
    the model's forward vol over N bars, sqrt(A mean_{h<=N} E[s2_{t+h}]) (docs/METHODS.md, "GARCH and
    the vol over an option's life"). Both are annualized over A trading bars and multiplied by
    sqrt((N / A) / T), T the ACT/365 years, to express the same total variance per calendar year as
    the implied vol. Spread = 100 (implied - forecast) vol points; the variance risk premium is
    implied minus expected realized variance (Carr & Wu 2009, Review of Financial Studies 22(3);
    Bollerslev, Tauchen & Zhou 2009, Review of Financial Studies 22(11)).
    """
    a = check_annualization(annualization)
    if cone_estimator not in REGISTRY:
        raise VolbenchError(f"unknown estimator {cone_estimator!r}; choose one of: {', '.join(REGISTRY)}")
    if model not in MODEL_REGISTRY:
        raise VolbenchError(f"unknown model {model!r}; choose one of: {', '.join(MODEL_REGISTRY)}")
    h = history.up_to(surface.as_of)
    notes: list[str] = []
    gap = (np.datetime64(surface.as_of, "D") - h.dates[-1].astype("datetime64[D]")) / np.timedelta64(1, "D")
    if gap > STALE_DAYS:
        notes.append(f"the prices end on {h.last_date}, {int(gap)} days before the quotes' as-of date "
                     f"{surface.as_of}: the history does not reach the quotes")
    if h.n < history.n:
        notes.append(f"{history.n - h.n} price rows after the as-of date {surface.as_of} are not used")
    days = sorted({e.life.trading_days for e in surface.expiries if 1 <= e.life.trading_days <= MAX_HORIZON})
    fit = None
    fit_reason = None
    if days:
        try:
            fit = fit_garch(h, model, GarchSettings(models=(model,), dist=dist, horizons=days), annualization=a)
        except VolbenchError as exc:
            fit_reason = str(exc)
    source = None
    if fit is not None:
        source = MODEL_REGISTRY[model].label if fit.usable else f"{fit.fallback} (fallback: {fit.warnings[0]})"
    try:
        cone = vol_cone(h, cone_estimator, cone_windows, annualization=a)
        cone_reason = None
    except VolbenchError as exc:
        cone, cone_reason = None, str(exc)
    rows = [_row(e, h, a, fit, fit_reason, source, cone, cone_reason) for e in surface.expiries]
    return VersusHistory(series=h.name, history_as_of=h.last_date, annualization=a, model=model,
                         cone_estimator=cone_estimator, rows=tuple(rows), notes=tuple(notes),
                         provenance=h.provenance())


def _row(e, h: PriceHistory, a: float, fit, fit_reason, source, cone, cone_reason) -> VersusRow:
    n, life = e.life.trading_days, e.life
    iv = e.atm_implied_vol
    missing: dict[str, str] = {}
    if iv is None:
        missing["atm_implied_vol"] = e.atm_note or "no at-the-money implied vol"
    if n < 1:
        why = f"no trading day before the expiry {life.expiry}"
        return VersusRow(life.expiry, n, life.years, iv, None, {}, None, None, None, None, None, None, None,
                         {**missing, "history": why})
    factor = life.pricing_basis_factor(a)
    realized: dict[str, float] = {}
    ref = ref_key = None
    if n >= 2:
        report = estimate_all(h, n, annualization=a)
        realized = {k: est.vol * factor for k, est in report.estimates.items()}
        for k in REALIZED_REFERENCE:
            if k in realized:
                ref, ref_key = realized[k], k
                break
        for k, why in report.unavailable.items():
            missing[f"realized:{k}"] = why
    else:
        missing["realized"] = "one trading day to expiry: a realized vol needs a window of at least 2 bars"
    forecast = None
    if fit is None:
        missing["forecast"] = fit_reason or f"{n} trading days is beyond the forecast horizon of {MAX_HORIZON} bars"
    elif fit.max_days is not None and n > fit.max_days:
        missing["forecast"] = f"{n} trading days is beyond the forecast horizon of {fit.max_days} bars"
    else:
        forecast = fit.forward_vol(n) * factor
    pctl = note = None
    if cone is None:
        missing["cone"] = cone_reason
    elif iv is not None:
        placed = cone.place(iv / factor, n)
        pctl, note = placed.percentile, placed.note
    spread = None if iv is None or forecast is None else 100.0 * (iv - forecast)
    return VersusRow(life.expiry, n, life.years, iv, factor, realized, ref, ref_key, forecast,
                     source if forecast is not None else None, pctl, note, spread, missing)
