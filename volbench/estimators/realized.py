"""The realized estimators: whole-day variance from intraday returns, averaged over a window of days.

- ``realized``: realized variance of the session (sum of squared intraday returns) plus the squared
  overnight return;
- ``bipower``: the same with bipower variation as the session measure, robust to jumps inside the
  session (the diffusive part of the day's variance).

They need a history analysed by day from intraday bars (:func:`volbench.intraday.days.by_days`):
the per-day measures come from its ``intraday`` bars (:mod:`volbench.intraday.measures`); on a file
of daily bars they are unavailable with the reason. Formulas and sources: docs/METHODS.md,
"Intraday data, realized measures and jumps".
"""

from __future__ import annotations

import numpy as np

from volbench.data.history import PriceHistory
from volbench.estimators.base import EstimatorSpec, rolling_mean, rolling_var

NU_RV = 2.0
"""sqrt(M) (RV - IV) -> N(0, 2 IQ) (Barndorff-Nielsen & Shephard 2002, JRSS-B 64)."""
NU_BV = (np.pi / 2) ** 2 + np.pi - 3
"""sqrt(M) (BV - IV) -> N(0, ((pi/2)^2 + pi - 3) IQ) (Barndorff-Nielsen & Shephard 2004, 2006)."""
DAILY_FILE_REASON = "needs intraday bars; the file has one bar a day"
"""Why the realized estimators are unavailable on a file of daily bars."""


def needs_intraday(history: PriceHistory) -> str | None:
    """Why ``history`` cannot feed a realized estimator (``None`` when it can)."""
    if history.intraday is None:
        return DAILY_FILE_REASON
    return history.intraday.problem


def _whole_day(history: PriceHistory, measure: str):
    v, q, o2 = history.intraday.whole_day(measure, history.dates)
    return v[1:], q[1:], o2[1:]


def _variance(measure: str):
    def variance(history: PriceHistory, window: int) -> np.ndarray:
        v, _, _ = _whole_day(history, measure)
        return rolling_mean(v, window, pad=1)

    variance.__name__ = f"{measure}_whole_day_variance"
    variance.__doc__ = (f"""Per-day variance at each day: the mean over the last ``window`` days of
        the session's {'realized variance' if measure == 'rv' else 'bipower variation'} plus the squared
        overnight return (NaN until the window fits; the first session has no overnight return).

        Notes
        -----
        v_t = (1/w) sum_(s=t-w+1..t) (S_s + o_s^2); the session measure S and the overnight return o
        are added unweighted (Hansen & Lunde 2005, J. Financial Econometrics 3(4), discuss weights;
        the plain sum is unbiased for the whole day's variance when both parts are). Sources of S in
        :mod:`volbench.intraday.measures`.
        """)
    return variance


rv_whole_day_variance = _variance("rv")
bv_whole_day_variance = _variance("bv")


def _dof(measure: str, nu: float):
    def dof(history: PriceHistory, window: int, variance: np.ndarray, options: dict) -> np.ndarray:
        """Effective degrees of freedom 2 v^2 / Var(v) of each day's window (Satterthwaite).

        Var(v) = (1/w^2) sum nu TQ_s / M_s + max(s^2(o^2), 2 mean(o^2)^2) / w: the session error
        from the integrated quarticity estimated by tri-power quarticity, the overnight error from
        the squared overnight returns (their sample variance, or its normal value when larger).
        """
        _, q, o2 = _whole_day(history, measure)
        w = window
        session = nu * rolling_mean(q, w, pad=1) / w
        m2 = rolling_mean(o2, w, pad=1)
        overnight = np.maximum(rolling_var(o2, w, ddof=1, pad=1), 2.0 * m2 * m2) / w
        with np.errstate(divide="ignore", invalid="ignore"):
            return 2.0 * variance * variance / (session + overnight)

    return dof


def _interval_text(dof: float, n: int) -> str:
    return (f"approximate: chi-square with effective degrees of freedom {dof:.0f} over {n} days, from the "
            "tri-power quarticity of the sessions and the squared overnight returns; ignores microstructure "
            "noise (read the signature plot)")


_ASSUMES = ("Intraday prices on a Brownian path between trades; sessions free of microstructure noise at the "
            "sampling used (see the signature plot); overnight returns with the day's share of variance.")

REALIZED = EstimatorSpec(
    key="realized",
    label="Realized variance + overnight",
    short="RV",
    needs=frozenset({"close"}),
    extra_bars=1,
    variance=rv_whole_day_variance,
    efficiency=1.0,
    requires=needs_intraday,
    dof=_dof("rv", NU_RV),
    interval_text=_interval_text,
    source=("Andersen, Bollerslev, Diebold & Labys (2001), JASA 96; Barndorff-Nielsen & Shephard (2002), "
            "JRSS-B 64"),
    assumes=_ASSUMES + " Jumps count in the variance.",
)

BIPOWER = EstimatorSpec(
    key="bipower",
    label="Bipower variation + overnight",
    short="BV",
    needs=frozenset({"close"}),
    extra_bars=1,
    variance=bv_whole_day_variance,
    efficiency=1.0,
    requires=needs_intraday,
    dof=_dof("bv", NU_BV),
    interval_text=_interval_text,
    source="Barndorff-Nielsen & Shephard (2004), J. Financial Econometrics 2(1); (2006), JFE 4(1)",
    assumes=_ASSUMES + " Jumps inside sessions are left out (the diffusive part).",
)
