"""The bundled sample market: committed files equal the generator, and they behave as documented."""

from __future__ import annotations

import json
import math

import pytest

from volbench import samples
from volbench.data import load_prices
from volbench.estimators import point_estimate

BETA = 0.5826  # discrete-monitoring constant, Broadie, Glasserman & Kou (1997), from memory


def test_committed_samples_equal_the_generator_output(tmp_path, sample_dir):
    written = samples.write_samples(tmp_path)
    names = sorted(p.name for p in written) + ["PARAMETERS.json"]
    assert sorted(p.name for p in sample_dir.iterdir() if p.is_file()) == sorted(names)
    for name in names:
        assert (tmp_path / name).read_bytes() == (sample_dir / name).read_bytes(), (
            f"{name} differs from the generator; run 'python -m volbench.samples --out sample_prices'"
        )


def test_generator_command_line(tmp_path, capsys):
    assert samples.main(["--out", str(tmp_path / "out")]) == 0
    printed = capsys.readouterr().out.split()
    assert len(printed) == 5 and all((tmp_path / "out" / p.split("/")[-1]).exists() for p in printed)


def _params(sample_dir):
    meta = json.loads((sample_dir / "PARAMETERS.json").read_text())
    return meta, {s["file"]: s for s in meta["series"]}


def _within(est, sigma, eff, steps, range_based):
    """4 standard errors sigma sqrt(1 / (2 n eff)) (delta method), plus the discrete-monitoring bias
    2 beta / sqrt(steps) on the low side for range estimators (see tests/estimators/test_simulation.py)."""
    se = math.sqrt(1 / (2 * est.n * eff))
    low = 4 * se + (2 * BETA / math.sqrt(steps) if range_based else 0.0)
    return sigma * (1 - low) < est.vol < sigma * (1 + 4 * se)


def test_gbm_sample_recovers_its_true_vol(sample_dir):
    meta, params = _params(sample_dir)
    sigma = params["kestrel_orchards.csv"]["annual_vol"]
    (h,) = load_prices(sample_dir / "kestrel_orchards.csv")
    # the generator opens each bar at the previous close (no overnight move), which import notes
    assert h.n == meta["bars"] and [f.kind for f in h.findings] == ["stale_open"]
    # efficiencies as in docs/METHODS.md, "Estimators" (Parkinson 1980 exact 4.91; Garman & Klass
    # 1980, Rogers & Satchell 1991, from memory); Yang-Zhang 7 (it depends on the window and gaps).
    for key, eff in (("close_to_close", 1.0), ("parkinson", 4.91), ("garman_klass", 7.4),
                     ("rogers_satchell", 6.0), ("yang_zhang", 7.0)):
        est = point_estimate(h, key, annualization=meta["bars_per_year"])
        assert _within(est, sigma, eff, meta["steps_per_bar"], key != "close_to_close"), (key, est.vol)


def test_gap_sample_fools_range_estimators_but_not_yang_zhang(sample_dir):
    # 40 % of each bar's variance arrives overnight: Parkinson/GK/RS see only the session, about
    # sigma sqrt(0.6) (Parkinson 1980; Garman & Klass 1980; Rogers & Satchell 1991 assume no gap);
    # Yang & Zhang (2000) and close-to-close see it all.
    meta, params = _params(sample_dir)
    p = params["saltmarsh_ferries.csv"]
    sigma, share = p["annual_vol"], p["overnight_share"]
    (h,) = load_prices(sample_dir / "saltmarsh_ferries.csv")
    for key in ("parkinson", "garman_klass", "rogers_satchell"):
        vol = point_estimate(h, key).vol
        assert vol == pytest.approx(sigma * math.sqrt(1 - share), rel=0.1), key
    assert _within(point_estimate(h, "close_to_close"), sigma, 1.0, meta["steps_per_bar"], False)
    assert _within(point_estimate(h, "yang_zhang"), sigma, 3.0, meta["steps_per_bar"], True)


def test_close_only_index_sample(sample_dir):
    # semicolon file with decimal commas, newest row first, close only
    _, params = _params(sample_dir)
    (h,) = load_prices(sample_dir / "vell_harbour_index.csv")
    assert h.columns == {"close"} and h.n == 1512
    assert [f.kind for f in h.findings] == ["separators", "sorted"]  # decimal commas, stated
    assert h.close.min() > 100  # decimal commas read as decimals, not thousands
    est = point_estimate(h, "close_to_close")
    assert _within(est, params["vell_harbour_index.csv"]["annual_vol"], 1.0, 1, False)


def test_split_sample_findings_match_the_documented_defects(sample_dir):
    meta, params = _params(sample_dir)
    (h,) = load_prices(sample_dir / "quillon_textiles.csv")
    got = {(f.kind, f.line) for f in h.findings}
    documented = meta["bad_rows_in_quillon"]
    assert documented["line 102"] == "missing close" and ("missing_value", 102) in got
    assert documented["line 202"] == "non-numeric high" and ("non_numeric", 202) in got
    assert documented["line 302"] == "high below low" and ("high_below_low", 302) in got
    assert ("duplicate_date", 402) in got  # line 402 left out, its repeat on line 403 kept
    dup = next(f for f in h.findings if f.kind == "duplicate_date")
    assert "line 402 left out, line 403 kept" in dup.message
    tick = next(f for f in h.findings if f.kind == "jump" and f.line == 503)
    assert "bad tick" in tick.message
    split_date = params["quillon_textiles.csv"]["split_date"]
    (split,) = [f for f in h.findings if f.kind == "jump" and f.date == split_date]
    assert "unadjusted 2:1 split" in split.message
    assert len(h.findings) == 7  # the six planted defects and the note on opens at the previous close


def test_split_sample_exclusion_removes_bad_tick_but_not_split(sample_dir):
    (kept,) = load_prices(sample_dir / "quillon_textiles.csv")
    (excl,) = load_prices(sample_dir / "quillon_textiles.csv", exclude_flagged=True)
    assert 503 in excl.excluded_lines and 302 in excl.excluded_lines
    # the bad tick (x10) dominates close-to-close when kept; excluding it leaves the split return,
    # so whole-sample close-to-close still exceeds the true 25 % vol
    assert point_estimate(kept, "close_to_close").vol > point_estimate(excl, "close_to_close").vol > 0.25
