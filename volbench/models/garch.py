"""One GARCH-type fit with the ``arch`` library, turned into forward vols, failing honestly.

:func:`fit_garch` fits one model of :data:`~volbench.models.family.MODEL_REGISTRY` (GARCH(1,1),
GJR-GARCH(1,1,1), EGARCH(1,1), or any variant registered there) with an innovation distribution of
:data:`~volbench.models.family.DIST_REGISTRY` to a history's close-to-close log returns, and
returns a :class:`GarchFit`: parameters and standard errors in decimal units, likelihood and
information criteria, persistence, long-run vol, half-life, the in-sample conditional vol and the
forward-vol term structure. When the fit cannot be trusted (see :func:`diagnose`) the result says
why in ``warnings`` and its forward vol falls back to EWMA, with the fallback named in ``fallback``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np
import pandas as pd
from arch import arch_model

from volbench import validate
from volbench.candidates import Candidate, CandidateSet
from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.estimators import REGISTRY, point_estimate
from volbench.format import pct
from volbench.models import term
from volbench.models.checks import (
    BOUND_TOL,
    EWMA_CAUSES,
    NO_CLUSTERING,
    SCALE,
    diagnose,
    short_causes,
    to_decimal,
)
from volbench.models.family import DIST_REGISTRY, MODEL_REGISTRY, ModelSpec
from volbench.settings import GarchSettings
from volbench.threads import single_threaded
from volbench.types import DEFAULT_ANNUALIZATION, DEFAULT_TERM_HORIZONS, check_annualization

MIN_RETURNS = 250
"""Fewest returns we fit a GARCH model to (about a year of daily bars; common practice, no source)."""
FALLBACK = REGISTRY["ewma"].label
"""Name of the EWMA fallback stated in results: ``"EWMA (lambda 0.94)"``."""
CONSTANT_FALLBACK = "close-to-close vol over the whole history"
"""Name of the constant-vol fallback, used when the fit finds no volatility clustering."""
FALLBACK_SHORT = {FALLBACK: "EWMA fallback", CONSTANT_FALLBACK: "close-to-close fallback"}


def _none_if_nan(x: float | None) -> float | None:
    return None if x is None or not math.isfinite(x) else float(x)


@dataclass(frozen=True, eq=False)
class GarchFit:
    """One GARCH-family fit of one series and the forward vols it implies.

    Attributes
    ----------
    name, model, label, dist, mean
        Series name; model key and label; innovation distribution; mean model.
    annualization
        Bars per year used for every annualized figure.
    nobs
        Returns used in the fit.
    fitted
        Whether ``arch`` produced estimates (False for too few or constant returns, or a crash
        inside the optimizer).
    converged
        ``arch``'s convergence flag was 0.
    params, std_errors
        ``arch``'s parameter names (``mu``, ``omega``, ``alpha[1]``, ``gamma[1]``, ``beta[1]``,
        ``nu``) in **decimal return units**: ``mu`` per bar; ``omega`` per-bar variance (GARCH, GJR)
        or the constant of the log-variance equation (EGARCH). Robust (QMLE) standard errors;
        NaN where they cannot be computed.
    loglik, aic, bic
        Log-likelihood of the decimal returns (``arch``'s percent-scale value + nobs ln 100) and
        the criteria built on it; differences between models are unaffected by the shift.
    persistence, persistence_se
        alpha + beta (GARCH), alpha + gamma/2 + beta (GJR), beta (EGARCH), and its delta-method s.e.
    long_run_vol
        Annualized sqrt(omega / (1 - p)) (GARCH, GJR); for EGARCH sqrt(exp(omega / (1 - beta)))
        annualized, the level log-variance reverts to (a geometric mean, so below the mean variance).
        NaN when p is within BOUND_TOL of 1 or above.
    half_life
        ln(0.5) / ln(p) bars; NaN outside 0 < p < 1 - BOUND_TOL.
    conditional_vol
        In-sample conditional vol, annualized, indexed by return date (empty when not fitted).
    term_structure
        ``horizon`` (bars) and annualized ``vol``: sqrt of the average expected variance over
        bars 1..horizon. Flat at the EWMA vol when ``fallback`` is set.
    variance_path
        Expected per-bar variance (decimal) of bars 1..H ahead, H = max(252, horizons); ``None``
        under the fallback.
    forecast_method, simulations, seed
        ``"analytic"`` (GARCH, GJR), ``"simulation"`` (EGARCH, with the path count and seed),
        ``"fallback_ewma"`` or ``"fallback_close_to_close"``.
    forward_vol_source
        Where the forward vol comes from, in words: the model's forecast, or the fallback and why
        (e.g. ``"EWMA (lambda 0.94), because: no convergence"``).
    warnings
        Why the fit cannot be used for the forward vol (each one triggers the fallback).
    notes
        Caveats that do not trigger the fallback.
    fallback, fallback_vol
        The fallback's name and its annualized vol when warnings exist, else ``None``: the
        close-to-close vol over the whole history when the fit finds no volatility clustering
        (alpha on its lower bound: a constant-vol series), else ``"EWMA (lambda 0.94)"``
        (no convergence, persistence at 1, too little data, an absurd or non-finite forecast...).
    as_of
        Date of the last bar (forecast origin).
    """

    name: str
    model: str
    dist: str
    mean: str
    annualization: float
    nobs: int
    fitted: bool
    converged: bool
    params: dict[str, float]
    std_errors: dict[str, float]
    loglik: float
    aic: float
    bic: float
    persistence: float
    persistence_se: float
    long_run_vol: float
    half_life: float
    conditional_vol: pd.Series
    term_structure: pd.DataFrame
    variance_path: np.ndarray | None
    forecast_method: str
    warnings: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()
    fallback: str | None = None
    fallback_vol: float | None = None
    simulations: int | None = None
    seed: int | None = None
    as_of: str | None = None
    horizons: tuple[int, ...] = field(default=DEFAULT_TERM_HORIZONS)
    forward_vol_source: str = ""

    @property
    def spec(self) -> ModelSpec:
        """The model's family spec (label, colour, ``arch`` arguments...)."""
        return MODEL_REGISTRY[self.model]

    @property
    def label(self) -> str:
        return self.spec.label

    @property
    def candidate_label(self) -> str:
        """The label of this fit's forward vol: ``"GARCH(1,1) → EWMA fallback"`` under a fallback,
        with the innovation distribution when it is not the normal (``"GJR-GARCH(1,1,1) (t)"``)."""
        head = self.label if self.dist == "normal" else f"{self.label} ({self.dist})"
        return head if self.fallback is None else f"{head} → {FALLBACK_SHORT.get(self.fallback, 'fallback')}"

    @property
    def usable(self) -> bool:
        """True when the model's own forecast is used (no fallback)."""
        return self.fallback is None

    @property
    def max_days(self) -> int | None:
        """Longest life ``forward_vol`` accepts (``None``: any, under the flat fallback)."""
        return None if self.variance_path is None else int(self.variance_path.size)

    def forward_vol(self, days: float) -> float:
        """Annualized vol for an option living ``days`` bars (fractional bars interpolated).

        Under the fallback this is the flat EWMA vol for any life.

        Raises
        ------
        VolbenchError
            ``days`` not positive, or beyond the forecast horizon :attr:`max_days`.
        """
        if self.variance_path is None:
            d = float(days)
            if not (math.isfinite(d) and d > 0):
                raise VolbenchError(f"days must be a positive number of bars, got {days!r}")
            return float(self.fallback_vol)
        return math.sqrt(term.interpolate_average_variance(self.variance_path, days) * self.annualization)

    def candidates(self, days: int) -> CandidateSet:
        """This fit's forward vol over ``days`` bars as a comparison candidate."""
        return candidate_set((self,), None, days)

    @property
    def next_bar_vol(self) -> float:
        """Annualized vol expected for the next bar (the forward vol over one bar)."""
        return self.forward_vol(1)

    def as_dict(self) -> dict:
        """The CLI JSON shape (NaN -> None)."""
        return {
            "model": self.model,
            "label": self.label,
            "dist": self.dist,
            "mean": self.mean,
            "fitted": self.fitted,
            "converged": self.converged,
            "nobs": self.nobs,
            "params": {k: _none_if_nan(v) for k, v in self.params.items()},
            "std_errors": {k: _none_if_nan(v) for k, v in self.std_errors.items()},
            "loglik": _none_if_nan(self.loglik),
            "aic": _none_if_nan(self.aic),
            "bic": _none_if_nan(self.bic),
            "persistence": _none_if_nan(self.persistence),
            "persistence_se": _none_if_nan(self.persistence_se),
            "long_run_vol": _none_if_nan(self.long_run_vol),
            "half_life": _none_if_nan(self.half_life),
            "next_bar_vol": _none_if_nan(self.next_bar_vol),
            "term_structure": [{"horizon": int(h), "vol": _none_if_nan(float(v))}
                               for h, v in zip(self.term_structure["horizon"], self.term_structure["vol"])],
            "forecast_method": self.forecast_method,
            "forward_vol_source": self.forward_vol_source,
            "candidate_label": self.candidate_label,
            "simulations": self.simulations,
            "seed": self.seed,
            "annualization": self.annualization,
            "as_of": self.as_of,
            "warnings": list(self.warnings),
            "notes": list(self.notes),
            "fallback": self.fallback,
        }


def candidate_set(fits, preferred: str | None, days: int) -> CandidateSet:
    """The forward vol of each fit over ``days`` bars as comparison candidates.

    A fallback's number is labelled as one (``"GARCH(1,1) → EWMA fallback"``) and names its source;
    the headline (named in a comparison's reading) is the preferred fit, else the first usable
    fit, else the first fit.
    """
    items: list[Candidate] = []
    missing: dict[str, str] = {}
    for fit in fits:
        key = f"garch:{fit.model}"
        try:
            v = fit.forward_vol(days)
        except VolbenchError as exc:
            missing[key] = str(exc)
            continue
        if not (math.isfinite(v) and v > 0):
            missing[key] = f"no forward vol for {days} bars"
            continue
        notes = ([f"no usable forecast; forward vol from {fit.forward_vol_source}"] if fit.fallback
                 else ["forward vol over the option's life"])
        if preferred is not None and fit.model == preferred:
            notes.append("preferred fit")
        if not fit.converged and not fit.fallback:
            notes.append("fit did not converge")
        if math.isfinite(fit.persistence) and fit.persistence >= 1:
            notes.append(f"persistence {fit.persistence:.3f} >= 1")
        items.append(Candidate("garch", key, fit.candidate_label, v, window=days, note="; ".join(notes),
                               fallback=fit.forward_vol_source if fit.fallback else None))
    lead = (next((c for c in items if c.key == f"garch:{preferred}"), None)
            or next((c for c in items if c.fallback is None), None) or (items[0] if items else None))
    items = [replace(c, headline=c is lead) for c in items]
    return CandidateSet("garch", tuple(items), missing, title="GARCH-family fit", what="forward vol")


# ---------------------------------------------------------------------------------- fitting
@single_threaded
def fit_garch(
    history: PriceHistory,
    model: str = "garch",
    settings: GarchSettings | None = None,
    *,
    annualization: float = DEFAULT_ANNUALIZATION,
) -> GarchFit:
    """Fit one GARCH-type model to a history's log returns and derive its forward vols.

    Parameters
    ----------
    history
        Price history (rows already selected for the quality policy).
    model
        A key of :data:`~volbench.models.family.MODEL_REGISTRY`: ``"garch"`` GARCH(1,1), ``"gjr"``
        GJR-GARCH(1,1,1), ``"egarch"`` EGARCH(1,1), or a registered variant.
    settings
        Distribution, mean, horizons, seed, simulations and iteration cap
        (:class:`~volbench.settings.GarchSettings`; default: its defaults).
    annualization
        Bars per year.

    Returns
    -------
    GarchFit
        With ``warnings`` and an EWMA ``fallback`` when the fit cannot be used.

    Raises
    ------
    VolbenchError
        Bad settings or model, or fewer than 2 returns (no volatility of any kind can be computed).

    Notes
    -----
    ``arch.arch_model`` on 100 x log returns (the library's advice), ``rescale=False``, with the
    spec's ``arch`` arguments, fitted by maximum likelihood with robust (QMLE) standard errors.
    Forecasts: ``arch``'s analytic forecasts for models with a closed form (GARCH, GJR),
    E[s2_{t+h}] = V_L + p^(h-1) (s2_{t+1} - V_L) (Bollerslev 1986; docs/METHODS.md, "GARCH and the
    vol over an option's life"); for the others (EGARCH, Nelson 1991) ``arch``'s simulation
    forecast with ``simulations`` paths drawn by a seeded numpy Generator from the fitted
    innovation distribution. Both come from the volatility process's ``forecast`` (what
    ``ARCHModelResult.forecast`` calls; identical numbers, without its mean-path bookkeeping).
    Term structure vol(T) = sqrt(A mean_{h<=T} E[s2_{t+h}]) (docs/METHODS.md, "GARCH and the vol
    over an option's life").
    """
    spec = MODEL_REGISTRY[validate.model(model)]
    s = settings if settings is not None else GarchSettings(models=(spec.key,))
    if not isinstance(s, GarchSettings):
        raise VolbenchError(f"settings must be GarchSettings, got {type(s).__name__}")
    a = check_annualization(annualization)
    s.check_budget((spec.key,))
    r = history.log_returns()
    n = int(r.size)
    if n < 2:
        raise VolbenchError(f"{history.name}: {n} return{'s' if n != 1 else ''} (from {history.n} prices); "
                            f"a volatility needs at least 2 returns and a GARCH fit at least {MIN_RETURNS}")
    base = {"name": history.name, "model": spec.key, "dist": s.dist, "mean": s.mean,
            "annualization": a, "nobs": n, "as_of": history.last_date, "horizons": s.horizons}
    if float(np.std(r)) <= 1e-12:
        raise VolbenchError(f"{history.name}: returns do not vary (all {n} equal {r[0]:.3g}): there is no "
                            "volatility to model; check the price column")
    if n < MIN_RETURNS:
        why = (f"too few observations for a GARCH fit: {n} returns, at least {MIN_RETURNS} are needed "
               "(about a year of daily bars)")
        return _fallback(history, base, [why], [], None)
    data_notes = _outlier_note(history, r)
    y = SCALE * r
    am = arch_model(y, mean="Constant" if s.mean == "constant" else "Zero", dist=DIST_REGISTRY[s.dist].arch,
                    rescale=False, **spec.arch)
    options = None if s.max_iterations is None else {"maxiter": s.max_iterations}
    try:
        res = am.fit(disp="off", show_warning=False, options=options)
    except (ValueError, ArithmeticError, RuntimeError, np.linalg.LinAlgError) as exc:  # reported, never a crash
        return _fallback(history, base, [f"the optimizer failed ({type(exc).__name__}: {exc})"], data_notes, None)
    try:
        cov = res.param_cov
    except (np.linalg.LinAlgError, ValueError, ZeroDivisionError):
        cov = None
    params_y = res.params
    omega_lower = -np.inf if spec.log_variance else am.volatility.bounds(res.resid)[0][0]
    p, p_se, warn, notes = diagnose(spec, params_y.to_dict(), cov, convergence_flag=int(res.convergence_flag),
                                    optimizer_message=str(res.optimization_result.message),
                                    omega_lower=float(omega_lower), dist=s.dist)
    notes = data_notes + notes
    params, se = to_decimal(spec, params_y, cov)
    shift = n * math.log(SCALE)  # Jacobian of y = 100 r
    fit_info = {
        "fitted": True,
        "converged": int(res.convergence_flag) == 0,
        "params": params,
        "std_errors": se,
        "loglik": float(res.loglikelihood) + shift,
        "aic": float(res.aic) - 2 * shift,
        "bic": float(res.bic) - 2 * shift,
        "persistence": p,
        "persistence_se": p_se,
        "long_run_vol": _long_run_vol(spec, params_y, p, a),
        "half_life": term.half_life(p) if p < 1 - BOUND_TOL else float("nan"),
        "conditional_vol": pd.Series(np.asarray(res.conditional_volatility) / SCALE * math.sqrt(a),
                                     index=history.index[1:], name=spec.key),
    }
    lr = fit_info["long_run_vol"]
    if math.isfinite(lr) and lr > validate.ABSURD_VOL:
        warn.append(f"long-run vol {pct(lr)} is above 500 %: the fit is absurd for a volatility")
    if warn:
        return _fallback(history, base, warn, notes, fit_info)
    horizon = max(252, max(s.horizons))
    method = spec.forecast_method
    sims, seed_used = (None, None) if spec.closed_form else (s.simulations, s.seed)
    with np.errstate(over="ignore", invalid="ignore"):
        path = _variance_forecast(am, res.params.to_numpy(), horizon, method, s.simulations, s.seed) / SCALE**2
    if not (np.all(np.isfinite(path)) and np.all(path > 0)):
        warn.append("the model's variance forecast is not finite and positive at every horizon")
        return _fallback(history, base, warn, notes, fit_info)
    top = math.sqrt(float(np.max(path)) * a)
    if top > validate.ABSURD_VOL:
        warn.append(f"the forecast reaches a vol of {pct(top)}, above 500 %: the fit is absurd for a volatility")
        return _fallback(history, base, warn, notes, fit_info)
    path.setflags(write=False)
    source = f"{spec.label} {method} forecast" + (f" ({sims} paths, seed {seed_used})" if sims else "")
    return GarchFit(**base, **fit_info, term_structure=term.term_structure(path, s.horizons, a),
                    variance_path=path, forecast_method=method, simulations=sims, seed=seed_used,
                    warnings=(), notes=tuple(notes), forward_vol_source=source)


OUTLIER_Z = 10.0
"""Robust z-score above which the largest return gets a note (as the data-quality jump check)."""


def _outlier_note(history: PriceHistory, r: np.ndarray) -> list[str]:
    """A note on the most extreme return when it is more than :data:`OUTLIER_Z` robust s.d. out.

    Robust scale 1.4826 x median absolute deviation (common practice, no source).
    """
    med = float(np.median(r))
    scale = 1.4826 * float(np.median(np.abs(r - med)))
    if not scale > 0:
        return []
    z = np.abs(r - med) / scale
    i = int(np.argmax(z))
    if z[i] <= OUTLIER_Z:
        return []
    date = pd.Timestamp(history.dates[i + 1]).strftime("%Y-%m-%d")
    return [(f"the return on {date} ({math.expm1(r[i]):+.1%}) is {z[i]:.0f} robust standard deviations from "
            "the median: if it is an unadjusted split or a bad tick, fix the data (see 'volbench check'); "
            "one such return can dominate a GARCH fit")]


def _variance_forecast(am, params: np.ndarray, horizon: int, method: str, simulations: int, seed: int) -> np.ndarray:
    """Expected per-bar variance h = 1..horizon after the last bar, on arch's percent scale.

    Calls the volatility process's own ``forecast`` (the routine ``ARCHModelResult.forecast``
    uses, with the same residuals, backcast and variance bounds) and skips the mean-path
    bookkeeping we do not need; the numbers are identical. ``method="simulation"`` draws
    standardized innovations from the fitted distribution with a seeded numpy Generator.
    """
    k_mean, k_vol = am.num_params, am.volatility.num_params
    resid = am.resids(params[:k_mean])
    vol = am.volatility
    rng = None
    if method == "simulation":
        rng = type(am.distribution)(seed=np.random.default_rng(seed)).simulate(params[k_mean + k_vol:])
    fc = vol.forecast(params[k_mean:k_mean + k_vol], resid, vol.backcast(resid), vol.variance_bounds(resid, 2.0),
                      start=resid.size - 1, horizon=horizon, method=method, simulations=simulations, rng=rng)
    return np.asarray(fc.forecasts)[-1]


def _long_run_vol(spec: ModelSpec, params_y: pd.Series, p: float, annualization: float) -> float:
    """Annualized long-run vol in decimals (see :class:`GarchFit`); NaN when p >= 1."""
    if not p < 1 - BOUND_TOL:  # on or above the stationarity bound: no level to revert to
        return float("nan")
    if spec.log_variance:
        var_y = math.exp(params_y["omega"] / (1.0 - p))
    else:
        var_y = params_y["omega"] / (1.0 - p)
    return math.sqrt(var_y * annualization) / SCALE


def _fallback(history: PriceHistory, base: dict, warn: list[str], notes: list[str], fit_info: dict | None) -> GarchFit:
    """A result whose forward vol is a flat fallback, chosen by the cause of the failure.

    No volatility clustering found (alpha, or alpha + gamma, on its lower bound) and nothing worse:
    the series looks like constant volatility, so the close-to-close vol over the whole history
    (what that model implies). Otherwise (no convergence, persistence at 1, too little data, an
    absurd or non-finite forecast, ...): the latest EWMA vol.
    """
    causes = short_causes(warn)
    constant = any(c in NO_CLUSTERING for c in causes) and not any(c in EWMA_CAUSES for c in causes)
    if constant:
        name, vol = CONSTANT_FALLBACK, point_estimate(history, "close_to_close", annualization=base["annualization"]).vol
        method = "fallback_close_to_close"
    else:
        name, vol = FALLBACK, point_estimate(history, "ewma", annualization=base["annualization"]).vol
        method = "fallback_ewma"
    nan = float("nan")
    info = fit_info or {
        "fitted": False, "converged": False, "params": {}, "std_errors": {}, "loglik": nan, "aic": nan,
        "bic": nan, "persistence": nan, "persistence_se": nan, "long_run_vol": nan, "half_life": nan,
        "conditional_vol": pd.Series([], index=pd.DatetimeIndex([], name="date"), dtype=float,
                                     name=base["model"]),
    }
    warn = [*warn, f"forward vol falls back to {name}: {pct(vol)} annualized, flat over every horizon"]
    source = f"{name}, because: {', '.join(causes)}"
    return GarchFit(**base, **info, term_structure=term.flat_term_structure(vol, base["horizons"]),
                    variance_path=None, forecast_method=method, warnings=tuple(warn), notes=tuple(notes),
                    fallback=name, fallback_vol=vol, forward_vol_source=source)
