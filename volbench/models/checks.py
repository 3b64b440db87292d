"""Checks on a GARCH-family fit, and its parameters converted from percent to decimal units.

:func:`diagnose` decides whether a fit can be used for the forward vol (``warnings``, each of which
sends the result to the EWMA fallback) and what a user should know about it (``notes``).
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping

import numpy as np
import pandas as pd
from scipy import stats

from volbench.models.family import DIST_REGISTRY, MODEL_REGISTRY, ModelSpec

SCALE = 100.0
"""Fits run on 100 x log returns (percent), as the ``arch`` documentation advises."""
_LN_SCALE2 = math.log(SCALE**2)
BOUND_TOL = 1e-4
"""A parameter within this distance of a bound (or persistence within it of 1) is on the bound."""
NEAR_UNIT_Z = 1.645
"""One-sided 5% normal quantile: persistence closer than this many standard errors to 1 gets a note."""


def _spec(model: str | ModelSpec) -> ModelSpec:
    return model if isinstance(model, ModelSpec) else MODEL_REGISTRY[model]


SHORT_CAUSES: tuple[tuple[str, str], ...] = (
    ("did not converge", "no convergence"),
    ("optimizer failed", "the optimizer failed"),
    ("not finite numbers", "estimates not finite"),
    ("standard errors could not be computed", "standard errors not computable"),
    ("is at or above 1", "persistence at or above 1"),
    ("alpha[1] + gamma[1] = ", "alpha + gamma on its bound"),
    ("alpha[1] = ", "alpha on its bound"),
    ("the fit finds no volatility clustering", "shock response on its bound"),
    ("beta[1] = ", "beta on its bound"),
    ("omega = ", "omega on its bound"),
    ("nu = ", "nu on its bound"),
    ("too few observations", "too little data"),
    ("above 500 %", "absurd vol (above 500 %)"),
    ("variance forecast is not finite", "forecast not finite"),
)
"""Warning text -> the short cause named in a fallback's source ("EWMA (lambda 0.94), because: ...")."""
NO_CLUSTERING = ("alpha on its bound", "alpha + gamma on its bound", "shock response on its bound")
"""Causes meaning the fit found no volatility clustering: the constant-vol fallback applies."""
EWMA_CAUSES = ("no convergence", "the optimizer failed", "estimates not finite", "persistence at or above 1",
               "too little data", "absurd vol (above 500 %)", "forecast not finite")
"""Causes that send the forward vol to EWMA even when no clustering was also found."""


def short_causes(warnings) -> list[str]:
    """Short cause of each warning from :func:`diagnose` or the fit (unknown ones kept whole)."""
    out = []
    for w in warnings:
        short = next((short for pattern, short in SHORT_CAUSES if pattern in w), w)
        counts = re.search(r"(\d+) returns, at least (\d+) are needed", w)
        if short == "too little data" and counts:
            short = f"too little data ({counts[1]} returns, {counts[2]} needed)"
        out.append(short)
    return list(dict.fromkeys(out))


def _block(cov: pd.DataFrame, keys: list[str]) -> np.ndarray:
    """The covariance sub-matrix of ``keys`` (positional numpy indexing; label ``.loc`` is slow)."""
    pos = [cov.columns.get_loc(k) for k in keys]
    return cov.to_numpy()[np.ix_(pos, pos)]


def persistence_of(model: str | ModelSpec, params: Mapping[str, float],
                   cov: pd.DataFrame | None = None) -> tuple[float, float]:
    """Persistence sum w_k theta_k (the spec's weights) and its delta-method standard error
    (NaN when the covariance is unusable).

    Notes
    -----
    GARCH: alpha + beta (Bollerslev 1986). GJR: alpha + gamma/2 + beta, using E[1(e<0) e^2] =
    s2/2 for a symmetric innovation density (Glosten, Jagannathan & Runkle 1993). EGARCH: beta,
    the AR(1) coefficient of log variance (Nelson 1991).
    """
    w = _spec(model).persistence
    p = float(sum(c * params[k] for k, c in w.items()))
    se = float("nan")
    if cov is not None:
        keys = list(w)
        vec = np.array([w[k] for k in keys])
        var = float(vec @ _block(cov, keys) @ vec)
        if math.isfinite(var) and var >= 0:
            se = math.sqrt(var)
    return p, se


def _clustering_p_value(spec: ModelSpec, params: Mapping[str, float], cov: pd.DataFrame | None) -> float:
    """p-value of the Wald test that the shock-response parameters are all zero (NaN if not computable).

    Notes
    -----
    W = theta' Sigma^-1 theta ~ chi-square(k) under theta = 0 (Wald test, common practice); for
    GARCH alpha sits on its boundary under the null, so the test is approximate (conservative).
    """
    if cov is None:
        return float("nan")
    keys = list(spec.response)
    theta = np.array([params[k] for k in keys])
    sigma = _block(cov, keys)
    try:
        w = float(theta @ np.linalg.solve(sigma, theta))
    except np.linalg.LinAlgError:
        return float("nan")
    return float(stats.chi2.sf(w, len(keys))) if math.isfinite(w) and w >= 0 else float("nan")


def diagnose(
    model: str | ModelSpec,
    params: Mapping[str, float],
    cov: pd.DataFrame | None,
    *,
    convergence_flag: int,
    optimizer_message: str,
    omega_lower: float = 0.0,
    dist: str | None = None,
) -> tuple[float, float, list[str], list[str]]:
    """Checks on a fit: ``(persistence, persistence_se, warnings, notes)``.

    ``params`` and ``cov`` are on ``arch``'s scale (percent returns). Warnings (each one means the
    forward vol falls back to EWMA): optimizer not converged; standard errors not computable;
    persistence >= 1 - :data:`BOUND_TOL`; alpha (GARCH) or alpha + gamma (GJR) or beta on the
    lower bound 0; omega on its lower bound; Student-t nu on its lower bound. Notes: GJR alpha on 0
    with gamma carrying the response; nu on its upper bound; and, for fits without warnings, no
    significant clustering (Wald test, p > 0.05) or else persistence not significantly below 1
    (z = (1 - p) / se(p) < :data:`NEAR_UNIT_Z`); the EGARCH long-run approximation. Which terms
    are checked comes from the model's :class:`~volbench.models.family.ModelSpec`.
    """
    spec = _spec(model)
    warn: list[str] = []
    notes: list[str] = []
    if any(not math.isfinite(v) for v in params.values()):
        warn.append("some estimates are not finite numbers: the fit failed")
        return float("nan"), float("nan"), warn, notes
    if convergence_flag != 0:
        warn.append(f"the optimizer did not converge (arch flag {convergence_flag}: {optimizer_message.strip()}); "
                    "the estimates are not a maximum of the likelihood")
    if cov is None or not np.all(np.isfinite(np.diag(cov.to_numpy()))) or np.any(np.diag(cov.to_numpy()) < 0):
        warn.append("standard errors could not be computed (the information matrix is singular or not "
                    "positive definite): the fit sits at a degenerate point")
        cov = None
    p, p_se = persistence_of(spec, params, cov)
    tol = BOUND_TOL
    clustering_p = _clustering_p_value(spec, params, cov)
    if p >= 1 - tol:
        warn.append(f"persistence {p:.4f} is at or above 1 (within {tol:g}): shocks never die out, so there is "
                    "no long-run vol or half-life to revert to")
    beta = params["beta[1]"]
    if beta <= tol:
        warn.append(f"beta[1] = {beta:.2g} is on its lower bound 0: variance does not carry over from bar to "
                    "bar, so the GARCH term is not identified and its standard errors are unreliable")
    if spec.response_bounded:
        response = sum(params[k] for k in spec.response)
        if response <= tol:
            warn.append(f"{spec.response_name} = {response:.2g} is on its lower bound 0: the fit finds no volatility "
                        "clustering, beta[1] is not identified and standard errors are unreliable; a "
                        "constant-vol estimator may suit this series better")
        elif spec.asymmetry is not None and params["alpha[1]"] <= tol:
            alpha = params["alpha[1]"]
            notes.append(f"alpha[1] = {alpha:.2g} is on its lower bound 0: only falling returns raise the "
                         f"variance ({spec.asymmetry} carries the whole response); the s.e. of alpha[1] is "
                         "unreliable")
    if not spec.log_variance and params["omega"] <= 10 * omega_lower:
        warn.append(f"omega = {params['omega']:.3g} (percent scale) is on its lower bound: the long-run "
                    "variance is pinned near zero")
    for name, (lower, upper) in _shape_bounds(params, dist).items():
        value = params[name]
        if value <= lower + tol:
            warn.append(f"{name} = {value:.4g} is on its lower bound {lower}: the innovation variance is "
                        "barely finite, the fit is degenerate")
        elif value >= upper - 1e-2:
            notes.append(f"{name} = {value:.4g} is on its upper bound {upper:g}: tails look normal; the "
                         "normal distribution fits as well with one parameter fewer")
    # the two notes below concern usable fits; when there are warnings, those say what is wrong
    if not warn and clustering_p > 0.05:
        names = " and ".join(spec.response)
        notes.append(f"no significant volatility clustering (Wald test of {names} = 0: p = {clustering_p:.2f}): "
                     "the series looks like constant volatility, persistence and half-life are poorly "
                     "determined, and the term structure is close to flat at the long-run vol")
    elif not warn and math.isfinite(p_se) and p_se > 0 and (1 - p) / p_se < NEAR_UNIT_Z:
        notes.append(f"persistence {p:.4f} is not significantly below 1 (z = {(1 - p) / p_se:.2f} < "
                     f"{NEAR_UNIT_Z}, one-sided 5%): the long-run vol and half-life are poorly determined, "
                     "and forward vols at long horizons lean on them")
    if spec.log_variance:
        notes.append(f"long-run vol for {spec.short} is exp(omega / (1 - beta)) annualized: the level log "
                     "variance reverts to (a geometric mean, below the average variance)")
    return p, p_se, warn, notes


def _shape_bounds(params: Mapping[str, float], dist: str | None) -> dict[str, tuple[float, float]]:
    """Bounds of the innovation distribution's shape parameters present in ``params`` (those of
    ``dist`` when given, else of the first registered distribution that has the parameter)."""
    specs = [DIST_REGISTRY[dist]] if dist is not None else list(DIST_REGISTRY.values())
    out: dict[str, tuple[float, float]] = {}
    for spec in specs:
        for name, bounds in spec.shape_bounds.items():
            if name in params:
                out.setdefault(name, bounds)
    return out


def to_decimal(model: str | ModelSpec, params: pd.Series, cov: pd.DataFrame | None) -> tuple[dict, dict]:
    """Parameters and standard errors from ``arch``'s percent scale to decimal return units.

    Notes
    -----
    With y = 100 r: mu_r = mu_y / 100; GARCH/GJR omega_r = omega_y / 100^2. For EGARCH
    ln s2_r = ln s2_y - ln 100^2, so omega_r = omega_y - (1 - beta) ln 100^2 and
    Var(omega_r) = Var(omega_y) + (ln 100^2)^2 Var(beta) + 2 ln 100^2 Cov(omega_y, beta) (delta method;
    with several autoregressive terms, beta is their persistence-weighted sum). Other parameters are
    scale-free.
    """
    spec = _spec(model)
    names = list(params.index)
    p = {k: float(params[k]) for k in names}
    if cov is None:
        se = {k: float("nan") for k in names}
    else:
        d = np.diag(cov.to_numpy())
        se = {k: (math.sqrt(v) if math.isfinite(v) and v >= 0 else float("nan")) for k, v in zip(names, d)}
    if "mu" in p:
        p["mu"] /= SCALE
        se["mu"] /= SCALE
    if spec.log_variance:
        ar = spec.persistence
        p["omega"] = p["omega"] - (1.0 - sum(w * p[k] for k, w in ar.items())) * _LN_SCALE2
        if cov is not None:
            keys = ["omega", *ar]
            g = np.array([1.0, *(w * _LN_SCALE2 for w in ar.values())])
            v = float(g @ _block(cov, keys) @ g)
            se["omega"] = math.sqrt(v) if math.isfinite(v) and v >= 0 else float("nan")
    else:
        p["omega"] /= SCALE**2
        se["omega"] /= SCALE**2
    return p, se
