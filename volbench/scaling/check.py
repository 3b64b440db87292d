"""The Brownian-scaling check of one price history: validation, orchestration and the result."""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from volbench import validate
from volbench.candidates import Candidate, CandidateSet
from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.estimators.base import sample_variance
from volbench.frames import frame, labels
from volbench.scaling.false_alarm import family_false_alarm
from volbench.scaling.increments import (
    ACF_LABELS,
    LJUNG_BOX_LABELS,
    independence_arrays,
    independence_rows,
    lagged_products,
    normality_arrays,
    qq_arrays,
)
from volbench.scaling.increments import drift as drift_stats
from volbench.scaling.ratio import chow_denning, deltas_from_squares, ratio_arrays
from volbench.scaling.variance import loglog_fit, nonoverlapping_returns
from volbench.scaling.verdicts import (
    Verdict,
    drift_verdict,
    family_statuses,
    independence_p,
    independence_verdict,
    normality_verdict,
    variance_verdict,
)
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization

if TYPE_CHECKING:
    from volbench.intraday.jumps import ContinuityCheck
    from volbench.scaling.continuity import IntradayPart

DEFAULT_HORIZONS: tuple[int, ...] = (1, 2, 5, 10, 20, 40, 60)
DEFAULT_LJUNG_BOX_LAGS: tuple[int, ...] = (5, 10, 20)
DEFAULT_ACF_LAGS = 20
MIN_RETURNS = 30
"""Fewer one-bar returns than this and no property can be judged."""
MIN_PERIODS = 10
"""A horizon h is kept only with at least this many non-overlapping h-bar returns."""

HORIZON_COLUMNS = (
    "h", "variance", "variance_nonoverlap", "n_nonoverlap", "annualized_vol", "sqrt_time_vol",
    "vol_ratio", "variance_ratio", "z", "z_robust", "p_value", "p_value_robust", "skew",
    "excess_kurtosis", "jarque_bera", "jarque_bera_p",
)
_HORIZON_LABELS = labels(HORIZON_COLUMNS)
_QQ_LABELS = labels(("theoretical", "sample"))


@dataclass(frozen=True, eq=False)
class ScalingResult:
    """Outcome of :func:`scaling_check` for one series.

    Attributes
    ----------
    name
        Series name.
    horizons
        One row per kept horizon (always including h = 1), columns :data:`HORIZON_COLUMNS`.
        ``variance`` is the overlapping h-bar variance, ``annualized_vol`` = sqrt(variance x A / h),
        ``sqrt_time_vol`` the annualized 1-bar vol (what sqrt-time scaling assumes at every h),
        ``vol_ratio`` their ratio. Test statistics are NaN at h = 1 (the ratio is 1 by definition).
    dropped
        Horizon -> reason, for requested horizons the history is too short for.
    slope, slope_ci, slope_se, hurst
        Weighted log-log fit of variance on horizon, its interval at ``1 - alpha`` and H = slope / 2.
    chow_denning_stat, chow_denning_p
        Joint robust variance-ratio test over the kept horizons h >= 2.
    ljung_box
        Columns lag, q_returns, p_returns, q_squared, p_squared.
    acf
        Columns lag, acf_returns, acf_squared, band.
    qq
        Columns theoretical, sample (standardized 1-bar returns).
    drift
        See :func:`volbench.scaling.increments.drift`.
    verdicts
        One :class:`~volbench.scaling.verdicts.Verdict` per property, in a fixed order.
    n_returns, alpha, annualization
        Inputs of the check.
    notes
        Plain sentences about choices made on this data (dropped lags, rows left out at import).
    family_false_alarm
        How often a perfectly Brownian series of this length gets at least one non-"consistent"
        verdict at this level, and the bound on any "rejected"
        (:func:`volbench.scaling.false_alarm.family_false_alarm`).
    provenance
        ``PriceHistory.provenance()``: file, hash, dates and whether flagged rows were excluded.
    """

    name: str
    horizons: pd.DataFrame
    dropped: dict[int, str]
    slope: float
    slope_ci: tuple[float, float]
    slope_se: float
    hurst: float
    chow_denning_stat: float
    chow_denning_p: float
    ljung_box: pd.DataFrame
    acf: pd.DataFrame
    qq: pd.DataFrame
    drift: dict
    verdicts: tuple[Verdict, ...]
    n_returns: int
    alpha: float
    annualization: float
    notes: tuple[str, ...] = ()
    provenance: dict = field(default_factory=dict)
    family_false_alarm: dict = field(default_factory=dict)
    intraday: IntradayPart | None = None
    """For a file of intraday bars analysed by day: the continuity check (its verdict is the fifth,
    ``continuous_paths``), the jump days and the signature plot (:mod:`volbench.scaling.continuity`)."""
    daily_continuity: ContinuityCheck | None = None
    """For a file of daily bars: the low-power jump screen on daily returns behind the fifth verdict,
    ``continuous_paths`` (:func:`volbench.scaling.continuity.daily_continuity`)."""

    @property
    def exclude_flagged(self) -> bool:
        return self.provenance.get("flagged_rows") == "excluded"

    def verdict(self, prop: str) -> Verdict:
        """The verdict for one property name."""
        for v in self.verdicts:
            if v.property == prop:
                return v
        raise VolbenchError(f"unknown property {prop!r}; choose one of: "
                            + ", ".join(v.property for v in self.verdicts))

    def candidates(self, days: int) -> CandidateSet:
        """The vol an option of ``days`` bars saw here (:func:`horizon_vol`) as a comparison candidate."""
        v = horizon_vol(self, days)
        if v is None or not (np.isfinite(v) and v > 0):
            hz = self.horizons
            span = f" (horizons {int(hz['h'].min())} to {int(hz['h'].max())} bars)" if len(hz) else ""
            return CandidateSet.missing("scaling", f"option life of {days} bars is outside the scaling check's "
                                                   f"horizons{span}")
        return CandidateSet("scaling", (Candidate("scaling", "scaling", "Scaling check horizon vol", v, window=days,
                                                  note=f"{days}-bar returns over the whole history"),),
                            title="scaling check", what="horizon vol")

    def _intraday_dict(self) -> dict:
        part = self.intraday
        sig = part.signature
        return {
            "continuity": part.continuity.as_dict() if part.continuity is not None else None,
            "jump_days": part.continuity.as_dict()["jump_days"] if part.continuity is not None else [],
            "signature": ([{"interval_seconds": float(t.interval_seconds), "annualized_vol": float(t.annualized_vol),
                            "kind": t.kind} for t in sig.table.itertuples(index=False)] if sig else []),
            "suggested_interval_seconds": sig.suggested_interval_seconds if sig else None,
            "intraday_unavailable": dict(part.unavailable),
        }

    def as_dict(self) -> dict:
        """JSON-ready dict (NaN values are left as float NaN; the CLI writes them as null)."""
        return {
            "name": self.name,
            "n_returns": self.n_returns,
            "alpha": self.alpha,
            "annualization": self.annualization,
            "flagged_rows": "excluded" if self.exclude_flagged else "kept",
            "exclude_flagged": self.exclude_flagged,
            "horizons": _records(self.horizons),
            "dropped": {str(h): r for h, r in self.dropped.items()},
            "slope": self.slope,
            "slope_ci": list(self.slope_ci),
            "slope_ci_level": 1.0 - self.alpha,
            "slope_se": self.slope_se,
            "hurst": self.hurst,
            "chow_denning_stat": self.chow_denning_stat,
            "chow_denning_p": self.chow_denning_p,
            "ljung_box": _records(self.ljung_box),
            "acf": _records(self.acf),
            "qq": _records(self.qq),
            "drift": self.drift,
            "verdicts": [v.as_dict() for v in self.verdicts],
            "family_false_alarm": dict(self.family_false_alarm),
            "notes": list(self.notes),
            "provenance": self.provenance,
            **(self._intraday_dict() if self.intraday is not None else {}),
            **({"continuity": self.daily_continuity.as_dict(),
                "jump_days": self.daily_continuity.as_dict()["jump_days"]}
               if self.daily_continuity is not None else {}),
        }


def _records(df: pd.DataFrame) -> list[dict]:
    out = []
    for rec in df.to_dict(orient="records"):
        out.append({k: (int(v) if k in ("h", "lag", "n_nonoverlap") else float(v)) for k, v in rec.items()})
    return out


def check_horizons(horizons: Iterable[int]) -> tuple[int, ...]:
    """Validate horizons: whole numbers of bars >= 1, at least one >= 2. Returns them sorted, with 1 added."""
    try:
        raw = list(horizons)
    except TypeError:
        raise VolbenchError(f"horizons must be a list of whole numbers of bars, got {horizons!r}") from None
    out = set()
    for h in raw:
        if isinstance(h, bool) or not isinstance(h, (int, np.integer, float, np.floating)) or h != int(h):
            raise VolbenchError(f"horizons must be whole numbers of bars, e.g. 1,2,5,10; got {h!r}")
        if h < 1:
            raise VolbenchError(f"horizons must be >= 1 bar, got {int(h)}")
        out.add(int(h))
    if not any(h >= 2 for h in out):
        raise VolbenchError(f"horizons must include at least one horizon of 2 bars or more, got {raw!r}")
    return tuple(sorted(out | {1}))


def check_alpha(alpha: float) -> float:
    """Significance level of the verdicts (one rule everywhere: volbench.validate.significance)."""
    return validate.significance(alpha)


def scaling_check(
    history: PriceHistory,
    horizons: Sequence[int] = DEFAULT_HORIZONS,
    *,
    alpha: float = 0.05,
    annualization: float = DEFAULT_ANNUALIZATION,
    qq_points: int = 200,
    ljung_box_lags: Sequence[int] = DEFAULT_LJUNG_BOX_LAGS,
    acf_lags: int = DEFAULT_ACF_LAGS,
) -> ScalingResult:
    """Test whether a price history scales like the Brownian motion Black-Scholes assumes.

    Parameters
    ----------
    history
        Price history; close-to-close log returns are used. Rows excluded at import (unusable, or
        flagged when the caller chose so) are simply absent, as recorded in the history.
    horizons
        Horizons in bars (default :data:`DEFAULT_HORIZONS`); 1 is always added as the base.
    alpha
        Significance level of the verdicts, 0 < alpha < 0.5; intervals are at 1 - alpha.
    annualization
        Bars per year.
    qq_points
        Maximum number of QQ pairs kept (>= 10).
    ljung_box_lags, acf_lags
        Ljung-Box lags and the number of autocorrelations; lags beyond a quarter of the returns
        are dropped with a note.

    Returns
    -------
    ScalingResult

    Raises
    ------
    VolbenchError
        Invalid horizons, alpha, annualization, qq_points or lags; fewer than :data:`MIN_RETURNS`
        returns; constant prices; no horizon >= 2 with :data:`MIN_PERIODS` non-overlapping periods.

    Notes
    -----
    Methods and sources: docs/METHODS.md, "Brownian-scaling check"; variance and fit in
    :mod:`volbench.scaling.variance`, tests in :mod:`volbench.scaling.ratio`, increments in
    :mod:`volbench.scaling.increments`, status rules in :mod:`volbench.scaling.verdicts`.
    Horizon vol: sqrt(Var_h x A / h) against sqrt(Var_1 x A).
    """
    hs, alpha, a, lb_lags, acf_lags = _settings(horizons, alpha, annualization, ljung_box_lags, acf_lags)
    if isinstance(qq_points, bool) or not isinstance(qq_points, (int, np.integer)) or qq_points < 10:
        raise VolbenchError(f"qq_points must be a whole number >= 10, got {qq_points!r}")
    st = _statistics(history, hs, alpha, a, lb_lags, acf_lags)
    from volbench.scaling import continuity

    theo, samp = qq_arrays(st.r, int(qq_points))
    return ScalingResult(
        name=history.name, horizons=frame(st.cols, _HORIZON_LABELS), dropped=st.dropped, slope=st.fit.slope,
        slope_ci=st.fit.ci, slope_se=st.fit.se, hurst=st.fit.hurst, chow_denning_stat=st.cd_stat,
        chow_denning_p=st.cd_p, ljung_box=frame(st.lb, LJUNG_BOX_LABELS), acf=frame(st.ac, ACF_LABELS),
        qq=frame({"theoretical": theo, "sample": samp}, _QQ_LABELS), drift=st.dr, verdicts=st.verdicts,
        n_returns=st.n, alpha=alpha, annualization=a, notes=st.notes, provenance=history.provenance(),
        family_false_alarm=(continuity.five_property_false_alarm(family_false_alarm(st.n, alpha), alpha,
                                                                 daily=st.intraday is None)
                            if len(st.verdicts) == 5 else family_false_alarm(st.n, alpha)),
        intraday=st.intraday, daily_continuity=st.daily_continuity,
    )


def scaling_verdicts(
    history: PriceHistory,
    horizons: Sequence[int] = DEFAULT_HORIZONS,
    *,
    alpha: float = 0.05,
    annualization: float = DEFAULT_ANNUALIZATION,
    ljung_box_lags: Sequence[int] = DEFAULT_LJUNG_BOX_LAGS,
    acf_lags: int = DEFAULT_ACF_LAGS,
) -> tuple[Verdict, ...]:
    """The verdicts of :func:`scaling_check` alone (same arguments, same code, same verdicts), without
    the tables and QQ pairs a caller that only reads the verdicts (a survey) would discard.

    Raises
    ------
    VolbenchError
        As :func:`scaling_check`.
    """
    hs, alpha, a, lb_lags, acf_lags = _settings(horizons, alpha, annualization, ljung_box_lags, acf_lags)
    return _statistics(history, hs, alpha, a, lb_lags, acf_lags).verdicts


def _settings(horizons, alpha, annualization, ljung_box_lags, acf_lags):
    hs = check_horizons(horizons)
    alpha = check_alpha(alpha)
    a = check_annualization(annualization)
    lb_lags = sorted({int(x) for x in ljung_box_lags})
    if not lb_lags or lb_lags[0] < 1:
        raise VolbenchError(f"Ljung-Box lags must be whole numbers >= 1, got {list(ljung_box_lags)!r}")
    if isinstance(acf_lags, bool) or not isinstance(acf_lags, (int, np.integer)) or acf_lags < 1:
        raise VolbenchError(f"acf_lags must be a whole number >= 1, got {acf_lags!r}")
    return hs, alpha, a, lb_lags, int(acf_lags)


@dataclass(frozen=True, eq=False)
class _Statistics:
    r: np.ndarray
    n: int
    dropped: dict
    notes: tuple[str, ...]
    cols: dict
    fit: object
    cd_stat: float
    cd_p: float
    lb: dict
    ac: dict
    dr: dict
    verdicts: tuple[Verdict, ...]
    intraday: IntradayPart | None = None
    daily_continuity: ContinuityCheck | None = None


def _statistics(history: PriceHistory, hs: tuple[int, ...], alpha: float, a: float, lb_lags: list[int],
                acf_lags: int) -> _Statistics:
    """Every number of the check, as numpy arrays and the verdicts (validated settings)."""
    name = history.name
    r = history.logs.returns
    n = r.shape[0]
    if n < MIN_RETURNS:
        raise VolbenchError(f"{name}: only {n} returns ({history.n} rows); the scaling check needs at least "
                            f"{MIN_RETURNS}; load a longer history")
    if not np.any(r != 0.0):
        raise VolbenchError(f"{name}: prices are constant (every return is zero), so there is no variance to "
                            "scale; check that the file holds the right price column")
    y = history.logs.close

    dropped = {h: (f"needs at least {MIN_PERIODS} non-overlapping {h}-bar returns ({MIN_PERIODS * h} returns); "
                   f"the history has {n}") for h in hs if n // h < MIN_PERIODS}
    kept = [h for h in hs if h not in dropped]
    if len(kept) < 2:
        raise VolbenchError(f"{name}: with {n} returns no requested horizon of 2 bars or more has "
                            f"{MIN_PERIODS} non-overlapping periods; use horizons up to {n // MIN_PERIODS} bars")

    notes = []
    quarter = max(1, n // 4)
    if lb_lags[-1] > quarter:
        notes.append(f"Ljung-Box lags above {quarter} (a quarter of the {n} returns) left out: "
                     + ", ".join(str(x) for x in lb_lags if x > quarter))
        lb_lags = [x for x in lb_lags if x <= quarter] or [quarter]
    if acf_lags > quarter:
        notes.append(f"autocorrelations shown to lag {quarter} (a quarter of the {n} returns), not {acf_lags}")
        acf_lags = quarter
    unusable = [f for f in history.findings if f.severity == "error"]
    if unusable:
        notes.append(f"{len(unusable)} unusable rows were left out at import (see 'volbench check'); the returns "
                     "spanning them cover more than one bar")
    jumps = [f for f in history.findings if f.kind == "jump"]
    if jumps:
        notes.append(f"the data-quality check found {len(jumps)} price jump(s) that look like bad ticks or "
                     "unadjusted splits (see 'volbench check'); one such jump dominates variances, kurtosis and "
                     "every test here: correct or adjust the prices before reading them")
    if history.exclude_flagged and history.excluded_lines:
        notes.append(f"{len(history.excluded_lines)} rows flagged by data-quality warnings were excluded")

    # Every statistic from numpy arrays; the four tables are wrapped in pandas once, at the end.
    # One FFT gives the autocorrelations of returns and squared returns and the lagged products
    # of squared returns behind the robust variance-ratio statistics.
    mu = (y[-1] - y[0]) / n
    z2 = (r - mu) ** 2.0
    top, max_lag = max(acf_lags, lb_lags[-1]), max(kept) - 1
    rows = independence_rows(r)
    rows -= rows.mean(axis=-1, keepdims=True)
    lagged = lagged_products(np.concatenate((rows, z2[None, :])), max(top, max_lag))
    rho = lagged[:2, 1:top + 1] / lagged[:2, :1]
    deltas = deltas_from_squares(z2, max_lag, lagged[2])
    vq, vr, z, zr, p_z, p_zr = ratio_arrays(y, kept, deltas)
    blocks = [nonoverlapping_returns(y, h) for h in kept]
    var_non = np.array([sample_variance(x) for x in blocks])
    n_non = np.array([x.shape[0] for x in blocks], dtype=np.int64)
    hs_arr = np.asarray(kept, dtype=np.int64)
    var1 = float(vq[0])
    annual = np.sqrt(vq * a / hs_arr)
    sqrt_time = np.full(len(kept), np.sqrt(var1 * a))
    skew, kurt, jb, jb_p = normality_arrays(blocks)
    cols = {"h": hs_arr, "variance": vq, "variance_nonoverlap": var_non, "n_nonoverlap": n_non,
            "annualized_vol": annual, "sqrt_time_vol": sqrt_time, "vol_ratio": annual / sqrt_time,
            "variance_ratio": vr, "z": z, "z_robust": zr, "p_value": p_z, "p_value_robust": p_zr,
            "skew": skew, "excess_kurtosis": kurt, "jarque_bera": jb, "jarque_bera_p": jb_p}

    fit = loglog_fit(kept, vq, n, deltas, level=1.0 - alpha)
    cd_stat, cd_p = chow_denning(zr[1:])
    lb, ac = independence_arrays(r, lb_lags, acf_lags, alpha, (rho[0], rho[1]))
    dr = drift_stats(r, kept, a)
    p_values = [cd_p, float(jb_p[0]), min(independence_p(lb)), float(dr["p_value"])]
    from volbench.scaling.continuity import (  # imports the intraday core
        continuity_verdict,
        daily_continuity,
        intraday_part,
    )

    part = intraday_part(history, alpha, a)  # None for daily bars: the low-power daily screen instead
    daily, daily_reason = (None, None) if part is not None else daily_continuity(history, alpha)
    if part is not None and part.p_value is not None:
        p_values.append(part.p_value)
    elif daily is not None:
        p_values.append(daily.family_p_value)
    elif daily_reason:
        notes.append(f"continuous paths not tested: {daily_reason}")
    st = family_statuses(p_values, alpha)
    verdicts = (
        variance_verdict(cols, cd_stat, cd_p, fit, alpha, st[0]),
        normality_verdict(cols, alpha, st[1]),
        independence_verdict(lb, ac, alpha, st[2]),
        drift_verdict(dr, alpha, st[3]),
    )
    if len(st) == 5:
        verdicts = tuple(replace(v, message=v.message.replace("the four properties are judged",
                                                              "the five properties are judged"))
                         for v in verdicts)
        verdicts += (continuity_verdict(part if part is not None else daily, st[4], alpha),)
    return _Statistics(r, n, dropped, tuple(notes), cols, fit, cd_stat, cd_p, lb, ac, dr, verdicts, part, daily)


def horizon_vol(result: ScalingResult, days: float) -> float | None:
    """Annualized vol for an option of ``days`` bars, from the check's horizon variances.

    Total variance is interpolated linearly in h between the two bracketing kept horizons, then
    annualized, sqrt(Var(days) x A / days); exact at a kept horizon. ``None`` outside the range of
    kept horizons (extrapolation is exactly the sqrt-time assumption under test).
    """
    try:
        d = float(days)
    except (TypeError, ValueError):
        raise VolbenchError(f"days must be a number of bars, got {days!r}") from None
    h = result.horizons["h"].to_numpy(dtype=float)
    if not np.isfinite(d) or d < h[0] or d > h[-1]:
        return None
    var = float(np.interp(d, h, result.horizons["variance"].to_numpy(dtype=float)))
    return float(np.sqrt(var * result.annualization / d))
