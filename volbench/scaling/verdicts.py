"""Plain-language verdicts on the four Brownian-motion properties behind Black-Scholes.

Each property has one test and one p-value. Its status at the user's significance level alpha is
decided by the tests alone (docs/METHODS.md, "Brownian-scaling check"):

- ``consistent``: p >= alpha: the test does not reject at the stated level;
- ``rejected``: the test rejects even after allowing for the four properties being tested together
  (Holm's step-down procedure at family level alpha; Holm 1979, Scandinavian J. of Statistics 6(2));
- ``doubtful``: p < alpha on its own, but not after that allowance.

So on a perfectly Brownian series each property is non-"consistent" with probability alpha (the
test's size), and some property is "rejected" with probability at most alpha. How large an effect
is, and whether it would matter for pricing, is said in the sentence, never in the status.
"Consistent" means the data do not contradict the property, not that they prove it.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Literal

import numpy as np
import pandas as pd

from volbench.format import pct

Status = Literal["consistent", "doubtful", "rejected"]
Table = pd.DataFrame | Mapping[str, np.ndarray]
"""A table of the check: a DataFrame, or a mapping of column name -> array (what the check
passes, before it wraps its tables in pandas once)."""


def _col(table: Table, name: str) -> np.ndarray:
    return np.asarray(table[name])
PROPERTIES = ("variance_proportional_to_horizon", "normal_increments", "independent_increments",
              "negligible_drift")

LARGE_VOL_GAP = 0.10
"""Relative gap between the h-bar vol and sqrt-time scaled 1-bar vol that matters for pricing."""
LARGE_EXCESS_KURTOSIS = 1.0
LARGE_SKEW = 0.5
LARGE_DRIFT_TO_VOL = 0.33
"""Drift over h bars, in h-bar standard deviations, above which a zero-mean vol is 5 % too high."""
FEW_PERIODS = 30
"""Fewer non-overlapping periods than this behind a horizon: say that the figure is fragile."""


@dataclass(frozen=True)
class Verdict:
    """Outcome for one property: status, the statistic and p-value behind it, and what it means."""

    property: str
    status: Status
    statistic: float
    p_value: float
    message: str

    def as_dict(self) -> dict:
        return {"property": self.property, "status": self.status, "statistic": self.statistic,
                "p_value": self.p_value, "message": self.message}


def family_statuses(p_values: list[float], alpha: float) -> list[Status]:
    """Status of each property from its p-value (module docstring): Holm at family level alpha.

    Notes
    -----
    Holm (1979): order the m p-values p(1) <= ... <= p(m); reject the hypotheses of p(1) .. p(j)
    where j is the last index with p(i) < alpha / (m - i + 1) for every i <= j. The chance that a
    family of true hypotheses sees any rejection is at most alpha, whatever their dependence.
    """
    m = len(p_values)
    order = sorted(range(m), key=lambda i: (math.isnan(p_values[i]), p_values[i]))
    holm = [False] * m
    for rank, i in enumerate(order):
        if not p_values[i] < alpha / (m - rank):
            break
        holm[i] = True
    return ["rejected" if holm[i] else ("doubtful" if p_values[i] < alpha else "consistent") for i in range(m)]


def status_for(p: float, alpha: float) -> Status:
    """Status of a single test judged alone: ``rejected`` when p < alpha, else ``consistent``."""
    return "rejected" if p < alpha else "consistent"


def _doubtful_note(status: Status, alpha: float) -> str:
    if status != "doubtful":
        return ""
    return (f" Doubtful: significant on its own at the {alpha:g} level, but not once the four properties "
            "are judged together (Holm).")


def independence_p(ljung: Table) -> tuple[float, float]:
    """Bonferroni-adjusted p-values (returns, squared returns): min(1, m x smallest p), m = 2 x lags."""
    p_r, p_s = _col(ljung, "p_returns"), _col(ljung, "p_squared")
    m = 2 * p_r.shape[0]
    return (min(1.0, m * float(p_r.min())), min(1.0, m * float(p_s.min())))


def fmt_p(p: float) -> str:
    return "p < 0.001" if p < 0.001 else f"p = {p:.3f}"


def variance_verdict(horizons: Table, cd_stat: float, cd_p: float, fit, alpha: float,
                     status: Status | None = None) -> Verdict:
    """Variance proportional to horizon: Chow-Denning joint test.

    The effect is read at the horizon whose vol departs most from sqrt-time scaling when that
    departure is large (>= :data:`LARGE_VOL_GAP`), else at the longest horizon.
    """
    gaps = np.abs(_col(horizons, "vol_ratio") - 1.0)
    large = bool(gaps.max() >= LARGE_VOL_GAP)
    i = int(gaps.argmax()) if large else gaps.shape[0] - 1
    h, n_h = int(_col(horizons, "h")[i]), int(_col(horizons, "n_nonoverlap")[i])
    gap = float(_col(horizons, "variance_ratio")[i]) - 1.0
    status = status or status_for(cd_p, alpha)
    side = "below" if gap < 0 else "above"
    msg = f"{h}-bar variance is {pct(abs(gap), 0)} {side} {h} x 1-bar variance"
    if status == "consistent" and not large:
        msg += (f" and the joint variance-ratio test does not reject (Chow-Denning {fmt_p(cd_p)}): "
                f"sqrt-time scaling of the 1-bar vol is supported up to {h} bars")
    else:
        how = ("returns mean-revert and sqrt-time scaling overstates" if gap < 0
               else "returns trend and sqrt-time scaling understates")
        msg += (f" ({pct(float(_col(horizons, 'annualized_vol')[i]), 1)} measured vs "
                f"{pct(float(_col(horizons, 'sqrt_time_vol')[i]), 1)} sqrt-time scaled 1-bar vol, annualized)")
        if status != "consistent":
            msg += f": {how} {h}-bar vol (Chow-Denning {fmt_p(cd_p)})"
        else:
            msg += (f", a gap that would matter for pricing but is within sampling noise (Chow-Denning "
                    f"{fmt_p(cd_p)}): if real, {how} {h}-bar vol")
    msg += (f"; log-log slope {fit.slope:.2f} ({pct(fit.level, 0)} interval {fit.ci[0]:.2f} to {fit.ci[1]:.2f}, "
            f"Hurst {fit.hurst:.2f}). The {h}-bar figure rests on {n_h} non-overlapping periods"
            + ("; read it with caution." if n_h < FEW_PERIODS else ".") + _doubtful_note(status, alpha))
    return Verdict("variance_proportional_to_horizon", status, cd_stat, cd_p, msg)


def normality_verdict(horizons: Table, alpha: float, status: Status | None = None) -> Verdict:
    """Normal increments: Jarque-Bera on 1-bar returns; tails at the longest horizon for context."""
    skew, kurt = _col(horizons, "skew"), _col(horizons, "excess_kurtosis")
    s, k, p = float(skew[0]), float(kurt[0]), float(_col(horizons, "jarque_bera_p")[0])
    large = abs(k) >= LARGE_EXCESS_KURTOSIS or abs(s) >= LARGE_SKEW
    status = status or status_for(p, alpha)
    if status == "consistent" and large:
        msg = (f"1-bar returns show excess kurtosis {k:.1f} and skew {s:+.2f}, a size that would matter for "
               f"pricing far from the money, but Jarque-Bera does not reject ({fmt_p(p)}): on this history the "
               "departure from normal is within sampling noise.")
    elif status == "consistent":
        msg = (f"1-bar returns look normal (excess kurtosis {k:.1f}, skew {s:+.2f}, Jarque-Bera {fmt_p(p)}): "
               "no evidence against the lognormal prices the model assumes.")
    else:
        tails = ("fatter than normal: one flat vol underprices far out-of-the-money options relative to "
                 "at-the-money ones" if k > 0 else "thinner than normal: one flat vol overprices far "
                 "out-of-the-money options relative to at-the-money ones")
        h, kh = int(_col(horizons, "h")[-1]), float(kurt[-1])
        trend = ("tails thin out for longer-dated options" if abs(kh) < abs(k) / 2
                 else "the departure persists at longer horizons")
        msg = (f"1-bar returns have excess kurtosis {k:.1f} and skew {s:+.2f} (Jarque-Bera {fmt_p(p)}): tails "
               f"are {tails}; at {h} bars excess kurtosis is {kh:.1f} ({int(_col(horizons, 'n_nonoverlap')[-1])} "
               f"periods), so {trend}.") + _doubtful_note(status, alpha)
    return Verdict("normal_increments", status, float(_col(horizons, "jarque_bera")[0]), p, msg)


def independence_verdict(ljung: Table, acf: Table, alpha: float,
                         status: Status | None = None) -> Verdict:
    """Independent increments: Ljung-Box on returns and squared returns, Bonferroni over all tests.

    The p-value is min(1, m x smallest p) over the m = 2 x (number of lags) Ljung-Box tests.
    """
    lags = _col(ljung, "lag")
    m = 2 * lags.shape[0]
    i_r, i_s = int(_col(ljung, "p_returns").argmin()), int(_col(ljung, "p_squared").argmin())
    p_r, p_s = independence_p(ljung)
    if p_s <= p_r:
        stat, p = float(_col(ljung, "q_squared")[i_s]), p_s
    else:
        stat, p = float(_col(ljung, "q_returns")[i_r]), p_r
    status = status or status_for(p, alpha)
    lag_r, lag_s = int(lags[i_r]), int(lags[i_s])
    parts = []
    if p_s < alpha:
        verb = "are" if status == "rejected" else "may be"
        parts.append(f"Squared returns {verb} autocorrelated (Ljung-Box to lag {lag_s}, adjusted {fmt_p(p_s)}): "
                     "volatility clusters, so the vol over an option's life depends on today's level; lean on "
                     "recent data (EWMA or a GARCH forecast) rather than the long-sample average.")
    if p_r < alpha:
        a1 = float(_col(acf, "acf_returns")[0])
        verb = "are" if status == "rejected" else "may be"
        parts.append(f"Returns {verb} autocorrelated (lag-1 autocorrelation {a1:+.2f}; Ljung-Box to lag {lag_r}, "
                     f"adjusted {fmt_p(p_r)}): see the variance-ratio verdict for the effect on long-horizon vol.")
    elif parts:
        parts.append(f"Returns themselves are not autocorrelated (adjusted {fmt_p(p_r)}), so this does not "
                     "bend variance away from sqrt-time scaling.")
    if not parts:
        parts.append(f"Neither returns nor squared returns are autocorrelated (smallest adjusted {fmt_p(p)} over "
                     f"{m} Ljung-Box tests): no sign of volatility clustering, so a long-sample vol is a fair guide.")
    return Verdict("independent_increments", status, stat, p, " ".join(parts) + _doubtful_note(status, alpha))


def drift_verdict(drift: dict, alpha: float, status: Status | None = None) -> Verdict:
    """Negligible drift: t-test of the mean return; size read at the longest horizon."""
    last = drift["by_horizon"][-1]
    h, ratio, infl = last["h"], last["drift_to_vol"], last["vol_inflation"]
    p = drift["p_value"]
    status = status or status_for(p, alpha)
    word = {"consistent": "indistinguishable from zero", "doubtful": "possibly not negligible",
            "rejected": "not negligible"}[status]
    size = (" (a size that would matter, but within sampling noise)"
            if status == "consistent" and ratio >= LARGE_DRIFT_TO_VOL else "")
    msg = (f"Mean return {'+' if drift['mean_annualized'] >= 0 else ''}{pct(drift['mean_annualized'], 1)} a year (t = {drift['t_stat']:.2f}, {fmt_p(p)}): {word}"
           f"{size}; over {h} bars the drift is {ratio:.2f} of a {h}-bar standard deviation, so a vol measured "
           f"around zero instead of the mean would be {pct(infl, 1)} too high at that horizon (Black-Scholes "
           "itself prices with the risk-free rate, not this drift)." + _doubtful_note(status, alpha))
    return Verdict("negligible_drift", status, float(drift["t_stat"]), float(p), msg)
