"""Realized measures per day: realized variance, bipower variation, tri-power quarticity, the
realized kernel, and the overnight return kept apart.

All formulas are in docs/METHODS.md, "Intraday data, realized measures and jumps". Every measure
is a row sum over the zero-padded session matrix of :mod:`volbench.intraday.grid`.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy.special import gamma

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.intraday.grid import SessionReturns, returns_on_grid, sampled_rv, session_prices
from volbench.intraday.sessions import SessionLayout, format_interval, infer_layout


def mu(p: float) -> float:
    """E|Z|^p for a standard normal Z: 2^(p/2) Gamma((p+1)/2) / Gamma(1/2)."""
    return float(2 ** (p / 2) * gamma((p + 1) / 2) / gamma(0.5))


MU1 = mu(1.0)  # sqrt(2/pi)
MU43 = mu(4.0 / 3.0)
PARZEN_K2 = 0.2696
"""Integral of the squared Parzen weight over [0, 1] (from memory; checked by quadrature in the tests)."""
C_STAR = (144.0 / PARZEN_K2) ** 0.2
"""Bandwidth constant of the Parzen realized kernel, (k''(0)^2 / int k^2)^(1/5) = 3.51 (BNHLS 2009, from memory)."""
IV_SAMPLING_SECONDS = 1200.0
"""Sparse sampling (20 minutes) for the integrated-variance guess in the kernel's bandwidth."""
MIN_RETURNS_A_DAY = 3
"""A session needs this many intraday returns for bipower variation and tri-power quarticity."""

DAILY_COLUMNS = ("n_returns", "rv", "bv", "tq", "kernel", "bandwidth", "overnight")


def parzen(x: np.ndarray) -> np.ndarray:
    """Parzen weight k(x) = 1 - 6x^2 + 6x^3 (x <= 1/2), 2 (1 - x)^3 (1/2 < x <= 1), 0 beyond."""
    x = np.abs(np.asarray(x, dtype=float))
    return np.where(x <= 0.5, 1 - 6 * x**2 + 6 * x**3, np.where(x <= 1.0, 2 * (1 - x) ** 3, 0.0))


def realized_variance(r: np.ndarray) -> np.ndarray:
    """RV_t = sum_j r_{t,j}^2 for each row of the padded session matrix."""
    return np.einsum("ij,ij->i", r, r)


def bipower_variation(r: np.ndarray, counts: np.ndarray) -> np.ndarray:
    """BV_t = (pi/2) (M/(M-1)) sum_{j>=2} |r_{t,j}| |r_{t,j-1}|; NaN where M < 2.

    Notes
    -----
    Barndorff-Nielsen & Shephard (2004), J. Financial Econometrics 2(1); the factor M/(M-1)
    makes up for the one product fewer than returns.
    """
    a = np.abs(r)
    s = np.einsum("ij,ij->i", a[:, 1:], a[:, :-1])
    m = counts.astype(float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(m >= 2, s * (m / (m - 1)) / MU1**2, np.nan)


def tripower_quarticity(r: np.ndarray, counts: np.ndarray) -> np.ndarray:
    """TQ_t = M mu_{4/3}^{-3} (M/(M-2)) sum_{j>=3} prod_{i=0..2} |r_{t,j-i}|^{4/3}; NaN where M < 3.

    Notes
    -----
    Estimates the integrated quarticity of the day (time in days), robust to jumps
    (Barndorff-Nielsen & Shephard 2004, 2006; Huang & Tauchen 2005).
    """
    a = np.abs(r)
    a43 = a * np.cbrt(a)
    s = np.einsum("ij,ij->i", a43[:, 2:] * a43[:, 1:-1], a43[:, :-2])
    m = counts.astype(float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(m >= 3, m * (m / (m - 2)) * s / MU43**3, np.nan)


def kernel_bandwidth(rv_dense: np.ndarray, counts: np.ndarray, rv_sparse: np.ndarray) -> np.ndarray:
    """Whole-number Parzen bandwidth per day, H = ceil(c* xi^(4/5) M^(3/5)), 1 <= H <= M - 1.

    Notes
    -----
    Barndorff-Nielsen, Hansen, Lunde & Shephard (2009, Econometrics Journal 12), from memory and
    simplified: noise variance omega^2 = RV_dense / (2 M), integrated variance guessed by RV sampled
    every 20 minutes, xi^2 = omega^2 / IV, c* = 3.51 for the Parzen weight. Without noise
    omega^2 is overstated (RV / 2M is then about IV / 2M) and H comes out a few lags long, which
    costs a little precision and no bias.
    """
    m = counts.astype(float)
    with np.errstate(divide="ignore", invalid="ignore"):
        xi2 = (rv_dense / (2 * m)) / rv_sparse
        h = np.ceil(C_STAR * xi2**0.4 * m**0.6)
    h = np.where(np.isfinite(h), h, 1.0)
    return np.clip(h, 1.0, np.maximum(m - 1, 1.0)).astype(np.int64)


def realized_kernel(r: np.ndarray, bandwidth: np.ndarray) -> np.ndarray:
    """K_t = gamma_0 + 2 sum_{h=1..H_t} k(h / (H_t + 1)) gamma_h, Parzen k, gamma_h = sum_j r_j r_{j-h}.

    Notes
    -----
    Barndorff-Nielsen, Hansen, Lunde & Shephard (2008, Econometrica 76(6); 2009, Econometrics
    Journal 12). Equals ``arch.covariance.kernel.Parzen(r, bandwidth=H, center=False,
    force_int=True).cov.long_run`` x M (same weights k(h / (H + 1))). The Parzen weight keeps
    K_t >= 0. Loops over lags h (a handful), not over bars.
    """
    h_max = int(bandwidth.max()) if bandwidth.size else 0
    out = np.einsum("ij,ij->i", r, r)
    if h_max < 1:
        return out
    order = np.argsort(-bandwidth, kind="stable")  # longest bandwidth first: lag h needs a prefix of rows
    rs, bs = r[order], bandwidth[order]
    acc = np.zeros(r.shape[0])
    for h in range(1, min(h_max, r.shape[1] - 1) + 1):  # a loop over lags, not bars
        n = int(np.count_nonzero(bs >= h))
        acc[:n] += 2.0 * parzen(h / (bs[:n] + 1.0)) * np.einsum("ij,ij->i", rs[:n, h:], rs[:n, :-h])
    out[order] += acc
    return out


@dataclass(frozen=True, eq=False)
class RealizedMeasures:
    """Per-day realized measures of one intraday history.

    Attributes
    ----------
    name
        Series name.
    layout
        Sessions and bar spacing.
    sampling_bars, interval_seconds
        Sampling of the intraday returns behind rv, bv and tq (the kernel always uses every bar).
    daily
        Indexed by session date; columns :data:`DAILY_COLUMNS`: ``n_returns`` (M_t), ``rv``,
        ``bv``, ``tq``, ``kernel``, ``bandwidth`` (H_t) and ``overnight`` (log return from the
        previous session's last price to this session's first; NaN on the first day). Variances are
        per day, not annualized.
    notes
        Plain sentences about choices made on this data.
    provenance
        ``PriceHistory.provenance()`` of the intraday history.
    """

    name: str
    layout: SessionLayout
    sampling_bars: int
    interval_seconds: float
    daily: pd.DataFrame
    notes: tuple[str, ...] = ()
    provenance: dict = field(default_factory=dict)

    def whole_day(self, measure: str = "rv") -> pd.Series:
        """Whole-day variance: the session measure plus the squared overnight return.

        The plain sum, no weights (docs/METHODS.md, "Intraday data, realized measures and jumps");
        the first day, with no overnight return, is left out.
        """
        if measure not in ("rv", "bv", "kernel"):
            raise VolbenchError(f"unknown session measure {measure!r}; choose one of: rv, bv, kernel")
        d = self.daily
        v = d[measure] + d["overnight"] ** 2
        return v[d["overnight"].notna()].rename(measure)

    def as_dict(self) -> dict:
        d = self.daily
        return {
            "name": self.name,
            **self.layout.as_dict(),
            "sampling_seconds": self.interval_seconds,
            "days": [
                {"date": ts.strftime("%Y-%m-%d"), **{c: (int(v) if c in ("n_returns", "bandwidth") else float(v))
                                                     for c, v in zip(DAILY_COLUMNS, row)}}
                for ts, row in zip(d.index, d[list(DAILY_COLUMNS)].itertuples(index=False))
            ],
            "notes": list(self.notes),
        }


def sparse_step(layout: SessionLayout, seconds: float = IV_SAMPLING_SECONDS) -> int:
    """Whole number of bars closest to ``seconds`` (at least 1)."""
    return max(1, round(seconds / layout.bar_interval_seconds))


def realized_measures(
    history: PriceHistory,
    layout: SessionLayout | None = None,
    *,
    session_break: str | float | None = None,
    sampling_bars: int = 1,
) -> RealizedMeasures:
    """Realized variance, bipower variation, tri-power quarticity, realized kernel and overnight
    return for each session of an intraday history.

    Parameters
    ----------
    history
        Intraday price history (bars within sessions); rows already selected for the quality policy.
    layout
        Its sessions; inferred from the timestamps (with ``session_break``) when ``None``.
    session_break
        See :func:`volbench.intraday.sessions.infer_layout`.
    sampling_bars
        Sample the returns behind RV, BV and TQ every k bars (see the signature plot for a choice).

    Returns
    -------
    RealizedMeasures

    Raises
    ------
    VolbenchError
        The history is daily, or no session has :data:`MIN_RETURNS_A_DAY` returns.

    Notes
    -----
    RV (Andersen, Bollerslev, Diebold & Labys 2001; Barndorff-Nielsen & Shephard 2002), BV and TQ
    (Barndorff-Nielsen & Shephard 2004, 2006), realized kernel with Parzen weights
    (Barndorff-Nielsen, Hansen, Lunde & Shephard 2008). Sessions with fewer than
    :data:`MIN_RETURNS_A_DAY` returns are left out and listed in ``notes``.
    """
    lay = layout if layout is not None else infer_layout(history.dates, session_break)
    if not lay.intraday:
        raise VolbenchError(f"{history.name}: realized measures need intraday bars; the file has one bar a "
                            "session (daily data): use the daily estimators, or load intraday bars")
    if isinstance(sampling_bars, bool) or int(sampling_bars) != sampling_bars or sampling_bars < 1:
        raise VolbenchError(f"sampling must be a whole number of bars >= 1, got {sampling_bars!r}")
    p, sess = session_prices(history, lay)
    bar = lay.bar_interval_seconds
    sr: SessionReturns = returns_on_grid(p, sess, lay.n_sessions, int(sampling_bars), bar)
    dense = sr if sr.sampling_bars == 1 else returns_on_grid(p, sess, lay.n_sessions, 1, bar)
    rv_sparse = sampled_rv(p, sess, lay.n_sessions, sparse_step(lay))
    rv = realized_variance(sr.returns)
    if not (rv > 0).any() and not np.nansum(sr.overnight**2) > 0:
        raise VolbenchError(f"{history.name}: prices are constant (every intraday and overnight return is zero), "
                            "so there is no variance to measure; check that the file holds the right price column")
    bv = bipower_variation(sr.returns, sr.counts)
    tq = tripower_quarticity(sr.returns, sr.counts)
    rv_dense = realized_variance(dense.returns)
    bw = kernel_bandwidth(rv_dense, dense.counts, rv_sparse)
    kern = realized_kernel(dense.returns, bw)
    daily = pd.DataFrame(
        {"n_returns": sr.counts, "rv": rv, "bv": bv, "tq": tq, "kernel": kern, "bandwidth": bw,
         "overnight": sr.overnight},
        index=pd.DatetimeIndex(lay.session_dates, name="date"),
    )
    notes = []
    short = sr.counts < MIN_RETURNS_A_DAY
    if short.all():
        raise VolbenchError(f"{history.name}: no session has {MIN_RETURNS_A_DAY} intraday returns at a "
                            f"{format_interval(sr.interval_seconds)} sampling; sample more often")
    if short.any():
        dates = ", ".join(ts.strftime("%Y-%m-%d") for ts in daily.index[short][:5])
        notes.append(f"{int(short.sum())} session(s) with fewer than {MIN_RETURNS_A_DAY} intraday returns left "
                     f"out of the realized measures ({dates}{', ...' if short.sum() > 5 else ''}); their "
                     "price moves count in the next kept day's overnight return")
        daily = daily[~short]
        # the next kept day's overnight return would now span a dropped session: recompute it
        # from the prices on both sides so that no variance is lost
        daily = _bridge_overnight(daily, history, lay, ~short)
    return RealizedMeasures(
        name=history.name, layout=lay, sampling_bars=sr.sampling_bars, interval_seconds=sr.interval_seconds,
        daily=daily, notes=tuple(notes), provenance=history.provenance(),
    )


def _bridge_overnight(daily: pd.DataFrame, history: PriceHistory, lay: SessionLayout,
                      kept: np.ndarray) -> pd.DataFrame:
    """Overnight return of each kept session measured from the last kept session's close."""
    logc = np.log(history.close)
    first_price = np.log(history.open[lay.starts]) if history.open is not None else logc[lay.starts]
    last_price = logc[lay.ends]
    idx = np.flatnonzero(kept)
    on = np.full(idx.size, np.nan)
    on[1:] = first_price[idx[1:]] - last_price[idx[:-1]]
    if idx[0] > 0:  # the first kept session follows dropped ones: measure from the first close
        on[0] = first_price[idx[0]] - last_price[idx[0] - 1]
    out = daily.copy()
    out["overnight"] = on
    return out
