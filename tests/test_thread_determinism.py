"""GARCH fits give the same numbers whatever the caller's BLAS thread setting (volbench.threads)."""

from __future__ import annotations

import json
import os
import subprocess
import sys

import pytest

from volbench.threads import FIT_THREADS


def _garch_json(path, omp: str | None) -> dict:
    env = {k: v for k, v in os.environ.items() if not k.endswith("_NUM_THREADS")}
    if omp is not None:
        env["OMP_NUM_THREADS"] = omp
    out = subprocess.run([sys.executable, "-m", "volbench.cli", "garch", str(path), "--dist", "t", "--model", "garch",
                          "--format", "json"], env=env, capture_output=True, text=True, timeout=300, check=True)
    return json.loads(out.stdout)


@pytest.mark.slow
def test_a_student_t_fit_is_identical_under_one_and_default_blas_threads(sample_dir):
    # common practice, no source: the same inputs must give bit-identical numbers; without the
    # pin (FIT_THREADS) this file's Student-t GARCH fit differs between 1 and 2 OpenBLAS threads
    path = sample_dir / "ironvale_mining.csv"
    one, default = _garch_json(path, "1"), _garch_json(path, None)
    assert FIT_THREADS == 1
    assert one == default
    fit = one["series"][0]["models"][0]
    assert fit["dist"] == "t" and fit["params"]["nu"] > 2  # a real Student-t fit, compared exactly above


def test_single_threaded_limits_blas_inside_and_restores_it():
    from threadpoolctl import threadpool_info

    from volbench.threads import single_threaded

    before = [i["num_threads"] for i in threadpool_info()]
    inside = single_threaded(lambda: [i["num_threads"] for i in threadpool_info()])()
    assert inside and all(n == FIT_THREADS for n in inside)
    assert [i["num_threads"] for i in threadpool_info()] == before
