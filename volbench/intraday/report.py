"""Everything the intraday analysis says about one series, in one result (``volbench realized``)."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np

from volbench.data.history import PriceHistory
from volbench.errors import EstimatorUnavailable, VolbenchError
from volbench.estimators.base import Estimate
from volbench.intraday.estimates import DAILY_FILE_REASON, REALIZED_KEYS, realized_point_estimate
from volbench.intraday.har import HarForecast, har_forecast
from volbench.intraday.jumps import (
    JUMP_ALPHA,
    ContinuityCheck,
    check_level,
    continuity_check,
    lee_mykland_screen,
)
from volbench.intraday.measures import RealizedMeasures, realized_measures
from volbench.intraday.sessions import SessionLayout, daily_bars, infer_layout
from volbench.intraday.signature import SignaturePlot, signature_plot
from volbench.models.term import DEFAULT_TERM_HORIZONS, check_horizons
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization


@dataclass(frozen=True, eq=False)
class RealizedReport:
    """Realized measures, signature plot, continuity check and HAR forecast of one series.

    On a daily history only the layout, the daily bars and the low-power daily jump screen are
    present; every other part is ``None`` with its reason in ``unavailable``.

    Attributes
    ----------
    history, daily
        The history as loaded and its daily bars (the same object for a daily file).
    layout
        Sessions and bar spacing.
    measures
        Per-day realized measures (``None`` on daily data).
    estimates
        ``realized`` and ``bipower`` point estimates over every day, with intervals.
    kernel_vol, overnight_share
        Annualized whole-day vol with the realized kernel as session measure; the share of total
        variance that arrives overnight.
    signature, continuity, har
        See :mod:`volbench.intraday.signature`, :mod:`~volbench.intraday.jumps`, :mod:`~volbench.intraday.har`.
    unavailable
        Part -> reason, for parts that could not be computed.
    annualization
        Trading days a year.
    """

    history: PriceHistory
    daily: PriceHistory
    layout: SessionLayout
    annualization: float
    measures: RealizedMeasures | None = None
    estimates: dict[str, Estimate] = field(default_factory=dict)
    kernel_vol: float | None = None
    overnight_share: float | None = None
    signature: SignaturePlot | None = None
    continuity: ContinuityCheck | None = None
    har: HarForecast | None = None
    unavailable: dict[str, str] = field(default_factory=dict)

    @property
    def name(self) -> str:
        return self.history.name

    def _vol(self, key: str) -> float | None:
        e = self.estimates.get(key)
        return None if e is None else e.vol

    def as_dict(self) -> dict:
        lay, h = self.layout, self.history
        jumps = self.continuity.as_dict() if self.continuity else None
        return {
            "name": h.name,
            "source": str(h.source) if h.source else None,
            "intraday": lay.intraday,
            "bar_interval_seconds": lay.bar_interval_seconds,
            "bars_per_session": lay.bars_per_session,
            "sessions": lay.n_sessions,
            "session_rule": lay.as_dict()["session_rule"],
            "annualization": self.annualization,
            "sampling_seconds": self.measures.interval_seconds if self.measures else None,
            "realized_vol": self._vol("realized"),
            "bipower_vol": self._vol("bipower"),
            "kernel_vol": self.kernel_vol,
            "overnight_share": self.overnight_share,
            "estimates": {k: {**e.as_dict(), "confidence": e.confidence, "ci_method": e.ci_method}
                          for k, e in self.estimates.items()},
            "signature": ([{"interval_seconds": float(t.interval_seconds), "annualized_vol": float(t.annualized_vol),
                            "kind": t.kind} for t in self.signature.table.itertuples(index=False)]
                          if self.signature else []),
            "suggested_interval_seconds": self.signature.suggested_interval_seconds if self.signature else None,
            "signature_reason": self.signature.reason if self.signature else None,
            "jump_days": jumps["jump_days"] if jumps else [],
            "jump_share": jumps["jump_share"] if jumps else None,
            "continuity": jumps,
            "har": self.har.as_dict() if self.har else None,
            "unavailable": dict(self.unavailable),
            "notes": list(self.measures.notes) if self.measures else [],
            "provenance": h.provenance(),
        }


def parse_sampling(value, layout: SessionLayout) -> int | str:
    """``"bar"`` -> 1, ``"auto"`` stays, a number of seconds -> whole bars (a multiple of the bar interval)."""
    if value is None or value == "bar":
        return 1
    if value == "auto":
        return "auto"
    try:
        seconds = float(value)
    except (TypeError, ValueError):
        raise VolbenchError(f"sampling must be 'bar', 'auto' or a number of seconds, got {value!r}") from None
    bar = layout.bar_interval_seconds
    k = seconds / bar
    if not (np.isfinite(k) and k >= 1 and abs(k - round(k)) < 1e-9):
        raise VolbenchError(f"sampling {value!r} seconds must be a whole multiple of the {bar:g}-second bar "
                            f"interval, e.g. {bar:g} or {2 * bar:g}")
    return round(k)


def realized_report(
    history: PriceHistory,
    *,
    session_break: str | float | None = None,
    sampling: int | str = "bar",
    annualization: float = DEFAULT_ANNUALIZATION,
    jump_alpha: float = JUMP_ALPHA,
    verdict_alpha: float = 0.05,
    horizons: Iterable[int] = DEFAULT_TERM_HORIZONS,
    confidence: float = 0.95,
) -> RealizedReport:
    """The intraday analysis of one history (or, on daily bars, the daily jump screen).

    Parameters
    ----------
    history
        Price history as loaded (rows already selected for the quality policy).
    session_break
        ``None`` for calendar-date sessions, or a gap such as ``"4h"``.
    sampling
        ``"bar"`` (every bar), ``"auto"`` (the signature plot's suggested interval) or seconds,
        for RV, BV and TQ; the kernel always uses every bar.
    annualization
        Trading days a year.
    jump_alpha, verdict_alpha
        Level of the jump list and of the continuity verdict.
    horizons
        Option lives in trading days for the HAR term structure.
    confidence
        Level of the intervals of the realized and bipower estimates.

    Raises
    ------
    VolbenchError
        Bad settings; a history too short for any part raises only when nothing can be said
        (each part that cannot be computed is listed in ``unavailable`` instead).
    """
    a = check_annualization(annualization)
    hz = check_horizons(horizons)
    check_level(jump_alpha)
    check_level(verdict_alpha, "verdict significance level")
    lay = infer_layout(history.dates, session_break)
    daily = daily_bars(history, lay)
    if not lay.intraday:
        unavailable = {k: DAILY_FILE_REASON for k in (*REALIZED_KEYS, "kernel", "signature", "har")}
        try:
            cont = lee_mykland_screen(history, alpha=jump_alpha, verdict_alpha=verdict_alpha)
        except VolbenchError as exc:
            cont = None
            unavailable["continuity"] = str(exc)
        return RealizedReport(history, daily, lay, a, continuity=cont, unavailable=unavailable)
    unavailable: dict[str, str] = {}
    k = parse_sampling(sampling, lay)
    sig = None
    try:
        sig = signature_plot(history, lay, annualization=a)
    except VolbenchError as exc:
        unavailable["signature"] = str(exc)
    if k == "auto":
        k = sig.suggested_sampling_bars if sig else 1
    m = realized_measures(history, lay, sampling_bars=k)
    est = {}
    for key in REALIZED_KEYS:
        try:
            est[key] = realized_point_estimate(m, key, annualization=a, confidence=confidence)
        except EstimatorUnavailable as exc:
            unavailable[key] = exc.reason
    kern = m.whole_day("kernel")
    kernel_vol = float(np.sqrt(a * kern.mean())) if len(kern) else None
    d = m.daily
    total = float(d["rv"].sum() + np.nansum(d["overnight"].to_numpy() ** 2))
    overnight_share = float(np.nansum(d["overnight"].to_numpy() ** 2) / total) if total > 0 else None
    cont = har = None
    try:
        cont = continuity_check(m, alpha=jump_alpha, verdict_alpha=verdict_alpha, annualization=a)
    except VolbenchError as exc:
        unavailable["continuity"] = str(exc)
    try:
        har = har_forecast(m, hz, annualization=a)
    except VolbenchError as exc:
        unavailable["har"] = str(exc)
    return RealizedReport(history, daily, lay, a, m, est, kernel_vol, overnight_share, sig, cont, har, unavailable)
