"""Fixtures for export tests: small bundles built from the sample market or simulated bars."""

from __future__ import annotations

from datetime import UTC, datetime

import pytest

from volbench.data import load_many
from volbench.export import build_bundle
from volbench.settings import EstimationSettings, Settings

CREATED = datetime(2024, 10, 18, 7, 30, 5, tzinfo=UTC)


@pytest.fixture
def sample_histories(sample_dir):
    """load(names...) -> histories from sample_prices (default: one OHLC file with findings and one close-only)."""

    def _load(*names, **kw):
        names = names or ("quillon_textiles.csv", "vell_harbour_index.csv")
        return load_many([sample_dir / n for n in names], **kw)

    return _load


@pytest.fixture
def make_bundle(sample_histories):
    """make_bundle(histories=None, given=None, **settings groups) with a fixed creation time.

    Groups are :class:`volbench.settings.Settings` fields (``estimation=EstimationSettings(...)``,
    ``option=OptionSettings(...)``, ``scaling=None``...); the estimation window defaults to 20 bars.
    """

    def _make(histories=None, *, given=None, **groups):
        groups.setdefault("estimation", EstimationSettings(window=20))
        settings = Settings(created=CREATED, **groups)
        return build_bundle(histories if histories is not None else sample_histories(), settings, given=given)

    return _make
