"""The fixed column layout of every export table, and the tables' date columns.

:data:`TABLE_COLUMNS` gives, per table, its columns in their fixed order; :func:`conform` lays a
built table out in that order, adding a column the analysis did not produce as empty cells (a GJR
``gamma[1]`` on a GARCH(1,1) row, the Hodges-Tompkins columns of a cone without the adjustment),
so formulas that point at a column letter keep working whatever the options. A table not listed
here (a new one) keeps the columns it was built with. ``docs/EXPORT_SCHEMA.md`` documents the
same lists; a test checks written files against that page.
"""

from __future__ import annotations

import functools

import numpy as np
import pandas as pd

from volbench.export.schema import ESTIMATES_COLUMNS
from volbench.pricing.decision import DECISION_COLUMNS

DATE_COLUMNS: frozenset[str] = frozenset({"as_of", "first_date", "last_date", "date", "expiry"})
"""Columns holding ISO dates: written as real dates (``yyyy-mm-dd``) in .xlsx, ISO text elsewhere."""

CONE_COLUMNS = ("series", "estimator", "window", "min", "p10", "p25", "p50", "p75", "p90", "max", "mean",
                "current", "current_percentile", "n_windows", "n_independent", "ht_factor", "min_adj", "p10_adj",
                "p25_adj", "p50_adj", "p75_adj", "p90_adj", "max_adj")
SCALING_COLUMNS = ("series", "h", "variance", "variance_nonoverlap", "n_nonoverlap", "annualized_vol",
                   "sqrt_time_vol", "vol_ratio", "variance_ratio", "z", "z_robust", "p_value", "p_value_robust",
                   "skew", "excess_kurtosis", "jarque_bera", "jarque_bera_p")
SCALING_SUMMARY_COLUMNS = ("series", "item", "status", "statistic", "p_value", "ci_low", "ci_high", "message")
GARCH_FRONT = ("series", "model", "label", "dist", "fitted", "converged", "preferred", "nobs", "persistence",
               "persistence_se", "long_run_vol", "half_life", "next_bar_vol", "last_conditional_vol",
               "forward_days", "forward_vol", "forecast_method", "forward_vol_source", "candidate_label",
               "fallback", "fallback_vol", "loglik", "aic", "bic")
GARCH_TERM_COLUMNS = ("series", "model", "horizon", "vol")
COMPARISON_COLUMNS = ("series", "as_of", "pricing_vol", "days", "window", "years", "expiry", "calendar_days",
                      "trading_days", "basis_factor", "spot", "strike", "rate",
                      "dividend_yield", "kind", "cone_estimator", "cone_percentile", "source", "key", "label",
                      "candidate_window", "vol", "ci_low", "ci_high", "gap_points", "price", "vega", "vega_point",
                      "price_diff", "vega_approx_diff", "note")
SECTION_OF: dict[str, str] = {"scaling_summary": "scaling", "garch_term": "garch"}
"""Tables that belong to a section of another name (a table's own name otherwise)."""

NOTE_SHEET_COLUMNS = ("section", "status", "reason")
"""Columns of a sheet whose table is not in the export (one row saying why)."""

NOTES_COLUMNS = ("section", "series", "kind", "text")
FINDINGS_COLUMNS = ("series", "severity", "kind", "line", "date", "column", "treatment", "message")
INPUTS_COLUMNS = ("group", "series", "item", "value")


@functools.cache
def garch_parameters() -> tuple[str, ...]:
    """Every parameter any registered model and distribution can have, in a fixed order:
    ``mu``, ``omega``, ``alpha[i]``, ``gamma[i]``, ``beta[i]`` (up to the largest order registered),
    then each distribution's shape parameters."""
    from volbench.models.family import DIST_REGISTRY, MODEL_REGISTRY

    def order(k: str) -> int:
        return max((int(m.arch.get(k, 0)) for m in MODEL_REGISTRY.values()), default=0)

    names = ["mu", "omega"]
    for letter, k in (("alpha", "p"), ("gamma", "o"), ("beta", "q")):
        names += [f"{letter}[{i}]" for i in range(1, order(k) + 1)]
    for d in DIST_REGISTRY.values():
        names += [n for n in d.shape_bounds if n not in names]
    return tuple(names)


def garch_columns() -> tuple[str, ...]:
    params = garch_parameters()
    return GARCH_FRONT + tuple(f"param_{p}" for p in params) + tuple(f"se_{p}" for p in params) + ("warnings",)

EVENTS_COLUMNS = ("series", "as_of", "row", "key", "label", "window", "vol", "ci_low", "ci_high", "n", "blended_vol",
                  "variance", "variance_ci_low", "variance_ci_high", "expected_abs_move", "events", "events_in_life",
                  "days", "note")
PRICE_BANDS_COLUMNS = ("series", "as_of", "days", "spot", "key", "label", "vol", "sigmas", "low_price", "high_price",
                       "low_move", "high_move", "promised", "observed", "observed_ci_low", "observed_ci_high",
                       "observed_below", "observed_above", "windows", "overlapping_observed", "overlapping_windows",
                       "promise_in_ci")
BREAKEVENS_COLUMNS = ("series", "as_of", "days", "spot", "key", "label", "vol", "option", "strike", "premium",
                      "breakeven_move", "breakeven_low", "breakeven_high", "promised_share_beyond",
                      "observed_share_beyond", "observed_ci_low", "observed_ci_high", "windows",
                      "overlapping_share_beyond", "overlapping_windows", "promise_in_ci")


def table_columns() -> dict[str, tuple[str, ...]]:
    """Fixed columns per table name."""
    return {"estimates": ESTIMATES_COLUMNS, "cone": CONE_COLUMNS, "scaling": SCALING_COLUMNS,
            "scaling_summary": SCALING_SUMMARY_COLUMNS, "garch": garch_columns(), "garch_term": GARCH_TERM_COLUMNS,
            "events": EVENTS_COLUMNS, "comparison": COMPARISON_COLUMNS, "price_bands": PRICE_BANDS_COLUMNS,
            "breakevens": BREAKEVENS_COLUMNS, "decision": DECISION_COLUMNS, "notes": NOTES_COLUMNS,
            "findings": FINDINGS_COLUMNS, "inputs": INPUTS_COLUMNS}


def conform(name: str, df: pd.DataFrame) -> pd.DataFrame:
    """``df`` in the fixed column order of table ``name``: missing columns added as empty cells
    (float NaN), columns not in the layout kept after it (never dropped)."""
    fixed = table_columns().get(name)
    if fixed is None:
        return df
    extra = [c for c in df.columns if c not in fixed]
    out = df.copy()
    for c in fixed:
        if c not in out.columns:
            out[c] = np.nan
    return out[list(fixed) + extra]
