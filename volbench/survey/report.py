"""A survey's result as JSON or CSV text: what ``volbench survey --format json|csv`` prints and
the window's survey pane saves."""

from __future__ import annotations

import csv
import io
import json

from volbench.format import json_safe

VERDICT_ORDER = ("variance_proportional_to_horizon", "normal_increments", "independent_increments",
                 "negligible_drift", "continuous_paths")
"""The scaling verdicts in the order tables show them."""


def survey_json(result) -> str:
    """The survey as indented JSON (the shape of docs and the issue: engine, workers, elapsed_s,
    settings, series)."""
    return json.dumps(json_safe(result.as_dict()), indent=2, allow_nan=False) + "\n"


def _keys():
    from volbench.estimators import REGISTRY

    return REGISTRY


def survey_csv(result) -> str:
    """The survey as CSV: one row per series, every estimator's vol, interval and bar count."""
    keys = list(_keys())
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    head = ["series", "source", "rows", "as_of", "window", "days"]
    for k in keys:
        head += [f"{k}_vol", f"{k}_ci_low", f"{k}_ci_high", f"{k}_n"]
    head += ["current_vol", "cone_percentile", "pricing_vol", "pricing_vol_percentile"]
    head += [f"verdict_{p}" for p in VERDICT_ORDER]
    head += ["forward_vol", "forward_vol_source", "findings_error", "findings_warning", "findings_info",
             "unavailable", "error"]
    w.writerow(head)

    def num(x):
        return "" if x is None else f"{x:.10g}"

    for r in result.records:
        row = [r.name, r.source or "", "" if r.rows is None else r.rows, r.as_of or "", r.window or "", r.days or ""]
        for k in keys:
            e = r.estimates.get(k)
            row += ["", "", "", ""] if e is None else [num(e.vol), num(e.ci_low), num(e.ci_high), e.n]
        row += [num(r.current_vol), num(r.cone_percentile), num(r.pricing_vol), num(r.pricing_vol_percentile)]
        row += [r.verdicts.get(p, "") for p in VERDICT_ORDER]
        row += [num(r.forward_vol), r.forward_vol_source or ""]
        row += [r.findings.get(s, "") if r.ok or r.findings else "" for s in ("error", "warning", "info")]
        row += ["; ".join(f"{k}: {v}" for k, v in r.unavailable.items()), r.error or ""]
        w.writerow(row)
    return buf.getvalue()


