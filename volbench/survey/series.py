"""The per-series survey: the same core calls the single-series commands make, one record out.

:func:`survey_history` is pure (a history and settings in, a record out) and is the only place a
survey computes anything; both engines run it through :func:`survey_paths`, so a series gets the
same numbers whichever engine, worker or task ran it.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace
from pathlib import Path

from threadpoolctl import threadpool_limits

from volbench.data import load_prices
from volbench.data.history import PriceHistory
from volbench.errors import EstimatorUnavailable, VolbenchError
from volbench.estimators import DAILY_KEYS, estimate_all, rolling_vol
from volbench.pricing.cone import place_in_cone
from volbench.scaling import scaling_verdicts
from volbench.survey.record import SEVERITIES, SurveyRecord, failed
from volbench.survey.settings import SurveySettings

_UNSET = object()


def survey_history(history: PriceHistory, settings: SurveySettings, *, pricing_vol=_UNSET) -> SurveyRecord:
    """Survey one price history.

    Parameters
    ----------
    history
        One series, as loaded (flagged rows already kept or excluded per the settings).
    settings
        What to compute.
    pricing_vol
        Proposed vol for this series; by default ``settings.pricing_vol_for(history.name)``.

    Returns
    -------
    SurveyRecord
        Never raises for bad data: a part that cannot be computed is listed under ``unavailable``;
        a series with no estimate at all, or an unexpected failure, is a record with ``error``.

    Notes
    -----
    Each figure is the one a single-series command prints for the same settings:
    estimates = ``volbench estimate --window W`` (:func:`~volbench.estimators.estimate_all`);
    cone and placement = ``volbench cone`` / ``volbench compare`` (:func:`~volbench.pricing.cone.vol_cone`,
    :meth:`~volbench.pricing.cone.Cone.place`, Burghardt & Lane 1990; computed by
    :func:`~volbench.pricing.cone.place_in_cone`, the same code without the percentile table); verdicts =
    ``volbench scaling`` (:func:`~volbench.scaling.scaling_check`, by
    :func:`~volbench.scaling.scaling_verdicts`, the same code without the tables); forward vol = ``volbench garch``
    (:func:`~volbench.models.fit_models`, preferred model by BIC, EWMA fallback).
    """
    source = str(history.source) if history.source else None
    try:
        return _survey(history, settings, settings.pricing_vol_for(history.name) if pricing_vol is _UNSET
                       else pricing_vol)
    except Exception as exc:  # noqa: BLE001 - one series never stops a survey; the row says what failed
        what = str(exc) if isinstance(exc, VolbenchError) else (
            f"internal error ({type(exc).__name__}: {exc}); please report it with the file")
        return failed(history.name, source, what, rows=history.n, as_of=history.last_date,
                      findings=_count(history), series=history.name)


def _count(history: PriceHistory) -> dict[str, int]:
    return {s: sum(f.severity == s for f in history.findings) for s in SEVERITIES}


def _survey(h: PriceHistory, s: SurveySettings, pricing_vol: float | None) -> SurveyRecord:
    life = None
    if s.groups.life is not None:  # the option's life from this series' own as-of date sets its days
        from volbench.analysis import life_for

        life = life_for(h, s.groups)
        s = replace(s, days=life.trading_days)
    a, days, window, e = s.annualization, s.days, s.estimate_window, s.estimation
    report = estimate_all(h, window, keys=DAILY_KEYS, as_of=e.as_of, annualization=a,  # bars as they are
                          confidence=e.confidence, **e.options)
    unavailable = dict(report.unavailable)
    if not report.estimates:
        reasons = "; ".join(f"{k}: {r}" for k, r in report.unavailable.items())
        return failed(h.name, str(h.source) if h.source else None,
                      f"{h.name}: no estimate possible with a {window}-bar window ({reasons}); "
                      "load a longer history or choose a shorter --window",
                      rows=h.n, as_of=h.last_date, window=window, days=days, findings=_count(h),
                      unavailable=unavailable, series=h.name)

    current = cone_pct = pv_pct = None
    try:  # the cone's own definition of "today's" vol: the last value of the rolling series
        rolled = rolling_vol(h, s.cone_estimator, days, annualization=a)
        if rolled.dates.size and rolled.dates[-1] == h.dates[-1]:
            current = float(rolled.vols[-1])
        else:
            unavailable["current_vol"] = (f"{s.cone_estimator} over the last {days} bars is undefined: bars in it "
                                          "have high below low or prices outside their range; exclude flagged rows")
    except EstimatorUnavailable as exc:
        unavailable["current_vol"] = f"{exc.key} over {days} bars: {exc.reason}"
    try:  # vol_cone(...).place(vol, days) for both vols, without the cone's percentile table
        placed = place_in_cone(h, (current, pricing_vol), days, s.cone_estimator, s.cone_windows, annualization=a)
        cone_pct, pv_pct = (None if p is None else p.percentile for p in placed)
    except VolbenchError as exc:
        unavailable["cone"] = str(exc)
    if pricing_vol is None and s.pricing_vols:  # asked per series, and this one is not listed
        unavailable["pricing_vol"] = f"the pricing-vol file lists no {h.name!r}"

    verdicts: dict[str, str] = {}
    try:
        verdicts = {v.property: v.status  # scaling_check's verdicts, without its tables
                    for v in scaling_verdicts(h, s.scaling.horizons, alpha=s.scaling.alpha, annualization=a)}
    except VolbenchError as exc:
        unavailable["verdicts"] = str(exc)

    forward = source = None
    if s.with_garch:
        forward, source = _forward_vol(h, s, unavailable)

    return SurveyRecord(
        name=h.name, source=str(h.source) if h.source else None, rows=h.n, as_of=report.as_of, window=window,
        days=days, estimates=dict(report.estimates), current_vol=current, cone_percentile=cone_pct,
        pricing_vol=pricing_vol, pricing_vol_percentile=pv_pct, verdicts=verdicts, forward_vol=forward,
        forward_vol_source=source, findings=_count(h), unavailable=unavailable, series=h.name,
        life=None if life is None else life.as_dict(),
    )


def _forward_vol(h: PriceHistory, s: SurveySettings, unavailable: dict) -> tuple[float | None, str | None]:
    from volbench.models import DIST_REGISTRY, FALLBACK, fit_models

    try:  # the garch group's fits, with the option's life among the forecast horizons
        settings = replace(s.garch, horizons=tuple(sorted(set(s.garch.horizons) | {s.days})))
        comp = fit_models(h, settings, annualization=s.annualization)
        vol = comp.forward_vol(s.days)
    except VolbenchError as exc:
        unavailable["forward_vol"] = str(exc)
        return None, None
    fit = comp.preferred_fit
    if fit is not None:
        dist = "" if fit.dist == "normal" else f", {DIST_REGISTRY[fit.dist].label}"
        return vol, f"{fit.label}{dist}"
    reason = next((w for f in comp.fits for w in f.warnings), "no usable fit")
    return vol, f"{FALLBACK} fallback: {reason}"


def survey_file(path: str | Path, settings: SurveySettings) -> list[SurveyRecord]:
    """Every series in one file (a long file with a symbol column holds several).

    A file that cannot be read is one record carrying the reason, named after the file.
    """
    p = Path(path)
    try:
        histories = load_prices(p, settings.import_options)
    except Exception as exc:  # noqa: BLE001 - one bad file never stops a survey
        what = str(exc) if isinstance(exc, VolbenchError) else (
            f"{p}: internal error reading the file ({type(exc).__name__}: {exc}); please report it")
        return [failed(p.stem, str(p), what)]
    return [survey_history(h, settings) for h in histories]


def survey_paths(paths: Sequence[str], settings: SurveySettings) -> list[list[SurveyRecord]]:
    """One task of a survey: every file in ``paths``, one list of records per file.

    Runs with the BLAS thread pools limited to one thread, so that workers sharing a machine do
    not oversubscribe its cores (each worker is one process doing one series at a time).
    """
    with threadpool_limits(limits=1):
        return survey_files(paths, settings)


def survey_files(paths: Sequence[str], settings: SurveySettings) -> list[list[SurveyRecord]]:
    """:func:`survey_paths` without setting the BLAS thread limit (the caller has set it once
    around many calls: finding the BLAS libraries to limit costs milliseconds each time)."""
    return [survey_file(p, settings) for p in paths]
