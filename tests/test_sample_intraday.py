"""The bundled intraday sample: committed file equals the generator, and it behaves as documented."""

from __future__ import annotations

import json
import math

import numpy as np

from volbench import sample_intraday as si
from volbench.data import load_prices
from volbench.intraday import infer_layout, realized_report


def test_committed_intraday_sample_equals_the_generator(tmp_path, sample_dir):
    entry = si.write_intraday_sample(tmp_path)
    name = si.IntradayParams().file
    assert (tmp_path / name).read_bytes() == (sample_dir / name).read_bytes(), (
        f"{name} differs from the generator; run 'make samples'")
    assert json.loads((sample_dir / "PARAMETERS.json").read_text())["intraday"] == json.loads(json.dumps(entry))


def test_intraday_sample_loads_cleanly_with_its_documented_layout(sample_dir):
    meta = json.loads((sample_dir / "PARAMETERS.json").read_text())["intraday"]
    (h,) = load_prices(sample_dir / meta["file"])
    assert h.findings == () and h.n == meta["sessions"] * meta["bars_per_session"]
    lay = infer_layout(h.dates)
    assert lay.bar_interval_seconds == 60 * meta["bar_minutes"] and lay.bars_per_session == meta["bars_per_session"]
    assert lay.n_sessions == meta["sessions"] and len(meta["planted_jumps"]) == meta["jumps"]


def test_bipower_at_the_suggested_sampling_covers_the_true_diffusive_vol(sample_dir):
    # the generator's daily variances (same seed) give the path's true diffusive vol; bipower variation
    # leaves the planted jumps out (Barndorff-Nielsen & Shephard 2004) and sampling where the signature
    # plot says the bid-ask noise stops mattering leaves the noise out; realized variance keeps the jumps
    p = si.IntradayParams()
    v = si.daily_variances(p, np.random.default_rng(si.INTRADAY_SEED))
    true = math.sqrt(252 * v[1:].mean())
    (h,) = load_prices(sample_dir / p.file)
    r = realized_report(h, sampling="auto")
    assert r.measures.sampling_bars == r.signature.suggested_sampling_bars > 1
    bv = r.estimates["bipower"]
    assert bv.ci_low < true < bv.ci_high
    assert r.estimates["realized"].vol > bv.vol
