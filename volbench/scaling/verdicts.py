"""Plain-language verdicts on the four Brownian-motion properties behind Black-Scholes.

Each verdict has a status at the user's significance level alpha:

- ``rejected``: the test's p-value is below alpha;
- ``doubtful``: alpha <= p < 2 alpha, or (for normality and drift) the effect is large enough to
  matter for pricing even though it is not significant (thresholds below). For variance scaling a
  large but insignificant gap is described in the sentence but does not change the status: long
  horizons rest on few independent periods, and on a true Brownian motion a 10 % gap at 60 bars
  arises by chance about a quarter of the time;
- ``consistent``: neither.

"Consistent" means the data do not contradict the property, not that they prove it.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import pandas as pd

Status = Literal["consistent", "doubtful", "rejected"]
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


def status_for(p: float, alpha: float, large: bool = False) -> Status:
    """Status rule shared by all properties (module docstring)."""
    if p < alpha:
        return "rejected"
    if p < 2 * alpha or large:
        return "doubtful"
    return "consistent"


def fmt_p(p: float) -> str:
    return "p < 0.001" if p < 0.001 else f"p = {p:.3f}"


def variance_verdict(horizons: pd.DataFrame, cd_stat: float, cd_p: float, fit, alpha: float) -> Verdict:
    """Variance proportional to horizon: Chow-Denning joint test.

    The effect is read at the horizon whose vol departs most from sqrt-time scaling when that
    departure is large (>= :data:`LARGE_VOL_GAP`), else at the longest horizon.
    """
    gaps = (horizons["vol_ratio"] - 1.0).abs().to_numpy()
    large = bool(gaps.max() >= LARGE_VOL_GAP)
    row = horizons.iloc[int(gaps.argmax())] if large else horizons.iloc[-1]
    h, n_h = int(row["h"]), int(row["n_nonoverlap"])
    gap = float(row["variance_ratio"]) - 1.0
    status = status_for(cd_p, alpha)
    side = "below" if gap < 0 else "above"
    msg = f"{h}-bar variance is {abs(gap):.0%} {side} {h} x 1-bar variance"
    if status == "consistent" and not large:
        msg += (f" and the joint variance-ratio test does not reject (Chow-Denning {fmt_p(cd_p)}): "
                f"sqrt-time scaling of the 1-bar vol is supported up to {h} bars")
    else:
        how = ("returns mean-revert and sqrt-time scaling overstates" if gap < 0
               else "returns trend and sqrt-time scaling understates")
        msg += (f" ({row['annualized_vol']:.1%} measured vs {row['sqrt_time_vol']:.1%} sqrt-time scaled "
                "1-bar vol, annualized)")
        if cd_p < 2 * alpha:
            msg += f": {how} {h}-bar vol (Chow-Denning {fmt_p(cd_p)})"
        else:
            msg += (f", a gap that would matter for pricing but is within sampling noise (Chow-Denning "
                    f"{fmt_p(cd_p)}): if real, {how} {h}-bar vol")
    msg += (f"; log-log slope {fit.slope:.2f} ({fit.level:.0%} interval {fit.ci[0]:.2f} to {fit.ci[1]:.2f}, "
            f"Hurst {fit.hurst:.2f}). The {h}-bar figure rests on {n_h} non-overlapping periods"
            + ("; read it with caution." if n_h < FEW_PERIODS else "."))
    return Verdict("variance_proportional_to_horizon", status, cd_stat, cd_p, msg)


def normality_verdict(horizons: pd.DataFrame, alpha: float) -> Verdict:
    """Normal increments: Jarque-Bera on 1-bar returns; tails at the longest horizon for context."""
    one, last = horizons.iloc[0], horizons.iloc[-1]
    s, k, p = float(one["skew"]), float(one["excess_kurtosis"]), float(one["jarque_bera_p"])
    large = abs(k) >= LARGE_EXCESS_KURTOSIS or abs(s) >= LARGE_SKEW
    status = status_for(p, alpha, large)
    if status == "consistent":
        msg = (f"1-bar returns look normal (excess kurtosis {k:.1f}, skew {s:+.2f}, Jarque-Bera {fmt_p(p)}): "
               "no evidence against the lognormal prices the model assumes.")
    else:
        tails = ("fatter than normal: one flat vol underprices far out-of-the-money options relative to "
                 "at-the-money ones" if k > 0 else "thinner than normal: one flat vol overprices far "
                 "out-of-the-money options relative to at-the-money ones")
        h, kh = int(last["h"]), float(last["excess_kurtosis"])
        trend = ("tails thin out for longer-dated options" if abs(kh) < abs(k) / 2
                 else "the departure persists at longer horizons")
        msg = (f"1-bar returns have excess kurtosis {k:.1f} and skew {s:+.2f} (Jarque-Bera {fmt_p(p)}): tails "
               f"are {tails}; at {h} bars excess kurtosis is {kh:.1f} ({int(last['n_nonoverlap'])} "
               f"periods), so {trend}.")
    return Verdict("normal_increments", status, float(one["jarque_bera"]), p, msg)


def independence_verdict(ljung: pd.DataFrame, acf: pd.DataFrame, alpha: float) -> Verdict:
    """Independent increments: Ljung-Box on returns and squared returns, Bonferroni over all tests.

    The p-value is min(1, m x smallest p) over the m = 2 x (number of lags) Ljung-Box tests.
    """
    m = 2 * len(ljung)
    i_r, i_s = int(ljung["p_returns"].idxmin()), int(ljung["p_squared"].idxmin())
    p_r = min(1.0, m * float(ljung.loc[i_r, "p_returns"]))
    p_s = min(1.0, m * float(ljung.loc[i_s, "p_squared"]))
    if p_s <= p_r:
        stat, p = float(ljung.loc[i_s, "q_squared"]), p_s
    else:
        stat, p = float(ljung.loc[i_r, "q_returns"]), p_r
    status = status_for(p, alpha)
    lag_r, lag_s = int(ljung.loc[i_r, "lag"]), int(ljung.loc[i_s, "lag"])
    parts = []
    if p_s < 2 * alpha:
        verb = "are" if p_s < alpha else "may be"
        parts.append(f"Squared returns {verb} autocorrelated (Ljung-Box to lag {lag_s}, adjusted {fmt_p(p_s)}): "
                     "volatility clusters, so the vol over an option's life depends on today's level; lean on "
                     "recent data (EWMA or a GARCH forecast) rather than the long-sample average.")
    if p_r < 2 * alpha:
        a1 = float(acf["acf_returns"].iloc[0])
        verb = "are" if p_r < alpha else "may be"
        parts.append(f"Returns {verb} autocorrelated (lag-1 autocorrelation {a1:+.2f}; Ljung-Box to lag {lag_r}, "
                     f"adjusted {fmt_p(p_r)}): see the variance-ratio verdict for the effect on long-horizon vol.")
    elif parts:
        parts.append(f"Returns themselves are not autocorrelated (adjusted {fmt_p(p_r)}), so this does not "
                     "bend variance away from sqrt-time scaling.")
    if not parts:
        parts.append(f"Neither returns nor squared returns are autocorrelated (smallest adjusted {fmt_p(p)} over "
                     f"{m} Ljung-Box tests): no sign of volatility clustering, so a long-sample vol is a fair guide.")
    return Verdict("independent_increments", status, stat, p, " ".join(parts))


def drift_verdict(drift: dict, alpha: float) -> Verdict:
    """Negligible drift: t-test of the mean return; size read at the longest horizon."""
    last = drift["by_horizon"][-1]
    h, ratio, infl = last["h"], last["drift_to_vol"], last["vol_inflation"]
    p = drift["p_value"]
    status = status_for(p, alpha, ratio >= LARGE_DRIFT_TO_VOL)
    word = {"consistent": "negligible", "doubtful": "possibly not negligible", "rejected": "not negligible"}[status]
    msg = (f"Mean return {drift['mean_annualized']:+.1%} a year (t = {drift['t_stat']:.2f}, {fmt_p(p)}); "
           f"over {h} bars the drift is {ratio:.2f} of a {h}-bar standard deviation, {word}: a vol measured "
           f"around zero instead of the mean would be {infl:.1%} too high at that horizon (Black-Scholes "
           "itself prices with the risk-free rate, not this drift).")
    return Verdict("negligible_drift", status, float(drift["t_stat"]), float(p), msg)
