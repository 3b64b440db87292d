"""A new GARCH-type variant is one spec entry: registered here in a test, it fits, checks,
compares, exports and runs from the command line without any other change.

The variant is a GARCH(2,1) (two ARCH lags) with generalized-error innovations, neither of which
volbench ships; ``arch`` (the reference library) fits the same model directly for comparison.
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from arch import arch_model
from arch.univariate import GeneralizedError

from volbench import analysis
from volbench.cli import main
from volbench.data.history import PriceHistory
from volbench.export import build_bundle
from volbench.models import DIST_REGISTRY, MODEL_REGISTRY, DistSpec, ModelSpec, fit_garch
from volbench.settings import GarchSettings, OptionSettings, Settings

GARCH21 = ModelSpec(
    key="garch21", label="GARCH(2,1)", short="GARCH(2,1)",
    arch={"vol": "GARCH", "p": 2, "o": 0, "q": 1},
    persistence={"alpha[1]": 1.0, "alpha[2]": 1.0, "beta[1]": 1.0}, response=("alpha[1]", "alpha[2]"),
    colour="#44AA99", dash="dash", source="Bollerslev (1986), Journal of Econometrics 31(3)",
    assumes="Two lags of squared shocks and one of variance.",
)
GED = DistSpec("ged", "generalized error", "ged", {"nu": (1.01, 500.0)})  # arch's bounds on its shape


@pytest.fixture
def variant(monkeypatch):
    monkeypatch.setitem(MODEL_REGISTRY, GARCH21.key, GARCH21)
    monkeypatch.setitem(DIST_REGISTRY, GED.key, GED)


@pytest.fixture
def path21():
    """A GARCH(2,1) path with GED innovations simulated by arch (percent returns) and its history."""
    sim = arch_model(None, p=2, o=0, q=1, dist="ged")
    sim.distribution = GeneralizedError(seed=np.random.default_rng(21))
    y = sim.simulate([0.03, 0.02, 0.05, 0.06, 0.85, 1.5], 3000)["data"].to_numpy()
    close = 100.0 * np.exp(np.concatenate(([0.0], np.cumsum(y / 100.0))))
    dates = pd.date_range("2001-01-02", periods=close.size, freq="B").to_numpy()
    return PriceHistory(name="sim21", source=None, dates=dates, close=close), y


def test_the_variant_fits_as_arch_fits_it(variant, path21):
    h, y = path21
    fit = fit_garch(h, "garch21", GarchSettings(models=("garch21",), dist="ged"))
    # Reference library: the same model fitted by arch directly on the percent returns
    ref = arch_model(y, p=2, o=0, q=1, dist="ged", rescale=False).fit(disp="off", show_warning=False).params
    assert fit.usable and fit.forecast_method == "analytic"
    assert fit.params["alpha[2]"] == pytest.approx(ref["alpha[2]"], rel=1e-6)
    assert fit.params["omega"] == pytest.approx(ref["omega"] / 100**2, rel=1e-6)
    assert fit.persistence == pytest.approx(ref["alpha[1]"] + ref["alpha[2]"] + ref["beta[1]"], rel=1e-6)
    assert fit.label == "GARCH(2,1)" and fit.candidate_label == "GARCH(2,1) (ged)"
    assert fit.as_dict()["label"] == "GARCH(2,1)"


def test_the_variant_is_a_comparison_candidate_and_an_export_row(variant, path21):
    h, _ = path21
    settings = Settings(garch=GarchSettings(models=("garch", "garch21"), dist="ged"), scaling=None,
                        option=OptionSettings(pricing_vol=0.25, days=21))
    comp = analysis.comparison_for(h, settings)
    rows = comp.table.set_index("key")
    garch21 = fit_garch(h, "garch21", settings.garch)
    assert rows.loc["garch:garch21", "label"] == "GARCH(2,1) (ged)"
    assert rows.loc["garch:garch21", "vol"] == pytest.approx(garch21.forward_vol(21), rel=1e-12)
    bundle = build_bundle([h], settings)
    table = bundle.table("garch").set_index("model")
    assert table.loc["garch21", "label"] == "GARCH(2,1)"
    assert table.loc["garch21", "param_alpha[2]"] == pytest.approx(garch21.params["alpha[2]"], rel=1e-12)
    assert np.isnan(table.loc["garch", "param_alpha[2]"])
    assert "garch:garch21" in set(bundle.table("comparison")["key"])


def test_the_variant_runs_from_the_command_line(variant, path21, tmp_path, capsys):
    h, _ = path21
    f = tmp_path / "sim21.csv"
    pd.DataFrame({"Date": pd.DatetimeIndex(h.dates).strftime("%Y-%m-%d"), "Close": h.close}).to_csv(f, index=False)
    assert main(["garch", str(f), "--model", "garch21", "--dist", "ged", "--format", "json"]) == 0
    out = json.loads(capsys.readouterr().out)
    model = out["series"][0]["models"][0]
    assert model["model"] == "garch21" and model["label"] == "GARCH(2,1)" and model["dist"] == "ged"
    assert main(["garch", str(f), "--model", "figarch"]) == 2
    assert "unknown model 'figarch'; choose one of: garch, gjr, egarch, garch21" in capsys.readouterr().err
