"""Extending the window: a pane is its file plus one registration line, a derived number is one
job entry, a new GARCH-type variant reaches the controls from its spec alone, and every
background job stops when asked."""

from __future__ import annotations

from pathlib import Path

import pytest
from PySide6.QtWidgets import QComboBox, QLabel, QVBoxLayout

from volbench.data import load_prices
from volbench.errors import Cancelled
from volbench.gui import panes
from volbench.gui.jobs import (
    JOBS,
    BatchRequest,
    Context,
    ExportRequest,
    Job,
    LoadRequest,
    SurveyRequest,
)
from volbench.gui.panes.base import Pane
from volbench.models import MODEL_REGISTRY, ModelSpec
from volbench.settings import Settings


def _gap_points(ctx, progress, cancel):
    """A derived number for the probe pane: the widest gap between a candidate and the pricing vol."""
    c = ctx.result("comparison", object)
    return float(c.candidates["gap_points"].abs().max())


class ProbePane(Pane):
    """A throwaway pane: the whole of what a new pane needs (plus one line in PANES)."""

    key, title = "probe", "Probe"

    def __init__(self, state, results, parent=None) -> None:
        super().__init__(state, results, parent)
        self.label = QLabel("nothing yet")
        self.label.setObjectName("probe_label")
        QVBoxLayout(self).addWidget(self.label)
        results.updated.connect(self._on_results)

    def _on_results(self, kinds) -> None:
        if "widest_gap" in kinds and self.results.get("widest_gap") is not None:
            self.label.setText(f"widest gap {self.results.get('widest_gap'):.2f} vol points")


@pytest.fixture
def probe(monkeypatch):
    monkeypatch.setattr(panes, "PANES", [*panes.PANES, ProbePane])  # the registration line
    monkeypatch.setitem(JOBS, "widest_gap", Job("widest_gap", frozenset({"comparison"}), _gap_points, float))


def test_a_registered_pane_and_job_show_up_and_follow_the_state(probe, make_window, kestrel):
    w = make_window()
    assert w.tabs.tabText(w.tabs.indexOf(w.panes["probe"])) == "Probe"
    w.open_files([kestrel])
    label = w.findChild(QLabel, "probe_label")
    first = label.text()
    comp = w.results.get("comparison")
    assert first == f"widest gap {comp.candidates['gap_points'].abs().max():.2f} vol points"
    w.state.set("pricing_vol", 0.6)  # the job re-runs because the comparison did; the pane follows
    assert label.text() != first and w.results.get("widest_gap") > 30


def test_a_registered_model_variant_is_offered_by_the_controls(monkeypatch, make_window):
    spec = ModelSpec(key="garch21", label="GARCH(2,1)", short="GARCH(2,1)", arch={"vol": "GARCH", "p": 2, "q": 1},
                     persistence={"alpha[1]": 1.0, "alpha[2]": 1.0, "beta[1]": 1.0},
                     response=("alpha[1]", "alpha[2]"))
    monkeypatch.setitem(MODEL_REGISTRY, spec.key, spec)
    w = make_window(garch_model="garch21")
    combo = w.findChild(QComboBox, "garch_model_combo")
    assert combo.findData("garch21") >= 0 and combo.currentData() == "garch21"
    assert w.state.choices.group("garch").models == ("garch21",)


# ------------------------------------------------------------------------ Cancel, job by job
@pytest.fixture(scope="module")
def kestrel_history():
    path = Path(__file__).resolve().parents[2] / "sample_prices" / "kestrel_orchards.csv"
    return load_prices(path)[0]  # a frozen history: safe to share between the tests of this module


def _context(kind: str, h, sample_dir: Path, tmp_path: Path) -> Context:
    requests = {
        "load": LoadRequest((str(sample_dir / "kestrel_orchards.csv"),), Settings().import_options),
        "export": ExportRequest(tmp_path / "x.json", (h,)),
        "garch_all": BatchRequest((h,), 1),
        "survey": SurveyRequest((str(sample_dir),), 1),
    }
    from volbench.gui.state import Choices

    return Context(h, Choices().settings(), {}, requests.get(kind))


@pytest.mark.parametrize("kind", [k for k, j in JOBS.items() if j.background])
def test_every_background_job_stops_when_cancel_is_asked(kind, kestrel_history, sample_dir, tmp_path):
    told = []
    with pytest.raises(Cancelled):
        JOBS[kind].run(_context(kind, kestrel_history, sample_dir, tmp_path), lambda *a: told.append(a),
                       lambda: True)
    assert not (tmp_path / "x.json").exists()


def test_the_garch_job_stops_between_two_fits(kestrel_history, sample_dir, tmp_path):
    ctx = _context("garch", kestrel_history, sample_dir, tmp_path)
    started = []
    with pytest.raises(Cancelled, match="cancelled after 1 of 3 models"):
        JOBS["garch"].run(ctx, lambda done, total, text: started.append(text), lambda: len(started) >= 1)
    assert started == ["Fitting GARCH(1,1) to kestrel_orchards"]
