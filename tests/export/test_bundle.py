"""The export bundle: estimates schema, provenance, and optional sections recorded, not failed."""

from __future__ import annotations

import hashlib
import json
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from volbench import __version__
from volbench.errors import VolbenchError
from volbench.estimators import REGISTRY, estimate_all
from volbench.export import (
    ESTIMATES_COLUMNS,
    ESTIMATES_SCHEMA,
    SECTIONS,
    build_bundle,
)
from volbench.settings import ConeSettings, EstimationSettings, GarchSettings, OptionSettings

DOC = Path(__file__).resolve().parents[2] / "docs" / "EXPORT_SCHEMA.md"


def test_estimates_columns_are_the_documented_schema(make_bundle):
    est = make_bundle().table("estimates")
    assert tuple(est.columns) == ESTIMATES_COLUMNS
    # docs/EXPORT_SCHEMA.md lists every column, in order, in its estimates table
    doc = DOC.read_text(encoding="utf-8")
    section = doc.split("## estimates", 1)[1].split("\n## ", 1)[0]
    assert re.findall(r"^\| `(\w+)` \|", section, flags=re.MULTILINE) == list(ESTIMATES_COLUMNS)
    assert {c.kind for c in ESTIMATES_SCHEMA} <= {"text", "integer", "number", "percent"}


def test_estimates_carry_the_core_numbers(make_bundle, sample_histories):
    # Common practice, no source: the export must show the same number the core computes for the
    # same settings (estimate_all is the one entry point every surface uses).
    hs = sample_histories()
    est = make_bundle(hs, estimation=EstimationSettings(window=20, as_of="2024-06-28")).table("estimates")
    for h in hs:
        rep = estimate_all(h, 20, as_of="2024-06-28")
        rows = est[est["series"] == h.name].set_index("estimator")
        assert list(rows.index) == list(REGISTRY)
        for key, e in rep.estimates.items():
            assert rows.at[key, "vol"] == e.vol
            assert rows.at[key, "ci_low"] == e.ci_low and rows.at[key, "ci_high"] == e.ci_high
            assert rows.at[key, "n"] == e.n and rows.at[key, "ci_method"] == e.ci_method
        assert set(rows["as_of"]) == {"2024-06-28"}
        assert set(rows["window"]) == {20}


def test_unavailable_estimator_keeps_its_row_with_the_reason(make_bundle, sample_histories):
    est = make_bundle(sample_histories("vell_harbour_index.csv")).table("estimates")
    park = est.set_index("estimator").loc["parkinson"]
    assert np.isnan(park["vol"]) and pd.isna(park["n"])
    assert park["unavailable_reason"] == "needs high/low columns"
    assert est.set_index("estimator").loc["close_to_close", "unavailable_reason"] == ""


def test_provenance_names_file_hash_version_settings_and_quality(make_bundle, sample_histories, sample_dir):
    hs = sample_histories("quillon_textiles.csv", exclude_flagged=True)
    b = make_bundle(hs, estimation=EstimationSettings(window="all", annualization=365, lam=0.97))
    est = b.table("estimates")
    row = est.iloc[0]
    # Reference library: hashlib.sha256 of the file's bytes
    assert row["source_sha256"] == hashlib.sha256((sample_dir / "quillon_textiles.csv").read_bytes()).hexdigest()
    assert row["source_file"] == "quillon_textiles.csv"
    assert row["volbench_version"] == __version__
    assert row["window"] == "all" and row["annualization"] == 365.0
    assert row["flagged_rows"] == "excluded"
    assert row["excluded_lines"] == " ".join(str(x) for x in hs[0].excluded_lines) != ""
    # notes: opens at the previous close, and one per excluded bar (the return across it spans two bars)
    assert row["findings"] == "2 errors, 4 warnings, 4 notes"
    assert row["created"] == "2024-10-18T07:30:05Z"
    settings = json.loads(row["settings"])
    assert settings["annualization"] == 365.0 and settings["estimator_options"]["ewma_lambda"] == 0.97
    assert b.provenance["series"][0]["sha256"] == row["source_sha256"]
    findings = b.table("findings").dropna(subset=["line"])  # file-wide notes have no line
    treat = dict(zip(findings["line"].astype(int), findings["treatment"]))
    assert treat[102] == "left out at import" and treat[302] == "excluded"
    inputs = b.table("inputs")
    sha_rows = inputs[(inputs["item"] == "sha256")]
    assert list(sha_rows["value"]) == [row["source_sha256"]]


def test_flagged_rows_kept_are_reported_as_kept(make_bundle, sample_histories):
    b = make_bundle(sample_histories("quillon_textiles.csv"))
    assert set(b.table("estimates")["flagged_rows"]) == {"kept"}
    f = b.table("findings").set_index("line")
    assert f.at[302, "treatment"] == "kept" and f.at[402, "treatment"] == "left out at import"


def test_sections_included_with_cone_and_scaling(make_bundle):
    b = make_bundle()
    assert b.sections["cone"].status == "included" and b.sections["scaling"].status == "included"
    assert b.sections["garch"].status == "not requested"
    assert b.sections["comparison"].status == "not requested"
    cone = b.table("cone")
    assert list(cone.columns[:3]) == ["series", "estimator", "window"]
    assert "vol" not in b.percent_columns["cone"] and "p50" in b.percent_columns["cone"]
    assert "current_percentile" not in b.percent_columns["cone"]


def test_comparison_section_with_option(make_bundle, sample_histories):
    b = make_bundle(sample_histories("quillon_textiles.csv"),
                    option=OptionSettings(pricing_vol=0.3, days=25, strike=40.0, rate=0.02, kind="put"))
    assert b.sections["comparison"].status == "included"
    comp = b.table("comparison")
    assert comp.iloc[0]["source"] == "pricing" and comp.iloc[0]["vol"] == 0.3
    assert set(comp["kind"]) == {"put"} and set(comp["strike"]) == {40.0}
    notes = b.table("notes")
    assert (notes[notes["section"] == "comparison"]["kind"] == "reading").any()


def test_comparison_window_sets_the_candidate_window_and_is_recorded(make_bundle, sample_histories):
    # Common practice, no source: the candidate vols are the estimators over the chosen window, equal
    # to volbench.estimators.point_estimate over that window (the core the comparison calls).
    from volbench.estimators import point_estimate

    h = sample_histories("kestrel_orchards.csv")
    default = make_bundle(h, option=OptionSettings(0.25, 30), scaling=None)
    chosen = make_bundle(h, option=OptionSettings(0.25, 30, window=60), scaling=None)
    row = lambda b: b.table("comparison").set_index("key").loc["yang_zhang"]
    assert row(default)["candidate_window"] == 30 and row(chosen)["candidate_window"] == 60
    assert row(chosen)["vol"] == pytest.approx(point_estimate(h[0], "yang_zhang", 60).vol, rel=1e-12)
    assert default.provenance["settings"]["pricing"]["estimator_window"] == "days (the option's life)"
    assert chosen.provenance["settings"]["pricing"]["estimator_window"] == 60


def test_bad_pricing_inputs(make_bundle):
    with pytest.raises(VolbenchError, match=r"option must be OptionSettings, got dict"):
        make_bundle(option={"pricing_vol": 0.25})
    with pytest.raises(VolbenchError, match=r"pricing vol must be a decimal below 5 \(0.25 means 25%\), got 25"):
        OptionSettings(pricing_vol=25, days=30)
    with pytest.raises(VolbenchError, match=r"pricing vol must be a decimal below 5 \(0.25 means 25%\), got 7; "
                                            r"it looks like a percent: did you mean 0.07\?"):
        OptionSettings(pricing_vol=7, days=30)  # the same limit as 'volbench compare'
    with pytest.raises(VolbenchError, match=r"days must be a whole number of bars >= 1, got 0"):
        OptionSettings(pricing_vol=0.25, days=0)
    with pytest.raises(VolbenchError, match=r"unknown estimator 'nope'; choose one of: close_to_close"):
        ConeSettings(estimator="nope")


def test_no_histories():
    with pytest.raises(VolbenchError, match="nothing to export: give at least one price history"):
        build_bundle([])


def test_one_series_failing_makes_the_section_partial(make_bundle, make_history, sample_histories):
    short = make_history(100 * np.exp(np.cumsum(np.full(25, 0.01) * (-1) ** np.arange(25))), name="short")
    b = make_bundle([*sample_histories("quillon_textiles.csv"), short], estimation=EstimationSettings(window=5))
    st = b.sections["scaling"]
    assert st.status == "partial" and st.reason.startswith("short: short: only 24 returns")
    assert set(b.table("scaling")["series"]) == {"quillon_textiles"}
    notes = b.table("notes")
    assert ((notes["series"] == "short") & (notes["kind"] == "not available")).any()


def test_ready_made_results_are_used(make_bundle, sample_histories):
    from volbench.pricing.cone import vol_cone

    hs = sample_histories("quillon_textiles.csv")
    mine = vol_cone(hs[0], "parkinson", (5, 15))
    b = make_bundle(hs, given={"cone": {"quillon_textiles": mine}})
    cone = b.table("cone")
    assert list(cone["window"]) == [5, 15] and set(cone["estimator"]) == {"parkinson"}
    assert cone["p50"].tolist() == mine.table["p50"].tolist()


def test_nothing_optional_requested(make_bundle):
    b = make_bundle(cone=None, scaling=None)
    assert {k for k, s in b.sections.items() if s.status == "included"} == {"estimates"}
    assert set(b.sections) == set(SECTIONS)
    assert list(b.names) == ["estimates", "notes", "findings", "inputs"]


def test_garch_section_rows_match_the_fits(make_bundle, simulate_ohlc):
    from volbench.models import fit_models

    h = simulate_ohlc(400, 0.25, seed=11, steps=20, name="sim")
    b = make_bundle([h], scaling=None, garch=GarchSettings(models=("garch", "gjr")),
                    option=OptionSettings(0.25, 21))
    assert b.sections["garch"].status == "included"
    g = b.table("garch").set_index("model")
    # Reference: the same fit_models call made directly (arch via volbench.models); the export
    # must carry its numbers unchanged.
    comp = fit_models(h, GarchSettings(models=("garch", "gjr")))
    for f in comp.fits:
        assert g.at[f.model, "forward_vol"] == f.forward_vol(21)
        assert g.at[f.model, "persistence"] == f.persistence
        assert g.at[f.model, "preferred"] == (comp.preferred == f.model)
        assert g.at[f.model, "param_omega"] == f.params["omega"]
    assert "param_gamma[1]" in g.columns and np.isnan(g.at["garch", "param_gamma[1]"])
    assert list(b.table("garch_term").columns) == ["series", "model", "horizon", "vol"]
    assert set(b.percent_columns["garch"]) >= {"long_run_vol", "forward_vol"}
    comp_rows = b.table("comparison")
    assert {"garch:garch", "garch:gjr"} <= set(comp_rows["key"])


@pytest.mark.slow
def test_garch_in_worker_processes_gives_the_same_numbers(make_bundle, simulate_ohlc):
    hs = [simulate_ohlc(300, 0.2, seed=s, steps=10, name=f"s{s}") for s in (1, 2)]
    kw = {"scaling": None, "cone": None}
    serial = make_bundle(hs, garch=GarchSettings(models=("garch",), processes=1), **kw).table("garch")
    pooled = make_bundle(hs, garch=GarchSettings(models=("garch",), processes=2), **kw).table("garch")
    pd.testing.assert_frame_equal(serial, pooled)
