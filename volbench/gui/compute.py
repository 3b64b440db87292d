"""Thin, Qt-free calls into the core for each pane: the GUI's only route to numbers.

Each function imports its core module lazily; a module missing from this build raises
:class:`NotInBuild` so the pane can say "not available in this build" instead of crashing. No
formula lives here: only argument plumbing, so the CLI and the window always agree.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from volbench.data.history import PriceHistory
from volbench.errors import EstimatorUnavailable
from volbench.estimators import (
    ESTIMATOR_KEYS,
    EstimateReport,
    RollingVol,
    estimate_all,
    rolling_vol,
)

Progress = Callable[[int, int, str], None]
Cancel = Callable[[], bool]


class NotInBuild(Exception):
    """A core module this pane needs is not part of this build."""

    def __init__(self, feature: str) -> None:
        super().__init__(f"{feature}: not available in this build")
        self.feature = feature


@dataclass(frozen=True)
class RollingSet:
    """Rolling vols of every estimator for one setting; ``unavailable`` holds the reasons."""

    window: int
    annualization: float
    series: dict[str, RollingVol]
    unavailable: dict[str, str]
    span: tuple[np.datetime64, np.datetime64] | None = None  # first and last date of the history


def rolling_all(history: PriceHistory, window: int, annualization: float,
                keys: Sequence[str] = ESTIMATOR_KEYS) -> RollingSet:
    """:func:`volbench.estimators.rolling_vol` for every estimator key (reasons for the rest)."""
    series: dict[str, RollingVol] = {}
    unavailable: dict[str, str] = {}
    for key in keys:
        try:
            series[key] = rolling_vol(history, key, window, annualization=annualization)
        except EstimatorUnavailable as exc:
            unavailable[key] = exc.reason
    span = (history.dates[0], history.dates[-1]) if history.n else None
    return RollingSet(window, annualization, series, unavailable, span)


def estimates(history: PriceHistory, window: int, annualization: float) -> EstimateReport:
    """:func:`volbench.estimators.estimate_all` with every estimator, as the CLI calls it."""
    return estimate_all(history, window, annualization=annualization)


def scaling(history: PriceHistory, annualization: float, progress: Progress | None = None,
            cancel: Cancel | None = None):
    """:func:`volbench.scaling.scaling_check` with its default horizons."""
    try:
        from volbench.scaling import scaling_check
    except ImportError:
        raise NotInBuild("Scaling check") from None
    return scaling_check(history, annualization=annualization)


def garch(history: PriceHistory, model: str, dist: str, annualization: float,
          progress: Progress | None = None, cancel: Cancel | None = None):
    """:func:`volbench.models.fit_models` for ``model`` (``"all"``: every model in the family)."""
    try:
        from volbench.models import MODELS, fit_models
    except ImportError:
        raise NotInBuild("GARCH models") from None
    models = tuple(MODELS) if model == "all" else (model,)
    return fit_models(history, models=models, dist=dist, annualization=annualization)


def cone(history: PriceHistory, estimator: str, annualization: float):
    """:func:`volbench.pricing.cone.vol_cone` with its default windows."""
    try:
        from volbench.pricing.cone import vol_cone
    except ImportError:
        raise NotInBuild("Volatility cone") from None
    return vol_cone(history, estimator, annualization=annualization)


def option_spec(strike: float | None, rate: float, dividend_yield: float, kind: str):
    """A :class:`volbench.pricing.compare.OptionSpec` (``strike`` ``None``: at the money)."""
    try:
        from volbench.pricing.compare import OptionSpec
    except ImportError:
        raise NotInBuild("Comparison") from None
    return OptionSpec(strike=strike, rate=rate, dividend_yield=dividend_yield, kind=kind)


def comparison(history: PriceHistory, pricing_vol: float, days: int, *, strike: float | None,
               rate: float, dividend_yield: float, kind: str, annualization: float,
               window: int | None = None, scaling_result=None, garch_result=None,
               cone_estimator: str = "close_to_close", cone_result=None):
    """:func:`volbench.pricing.compare.compare` with any fitted models.

    Candidates are each estimator over ``window`` bars; ``None`` (what the window uses) means the
    option's life, as ``volbench compare`` does without ``--window``.
    """
    try:
        from volbench.pricing.compare import compare
    except ImportError:
        raise NotInBuild("Comparison") from None
    option = option_spec(strike, rate, dividend_yield, kind)
    return compare(history, pricing_vol, days, option=option, annualization=annualization,
                   window=window, scaling=scaling_result, garch=garch_result,
                   cone_estimator=cone_estimator, cone=cone_result)


def table_tsv(frame) -> str:
    """Tab-separated text of a table via the export module (plain pandas when it is missing)."""
    try:
        from volbench.export import table_to_tsv
    except ImportError:
        return frame.to_csv(sep="\t", index=False)
    return table_to_tsv(frame)


def fit_all(histories: Sequence[PriceHistory], model: str, dist: str, annualization: float, *,
            processes: int | None = None, progress: Progress | None = None, cancel: Cancel | None = None):
    """:func:`volbench.models.fit_many` over every history (worker processes, progress, cancel).

    Returns ``None`` when cancelled (what finished is dropped: the batch is all or nothing).
    """
    try:
        from volbench.models import MODELS, FitCancelled, fit_many
    except ImportError:
        raise NotInBuild("GARCH models") from None
    models = tuple(MODELS) if model == "all" else (model,)
    try:
        return fit_many(histories, models=models, dist=dist, annualization=annualization,
                        processes=processes, progress=progress, cancel=cancel)
    except FitCancelled:
        return None


def export_bundle(histories: Sequence[PriceHistory], *, window: int, annualization: float,
                  as_of: str | None, pricing_vol: float, days: int, strike: float | None, rate: float,
                  dividend_yield: float, kind: str, cone_estimator: str, garch_model: str,
                  garch_dist: str, import_settings: dict, given: dict, progress: Progress | None = None):
    """:func:`volbench.export.build_bundle` with the window's settings and results already on screen.

    ``given`` maps section -> series -> result (as :func:`build_bundle` takes it); comparisons the
    export computes itself use the option's life as the estimator window, like the screen.
    """
    try:
        from volbench.export import build_bundle
    except ImportError:
        raise NotInBuild("Export") from None
    try:
        option = option_spec(strike, rate, dividend_yield, kind)
    except NotInBuild:
        option = {"strike": strike, "rate": rate, "dividend_yield": dividend_yield, "kind": kind}
    kw = {}
    if garch_model != "all":
        kw["garch_models"] = (garch_model,)
    return build_bundle(histories, window=window, annualization=annualization, as_of=as_of,
                        pricing_vol=pricing_vol, days=days, option=option,
                        cone_estimator=cone_estimator,
                        include_scaling=True, include_garch=True, garch_dist=garch_dist,
                        import_settings=import_settings, results=given, progress=progress, **kw)


def write_bundle(path, bundle, *, overwrite: bool):
    """:func:`volbench.export.write_export` (atomic; refuses to replace unless ``overwrite``)."""
    try:
        from volbench.export import write_export
    except ImportError:
        raise NotInBuild("Export") from None
    return write_export(path, bundle, overwrite=overwrite)
