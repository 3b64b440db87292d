"""The continuity check: are the price paths continuous, or do they jump?

With intraday bars: the ratio jump test of each day's realized variance against its bipower
variation, with tri-power quarticity (Barndorff-Nielsen & Shephard 2006; Huang & Tauchen 2005).
With daily bars only: a jump screen on daily returns (Lee & Mykland 2008), labelled low-power.
Both end in a verdict on the property ``continuous_paths``, built like the scaling check's verdicts
(:mod:`volbench.scaling.verdicts`) so it can join that list.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field
from typing import Literal

import numpy as np
import pandas as pd
from scipy import stats

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.intraday.measures import MU1, RealizedMeasures
from volbench.scaling.verdicts import Verdict, fmt_p, status_for
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization

PROPERTY = "continuous_paths"
JUMP_ALPHA = 0.01
"""Default level of the per-day jump list."""
THETA = (np.pi / 2) ** 2 + np.pi - 5
"""Asymptotic variance factor of the ratio statistic (Barndorff-Nielsen & Shephard 2006)."""
MIN_TEST_RETURNS = 20
"""Days with fewer intraday returns are not tested."""
RELIABLE_RETURNS = 78
"""Below about this many returns a day the ratio test's size is less reliable (Huang & Tauchen 2005)."""
LM_WINDOW_DAILY = 16
"""Lee-Mykland local-volatility window for daily returns, about sqrt(252) (Lee & Mykland 2008)."""

Method = Literal["ratio_test", "lee_mykland"]


@dataclass(frozen=True, eq=False)
class ContinuityCheck:
    """Outcome of the continuity check for one series.

    Attributes
    ----------
    name
        Series name.
    method, label, low_power
        ``"ratio_test"`` (intraday) or ``"lee_mykland"`` (daily returns, low power), and its label.
    alpha
        Level of the per-day jump list.
    tests
        One row per day (or daily return) tested: ``date``, ``z``, ``p_value``, ``jump``; the ratio
        test adds ``n_returns``, ``rv``, ``bv``, ``ratio`` (RJ).
    jump_share
        Share of total variance carried by the listed jumps.
    expected_false_alarms, family_false_alarm_rate
        How many jump days chance alone would list, and the chance of at least one, over the days
        tested.
    statistic, family_p_value
        Largest statistic and the probability of one that large somewhere among the days tested
        under continuous paths.
    verdict
        :class:`~volbench.scaling.verdicts.Verdict` with property ``continuous_paths``.
    notes
        Plain sentences about choices made on this data.
    """

    name: str
    method: Method
    label: str
    low_power: bool
    alpha: float
    tests: pd.DataFrame
    jump_share: float
    expected_false_alarms: float
    family_false_alarm_rate: float
    statistic: float
    family_p_value: float
    verdict: Verdict
    notes: tuple[str, ...] = field(default=())

    @property
    def days_tested(self) -> int:
        return len(self.tests)

    @property
    def jump_days(self) -> pd.DataFrame:
        """Rows of :attr:`tests` listed as jumps."""
        return self.tests[self.tests["jump"]]

    def as_dict(self) -> dict:
        return {
            "method": self.method,
            "label": self.label,
            "low_power": self.low_power,
            "alpha": self.alpha,
            "days_tested": self.days_tested,
            "jump_days": [{"date": ts.strftime("%Y-%m-%d"), "z": float(z), "p_value": float(p)}
                          for ts, z, p in zip(self.jump_days["date"], self.jump_days["z"], self.jump_days["p_value"])],
            "jump_share": self.jump_share,
            "expected_false_alarms": self.expected_false_alarms,
            "family_false_alarm_rate": self.family_false_alarm_rate,
            "statistic": self.statistic,
            "family_p_value": self.family_p_value,
            "verdict": self.verdict.as_dict(),
            "notes": list(self.notes),
        }


def check_level(alpha: float, what: str = "jump level") -> float:
    try:
        a = float(alpha)
    except (TypeError, ValueError):
        raise VolbenchError(f"{what} must be a probability between 0 and 0.5, got {alpha!r}") from None
    if not 0.0 < a < 0.5:
        raise VolbenchError(f"{what} must be a probability between 0 and 0.5 (e.g. 0.01), got {alpha!r}")
    return a


def ratio_jump_statistics(rv: np.ndarray, bv: np.ndarray, tq: np.ndarray, m: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Ratio statistic RJ = (RV - BV) / RV and its z, one-sided, N(0, 1) without jumps.

    Notes
    -----
    z = RJ / sqrt(theta (1/M) max(1, TQ / BV^2)), theta = (pi/2)^2 + pi - 5 (Barndorff-Nielsen &
    Shephard 2006, J. Financial Econometrics 4(1); Huang & Tauchen 2005, J. Financial
    Econometrics 3(4), who found this max-adjusted ratio form the best sized in simulations).
    """
    rj = (rv - bv) / rv
    z = rj / np.sqrt(THETA / m * np.maximum(1.0, tq / bv**2))
    return rj, z


def _sidak(p_min: float, n: int) -> float:
    """1 - (1 - p_min)^n, computed without cancellation."""
    return float(-np.expm1(n * np.log1p(-min(p_min, 1.0 - 1e-16))))


def continuity_check(
    measures: RealizedMeasures,
    *,
    alpha: float = JUMP_ALPHA,
    verdict_alpha: float = 0.05,
    annualization: float = DEFAULT_ANNUALIZATION,
) -> ContinuityCheck:
    """Ratio jump test on every day with :data:`MIN_TEST_RETURNS` intraday returns or more.

    Parameters
    ----------
    measures
        Per-day realized measures.
    alpha
        Level of the per-day jump list (default 1 %).
    verdict_alpha
        Significance level of the verdict, as for the scaling check's verdicts.
    annualization
        Trading days a year (for the vols quoted in the verdict's sentence).

    Returns
    -------
    ContinuityCheck

    Raises
    ------
    VolbenchError
        No day with enough returns, or a bad level.

    Notes
    -----
    Per day: z from :func:`ratio_jump_statistics`, p = 1 - Phi(z), a jump day when p < alpha.
    Jump share = sum over jump days of (RV - BV) / (sum of RV + sum of squared overnight returns)
    (the significant jump component of Andersen, Bollerslev & Diebold 2007, REStat 89(4), from
    memory). Over N days tested, chance alone lists alpha N days and at least one with probability
    1 - (1 - alpha)^N. The verdict reads the largest z: family p = 1 - (1 - p_min)^N (Sidak; exact
    for independent days), status by the shared single-test rule (``rejected`` when p <
    verdict_alpha, else ``consistent``); the jump share is described in the sentence, not the status
    (docs/METHODS.md, Brownian-scaling check).
    """
    a_list = check_level(alpha)
    a_verdict = check_level(verdict_alpha, "verdict significance level")
    ann = check_annualization(annualization)
    d = measures.daily
    ok = (d["n_returns"] >= MIN_TEST_RETURNS) & (d["rv"] > 0) & (d["bv"] > 0) & d["tq"].notna()
    if not ok.any():
        raise VolbenchError(f"{measures.name}: no day has {MIN_TEST_RETURNS} intraday returns or more, so the "
                            "jump test cannot run; sample more often or load a finer file")
    t = d[ok]
    rj, z = ratio_jump_statistics(*(t[c].to_numpy(dtype=float) for c in ("rv", "bv", "tq", "n_returns")))
    p = stats.norm.sf(z)
    jump = p < a_list
    tests = pd.DataFrame({"date": t.index, "n_returns": t["n_returns"].to_numpy(), "rv": t["rv"].to_numpy(),
                          "bv": t["bv"].to_numpy(), "ratio": rj, "z": z, "p_value": p, "jump": jump})
    total = float(d["rv"].sum() + np.nansum(d["overnight"].to_numpy() ** 2))
    share = float(np.sum(np.maximum(tests["rv"] - tests["bv"], 0.0)[jump]) / total) if total > 0 else 0.0
    n = len(tests)
    i = int(np.argmax(z))
    fam_p = _sidak(float(p[i]), n)
    notes = []
    if int(ok.sum()) < len(d):
        notes.append(f"{len(d) - int(ok.sum())} day(s) with fewer than {MIN_TEST_RETURNS} intraday returns not tested")
    med = int(np.median(tests["n_returns"]))
    if med < RELIABLE_RETURNS:
        notes.append(f"a median of {med} returns a day is fewer than the about {RELIABLE_RETURNS} the ratio test "
                     "needs for its stated size: read its p-values as approximate")
    rv_vol = float(np.sqrt(ann * measures.whole_day("rv").mean()))
    bv_vol = float(np.sqrt(ann * measures.whole_day("bv").mean()))
    verdict = _intraday_verdict(n, int(jump.sum()), a_list, float(z[i]), fam_p, share, rv_vol, bv_vol, a_verdict)
    return ContinuityCheck(
        name=measures.name, method="ratio_test",
        label="ratio jump test on intraday returns (Barndorff-Nielsen & Shephard; Huang & Tauchen)",
        low_power=False, alpha=a_list, tests=tests, jump_share=share, expected_false_alarms=a_list * n,
        family_false_alarm_rate=_sidak(a_list, n), statistic=float(z[i]), family_p_value=fam_p,
        verdict=verdict, notes=tuple(notes),
    )


def _intraday_verdict(n: int, k: int, a: float, zmax: float, p: float, share: float, rv_vol: float,
                      bv_vol: float, a_verdict: float) -> Verdict:
    status = status_for(p, a_verdict)
    counts = (f"{k} of {n} days show a jump at the {a:.0%} level (about {a * n:.1f} expected by chance; "
              f"the chance of at least one false alarm over {n} days is {_sidak(a, n):.0%})")
    if status == "consistent":
        msg = (f"{counts}; the largest ratio statistic, z = {zmax:.1f}, is within chance (family {fmt_p(p)}). "
               f"The paths look continuous: one vol from realized variance ({rv_vol:.1%}) serves every strike as "
               f"far as jumps go (bipower variation, the jump-free part, gives {bv_vol:.1%}).")
        return Verdict(PROPERTY, status, zmax, p, msg)
    verb = "are not" if status == "rejected" else "may not be"
    msg = (f"{counts}; the largest has z = {zmax:.1f} (family {fmt_p(p)}) and the listed jumps carry "
           f"{share:.1%} of total variance. Paths {verb} continuous: one Black-Scholes vol cannot price every "
           f"strike. For at-the-money options the diffusive vol from bipower variation ({bv_vol:.1%}) is the "
           f"better input than realized variance ({rv_vol:.1%}), which counts the jumps; far out-of-the-money "
           "options need more than one vol (a jump model or a volatility skew).")
    return Verdict(PROPERTY, status, zmax, p, msg)


LM_NULL_REPS = 2000
"""Simulated jump-free samples behind the daily screen's p-values."""
LM_NULL_SEED = 20261212
"""Fixed seed: the same file always gives the same p-values."""


def lee_mykland_statistics(r: np.ndarray, window: int) -> tuple[np.ndarray, np.ndarray]:
    """Return positions tested and L_i = r_i / s_i along the last axis of ``r``.

    s_i^2 = (1/(K-2)) sum_{j=i-K+2}^{i-1} |r_j| |r_{j-1}|: bipower variance of the K - 1 returns
    before r_i, r_i itself excluded (Lee & Mykland 2008, Review of Financial Studies 21(6)). O(n)
    by cumulative sums; positions i >= K - 1.
    """
    k = int(window)
    n = r.shape[-1]
    a = np.abs(r)
    q = a[..., 1:] * a[..., :-1]  # q[m] = |r_{m+1}| |r_m|
    cq = np.concatenate((np.zeros(q.shape[:-1] + (1,)), np.cumsum(q, axis=-1)), axis=-1)
    i = np.arange(k - 1, n)
    s2 = (cq[..., k - 2:n - 1] - cq[..., 0:n - k + 1]) / (k - 2)  # slices: cq[i - 1] - cq[i - k + 1]
    with np.errstate(divide="ignore", invalid="ignore"):
        return i, r[..., k - 1:] / np.sqrt(s2)


@functools.lru_cache(maxsize=32)
def lee_mykland_null(n_returns: int, window: int, reps: int = LM_NULL_REPS, seed: int = LM_NULL_SEED) -> np.ndarray:
    """Sorted max |L| over ``n_returns`` i.i.d. normal returns, in ``reps`` seeded jump-free samples.

    L is scale-free, so under constant volatility its distribution depends only on n and K. Cached
    per (n, K, reps, seed) (read-only array): the scaling check, the survey and ``volbench realized``
    simulate it once per length.
    """
    rng = np.random.default_rng(seed)
    out = np.empty(reps)
    chunk = max(1, min(reps, 1_000_000 // max(n_returns, 1)))  # blocks of ~8 MB: about 3x faster than 32 MB
    for s in range(0, reps, chunk):  # loops over blocks of samples, not over bars
        m = min(chunk, reps - s)
        _, lstat = lee_mykland_statistics(rng.standard_normal((m, n_returns)), window)
        out[s:s + m] = np.abs(lstat).max(axis=1)
    out.sort()
    out.flags.writeable = False
    return out


def lee_mykland_p(abs_l: np.ndarray, n_tested: int, window: int) -> np.ndarray:
    """Family-wise p-values of |L| values among ``n_tested`` returns with window K, from the simulated
    null of :func:`lee_mykland_null`: p = (1 + #{null max >= |L|}) / (reps + 1). Vectorised."""
    null = lee_mykland_null(int(n_tested), int(window))
    exceed = null.size - np.searchsorted(null, abs_l, side="left")
    return (1.0 + exceed) / (null.size + 1.0)


def lee_mykland_screen(
    history: PriceHistory,
    *,
    alpha: float = JUMP_ALPHA,
    window: int = LM_WINDOW_DAILY,
    verdict_alpha: float = 0.05,
) -> ContinuityCheck:
    """Jump screen on daily close-to-close returns (low power; for files without intraday bars).

    Parameters
    ----------
    history
        Daily price history.
    alpha
        Level of the list: the chance that jump-free returns get any return listed at all.
    window
        K: local volatility from the K - 1 returns before each return tested (default 16).
    verdict_alpha
        Significance level of the verdict.

    Raises
    ------
    VolbenchError
        Fewer than K + 10 returns, or bad levels.

    Notes
    -----
    Statistic of Lee & Mykland (2008): L_i = r_i / s_i with the bipower local variance of
    :func:`lee_mykland_statistics`. Their Gumbel limit for max |L_i| treats s_i as exact; with
    K = 16 daily returns it is not, and the limit lists jumps in jump-free data far too often (63 %
    of samples of 1,500 normal returns at a nominal 1 %, measured by simulation). So each p-value
    is read from the simulated distribution of max |L| over the same number of jump-free returns
    and the same K (:func:`lee_mykland_null`, 2,000 seeded samples): p_i = (1 + #{max >= |L_i|}) /
    (2,001), a family-wise p-value, and listing p_i < alpha keeps the chance of any false listing at
    about alpha under constant volatility. ``z`` reports sqrt(2/pi) L_i, the return in local
    standard deviations. Daily returns cannot tell a jump from a volatile day, so only very large
    moves register: the result is labelled low-power.
    """
    a_list = check_level(alpha)
    a_verdict = check_level(verdict_alpha, "verdict significance level")
    if isinstance(window, bool) or int(window) != window or window < 4:
        raise VolbenchError(f"jump-screen window must be a whole number of returns >= 4, got {window!r}")
    k = int(window)
    r = history.log_returns()
    n_r = r.shape[0]
    if n_r < k + 10:
        raise VolbenchError(f"{history.name}: the daily jump screen needs at least {k + 10} returns, has {n_r}")
    i, lstat = lee_mykland_statistics(r, k)
    ok = np.isfinite(lstat)
    i, lstat = i[ok], lstat[ok]
    p = lee_mykland_p(np.abs(lstat), i.size, k)
    jump = p < a_list
    tests = pd.DataFrame({"date": pd.DatetimeIndex(history.dates[1:][i]), "z": MU1 * lstat, "p_value": p,
                          "jump": jump})
    share = float(np.sum(r[i][jump] ** 2) / np.sum(r**2)) if np.any(r != 0) else 0.0
    j = int(np.argmax(np.abs(lstat)))
    notes = [(f"daily returns only: local volatility from the {k - 1} returns before each one; a daily return "
              "cannot tell a jump from a volatile day, so this screen catches only very large moves")]
    if i.size < n_r - (k - 1):
        notes.append(f"{n_r - (k - 1) - i.size} return(s) with zero local volatility (flat prices) not tested")
    verdict = _daily_verdict(i.size, int(jump.sum()), float(p[j]), float(MU1 * lstat[j]), tests["date"].iloc[j],
                             share, a_list, a_verdict)
    return ContinuityCheck(
        name=history.name, method="lee_mykland", label="jump screen on daily returns (Lee & Mykland), low power",
        low_power=True, alpha=a_list, tests=tests, jump_share=share, expected_false_alarms=a_list,
        family_false_alarm_rate=a_list, statistic=float(np.abs(lstat[j])), family_p_value=float(p[j]),
        verdict=verdict, notes=tuple(notes),
    )


def _daily_verdict(n: int, k: int, p: float, z: float, date, share: float, a_list: float,
                   a_verdict: float) -> Verdict:
    status = status_for(p, a_verdict)
    head = ("Screen on daily returns only (Lee-Mykland, low power: a daily return cannot tell a jump from a "
            "volatile day; load intraday bars for a real test). ")
    when = pd.Timestamp(date).strftime("%Y-%m-%d")
    largest = f"{abs(z):.1f} local standard deviations on {when}, {fmt_p(p)} over {n} returns"
    if k:
        found = (f"{k} daily return(s) listed as jumps at the {a_list:.0%} level (largest {largest}); they carry "
                 f"{share:.0%} of the squared returns")
    else:
        found = f"No daily return is listed as a jump at the {a_list:.0%} level (largest {largest})"
    if status == "consistent":
        return Verdict(PROPERTY, status, abs(z), p, head + found + ", which with daily data says little about "
                       "smaller jumps; jumps, if present, mean one Black-Scholes vol cannot price every strike.")
    msg = (head + found + ". If the paths jump, one Black-Scholes vol cannot price every strike: a close-to-close "
           "vol counts the jumps, so it overstates the diffusive vol at-the-money options need, and far "
           "out-of-the-money options need more than one vol. Volatility that changes faster than the "
           f"{LM_WINDOW_DAILY}-day local window follows also produces such moves.")
    return Verdict(PROPERTY, status, abs(z), p, msg)
