"""Every setting of a run, as small frozen objects validated once, when they are built.

One object per group of settings: how files are read (:class:`~volbench.data.options.ImportOptions`),
the point estimates (:class:`EstimationSettings`), the volatility cone (:class:`ConeSettings`),
the Brownian-scaling check (:class:`ScalingSettings`), the GARCH-type fits
(:class:`GarchSettings`) and the option being priced (:class:`OptionSettings`); :class:`Settings`
carries one of each (``None`` for a part not requested). The command line builds them from its
options (``volbench.cli.options``), the window from its controls (``volbench.gui.state``); both
construct the same objects, so each value is checked by the same function
(:mod:`volbench.validate`) and gets the same message everywhere.

Adding a group (say, an option's life from an expiry date and a day basis, or an events file)
is one frozen class here, one field of :class:`Settings`, and one parser helper in
``volbench.cli.options``.
"""

from __future__ import annotations

import functools
import typing
from dataclasses import dataclass, field, fields, replace
from datetime import datetime
from typing import Any, ClassVar

from volbench import validate
from volbench.data.options import ImportOptions
from volbench.errors import VolbenchError
from volbench.types import (
    DEFAULT_ANNUALIZATION,
    DEFAULT_CONE_WINDOWS,
    DEFAULT_SEED,
    DEFAULT_SIMULATIONS,
    DEFAULT_TERM_HORIZONS,
    EWMA_LAMBDA,
    OptionType,
)

SCHEMA = 1
"""Version of the :meth:`Settings.as_dict` record."""


def _set(obj, name: str, value) -> None:
    object.__setattr__(obj, name, value)


def _flag(value, what: str) -> bool:
    if not isinstance(value, bool):
        raise VolbenchError(f"{what} must be true or false, got {value!r}")
    return value


class _Group:
    """What every settings group offers: a validated copy with changes."""

    def with_changes(self, **changes: Any):
        """A copy with some fields changed, validated again (unknown names are refused)."""
        known = {f.name for f in fields(self)}  # type: ignore[arg-type]
        unknown = sorted(set(changes) - known)
        if unknown:
            raise VolbenchError(f"unknown setting {unknown[0]!r}; choose among {', '.join(sorted(known))}")
        return replace(self, **changes)  # type: ignore[type-var]


@dataclass(frozen=True)
class EstimationSettings(_Group):
    """The point estimates and everything annualized.

    Attributes
    ----------
    window
        Bars in the estimation window ending at the as-of date; ``None`` (or ``"all"``) for the
        whole history.
    annualization
        Bars per year (every annualized figure of every group uses it).
    as_of
        Last date used (ISO ``YYYY-MM-DD``); ``None`` (or ``"last"``) for the last row of each file.
    confidence
        Level of the estimators' intervals.
    zero_mean, lam
        Close-to-close about zero instead of the sample mean; EWMA decay.
    """

    window: int | None = None
    annualization: float = DEFAULT_ANNUALIZATION
    as_of: str | None = None
    confidence: float = 0.95
    zero_mean: bool = False
    lam: float = EWMA_LAMBDA

    def __post_init__(self) -> None:
        _set(self, "window", validate.window(self.window, minimum=1))
        _set(self, "annualization", validate.annualization(self.annualization))
        as_of = validate.as_of(self.as_of)
        _set(self, "as_of", None if as_of is None else str(self.as_of).strip())
        _set(self, "confidence", validate.level(self.confidence))
        _set(self, "zero_mean", _flag(self.zero_mean, "zero_mean"))
        _set(self, "lam", validate.lam(self.lam))

    @property
    def options(self) -> dict[str, Any]:
        """Estimator options (``zero_mean``, ``lam``) as the estimator functions take them."""
        return {"zero_mean": self.zero_mean, "lam": self.lam}

    def as_dict(self) -> dict:
        return {"window": "all" if self.window is None else self.window, "annualization": self.annualization,
                "as_of": self.as_of, "confidence": self.confidence,
                "estimator_options": {"zero_mean": self.zero_mean, "ewma_lambda": self.lam}}


@dataclass(frozen=True)
class ConeSettings(_Group):
    """The volatility cone: estimator, windows, Hodges-Tompkins adjustment and the date range."""

    estimator: str = "close_to_close"
    windows: tuple[int, ...] = DEFAULT_CONE_WINDOWS
    hodges_tompkins: bool = False
    start: str | None = None
    end: str | None = None

    def __post_init__(self) -> None:
        _set(self, "estimator", validate.estimator(self.estimator))
        _set(self, "windows", validate.cone_windows(self.windows))
        _set(self, "hodges_tompkins", _flag(self.hodges_tompkins, "hodges_tompkins"))
        for name, what in (("start", "start date"), ("end", "end date")):
            value = getattr(self, name)
            if value is not None:
                validate.date(value, what)
                _set(self, name, str(value).strip())

    def as_dict(self) -> dict:
        return {"estimator": self.estimator, "windows": list(self.windows),
                "hodges_tompkins": self.hodges_tompkins, "start": self.start, "end": self.end}


@dataclass(frozen=True)
class ScalingSettings(_Group):
    """The Brownian-scaling check: horizons in bars (1 is always added) and the verdicts' level."""

    horizons: tuple[int, ...] | None = None
    alpha: float = 0.05

    def __post_init__(self) -> None:
        from volbench.scaling.check import DEFAULT_HORIZONS, check_horizons

        _set(self, "horizons", check_horizons(DEFAULT_HORIZONS if self.horizons is None else self.horizons))
        _set(self, "alpha", validate.significance(self.alpha))

    def as_dict(self) -> dict:
        return {"horizons": list(self.horizons), "alpha": self.alpha}


@dataclass(frozen=True)
class GarchSettings(_Group):
    """The GARCH-type fits: which models, innovations, mean, forecast horizons and simulation.

    Attributes
    ----------
    models
        Model keys from :data:`volbench.models.family.MODEL_REGISTRY`, or ``"all"`` (every
        registered model, ranked by BIC).
    dist, mean
        Innovation distribution (:data:`~volbench.models.family.DIST_REGISTRY`); ``"constant"``
        or ``"zero"`` mean return.
    horizons
        Option lives in bars of the forward-vol term structure.
    seed, simulations
        Seed and paths of simulated forecasts (models without a closed-form term structure).
    max_iterations
        Optimizer iteration cap (``None``: the library's default).
    processes
        Worker processes for a batch of series (``None``: one per CPU; 1: in this process).
    """

    models: tuple[str, ...] | str = "all"
    dist: str = "normal"
    mean: str = "constant"
    horizons: tuple[int, ...] = DEFAULT_TERM_HORIZONS
    seed: int = DEFAULT_SEED
    simulations: int = DEFAULT_SIMULATIONS
    max_iterations: int | None = None
    processes: int | None = 1

    MAX_SIMULATED_VALUES: ClassVar[int] = 20_000_000
    """Cap on paths x bars of one simulated forecast (``arch`` keeps several such arrays)."""

    def __post_init__(self) -> None:
        _set(self, "models", validate.models(self.models))
        _set(self, "dist", validate.distribution(self.dist))
        _set(self, "mean", validate.mean(self.mean))
        _set(self, "horizons", validate.term_horizons(self.horizons))
        _set(self, "seed", validate.seed(self.seed))
        _set(self, "simulations", validate.simulations(self.simulations))
        _set(self, "max_iterations", validate.max_iterations(self.max_iterations))
        if self.processes is not None and (isinstance(self.processes, bool) or not isinstance(self.processes, int)
                                           or self.processes < 1):
            raise VolbenchError(f"processes must be a whole number >= 1 or None, got {self.processes!r}")
        self.check_budget(self.models)

    def check_budget(self, models) -> None:
        """Refuse a simulated forecast too large for memory (paths x bars above the cap)."""
        from volbench.models.family import MODEL_REGISTRY

        simulated = [MODEL_REGISTRY[m] for m in models if not MODEL_REGISTRY[m].closed_form]
        if not simulated:
            return
        bars = max(252, max(self.horizons))
        if self.simulations * bars > self.MAX_SIMULATED_VALUES:
            raise VolbenchError(f"the {simulated[0].short} forecast would simulate {self.simulations} paths x "
                                f"{bars} bars, more than {self.MAX_SIMULATED_VALUES:,}; use fewer simulations "
                                "or shorter horizons")

    def as_dict(self) -> dict:
        return {"models": list(self.models), "dist": self.dist, "mean": self.mean, "horizons": list(self.horizons),
                "seed": self.seed, "simulations": self.simulations, "max_iterations": self.max_iterations}


@dataclass(frozen=True)
class OptionSettings(_Group):
    """The option being priced and the vol proposed for it.

    Attributes
    ----------
    pricing_vol
        Proposed annualized vol, a decimal below 5.
    days
        Option life in bars; years = days / annualization. ``None`` when the life comes from a
        :class:`LifeSettings` group (an expiry date, or days on a stated basis), resolved per history.
    strike, spot
        ``None``: at the money; the last close.
    rate, dividend_yield
        Continuously compounded decimals.
    kind
        ``"call"`` or ``"put"``.
    window
        Bars behind each estimator's candidate vol; ``None`` uses the option's life (``days``).
    premium
        An observed premium of this option, to solve for its implied vol (``None``: none).
    """

    pricing_vol: float
    days: int | None = None
    strike: float | None = None
    spot: float | None = None
    rate: float = 0.0
    dividend_yield: float = 0.0
    kind: OptionType = "call"
    window: int | None = None
    premium: float | None = None

    def __post_init__(self) -> None:
        _set(self, "premium", validate.price(self.premium, "premium"))
        _set(self, "pricing_vol", validate.pricing_vol(self.pricing_vol))
        if self.days is not None:
            _set(self, "days", validate.days(self.days))
        _set(self, "strike", validate.price(self.strike, "strike"))
        _set(self, "spot", validate.price(self.spot, "spot"))
        _set(self, "rate", validate.rate(self.rate, "rate"))
        _set(self, "dividend_yield", validate.rate(self.dividend_yield, "dividend yield"))
        _set(self, "kind", validate.option_kind(self.kind))
        if self.window is not None:
            w = validate.window(self.window, minimum=2)
            if w is None:
                raise VolbenchError("window must be a whole number of bars for a comparison, not 'all'")
            _set(self, "window", w)

    def as_dict(self) -> dict:
        return {"pricing_vol": self.pricing_vol, "days": self.days,
                "option": {"strike": self.strike, "rate": self.rate, "dividend_yield": self.dividend_yield,
                           "kind": self.kind, "spot": self.spot},
                "estimator_window": "days (the option's life)" if self.window is None else self.window}


@dataclass(frozen=True)
class DecisionSettings(_Group):
    """The decision an export documents: the vol chosen for pricing, why, and who prepared it.

    Attributes
    ----------
    vol
        The chosen annualized vol, a decimal below 5 (``None``: no vol chosen yet; the record
        still carries the rationale and the preparer).
    rationale, prepared_by
        Free text: why this vol, and the person or desk that prepared the record.
    """

    vol: float | None = None
    rationale: str = ""
    prepared_by: str = ""

    def __post_init__(self) -> None:
        if self.vol is not None:
            _set(self, "vol", validate.pricing_vol(self.vol, "decision vol"))
        for name in ("rationale", "prepared_by"):
            value = getattr(self, name)
            if value is None:
                value = ""
            if not isinstance(value, str):
                raise VolbenchError(f"{name.replace('_', ' ')} must be text, got {value!r}")
            _set(self, name, value.strip())

    def as_dict(self) -> dict:
        return {"vol": self.vol, "rationale": self.rationale, "prepared_by": self.prepared_by}


@dataclass(frozen=True)
class LifeSettings(_Group):
    """The option's life: an expiry date, or a number of days on a stated basis, and holidays.

    Resolved against a history's as-of date by :meth:`life` into a
    :class:`~volbench.pricing.daycount.OptionLife`: calendar days and years = calendar days / 365
    (ACT/365, the Black-Scholes-Merton time and discounting), and trading days (weekdays after the
    as-of date up to the expiry, less holidays: the variance horizon in bars). See
    docs/METHODS.md, "Day counts and the option's life".

    Attributes
    ----------
    expiry
        Expiry date (ISO ``YYYY-MM-DD``); give it or ``days``, not both.
    days
        Whole number of days >= 1 on ``basis``.
    basis
        ``"trading"`` (default: what a number of days has always meant here, bars of daily data)
        or ``"calendar"``.
    holidays
        Holidays file (read once, when the settings are built), a
        :class:`~volbench.pricing.daycount.Holidays`, or ``None``.
    """

    expiry: str | None = None
    days: int | None = None
    basis: str = "trading"
    holidays: Any = None

    def __post_init__(self) -> None:
        from pathlib import Path

        from volbench.pricing.daycount import Holidays, read_holidays

        if (self.expiry is None) == (self.days is None):
            raise VolbenchError("give the option's life either as an expiry date or as a number of days, not "
                                + ("both" if self.expiry is not None else "neither"))
        _set(self, "expiry", validate.expiry(self.expiry))
        if self.days is not None:
            _set(self, "days", validate.days(self.days))
        _set(self, "basis", validate.day_basis(self.basis))
        if isinstance(self.holidays, (str, Path)):
            _set(self, "holidays", read_holidays(self.holidays))
        elif self.holidays is not None and not isinstance(self.holidays, Holidays):
            raise VolbenchError(f"holidays must be a file or None, got {type(self.holidays).__name__}")

    def life(self, as_of):
        """The :class:`~volbench.pricing.daycount.OptionLife` from ``as_of`` (a date) to the expiry.

        Raises
        ------
        VolbenchError
            An expiry on or before ``as_of``; a life longer than a hundred years.
        """
        from volbench.pricing.daycount import option_life

        return option_life(str(as_of)[:10], expiry=self.expiry, days=self.days, basis=self.basis,
                           holidays=self.holidays)

    def as_dict(self) -> dict:
        from volbench.pricing.daycount import CONVENTION

        h = self.holidays
        return {"expiry": self.expiry, "days": self.days, "day_basis": self.basis,
                "holidays": None if h is None else {"source": str(h.source) if h.source else None,
                                                    "count": len(h), "findings": len(h.findings)},
                "convention": CONVENTION}


@dataclass(frozen=True)
class QuotesSettings(_Group):
    """A market quotes file for the comparison: its at-the-money implied vol becomes a candidate.

    Attributes
    ----------
    file
        Option-quotes CSV (:func:`volbench.market.quotes.read_quotes`), read once when the
        settings are built; afterwards the :class:`~volbench.market.quotes.OptionQuotes` read.
    date_format
        ``strftime`` format of the expiry column when it is not ISO.
    model
        GARCH-family model fitted for each quoted expiry's forecast (the per-expiry market table).
    """

    file: Any
    date_format: str | None = None
    model: str = "garch"

    def __post_init__(self) -> None:
        from volbench.market.quotes import OptionQuotes, read_quotes

        _set(self, "model", validate.model(self.model))
        if not isinstance(self.file, OptionQuotes):
            _set(self, "file", read_quotes(self.file, date_format=self.date_format))

    def as_dict(self) -> dict:
        return {**self.file.provenance(), "date_format": self.date_format, "model": self.model}


@dataclass(frozen=True)
class IntradaySettings(_Group):
    """How intraday files are cut into sessions before they are analysed by day.

    Attributes
    ----------
    session_break
        ``None``: one session per calendar date; otherwise a gap such as ``"4h"``: a pause between
        bars longer than this starts a new session (for sessions that cross midnight).
    """

    session_break: str | None = None

    def __post_init__(self) -> None:
        seconds = validate.session_break(self.session_break)
        _set(self, "session_break", None if seconds is None else str(self.session_break).strip())

    @property
    def seconds(self) -> float | None:
        """The break in seconds (``None``: calendar dates)."""
        return validate.session_break(self.session_break)

    def as_dict(self) -> dict:
        return {"session_break": self.session_break,
                "sessions": "calendar date" if self.session_break is None else f"gap longer than {self.session_break}"}


@dataclass(frozen=True)
class HarSettings(_Group):
    """The HAR-RV forecast of realized variance (intraday files): forward-vol horizons in trading days."""

    horizons: tuple[int, ...] = DEFAULT_TERM_HORIZONS

    def __post_init__(self) -> None:
        _set(self, "horizons", validate.term_horizons(self.horizons))

    def as_dict(self) -> dict:
        return {"horizons": list(self.horizons)}


@dataclass(frozen=True)
class EventsSettings(_Group):
    """The instrument's scheduled events (results, reports), read once from an events CSV.

    Attributes
    ----------
    file
        Path of the events CSV (``date[,label][,timing]``, see :func:`volbench.events.read_events`).
    date_format
        ``strftime`` format of its dates; ISO (YYYY-MM-DD) when ``None``.
    calendar
        The events read from ``file`` (filled when the object is built, so a missing or
        unreadable file is refused before any work; bad rows are findings naming their line).
    """

    file: str
    date_format: str | None = None
    calendar: Any = field(default=None, compare=False, repr=False)

    def __post_init__(self) -> None:
        from volbench.events import read_events

        _set(self, "file", str(self.file).strip())
        if not self.file:
            raise VolbenchError("events file: give the path of an events CSV (date,label,timing)")
        _set(self, "calendar", read_events(self.file, date_format=self.date_format))

    def as_dict(self) -> dict:
        c = self.calendar
        return {"file": self.file, "sha256": c.sha256, "events": len(c), "date_format": self.date_format,
                "findings": [f.as_dict() for f in c.findings]}


@dataclass(frozen=True)
class Settings:
    """One run's settings: a group object per part, ``None`` for a part not requested.

    Attributes
    ----------
    import_options, estimation
        Always present: how files are read; the point estimates (and the annualization every
        other part uses).
    cone, scaling, garch, option
        The volatility cone, the scaling check, the GARCH-type fits and the option to compare;
        ``None`` when not requested.
    decision
        The decision record (chosen vol, rationale, preparer); ``None`` when none is made.
    life
        The option's life as an expiry date or days on a basis (``None``: the life is
        ``option.days`` bars, years = days / annualization).
    quotes
        A market quotes file whose at-the-money implied vol joins the comparison (``None``: none).
    intraday
        How intraday files are cut into sessions (``None``: by calendar date).
    har
        The HAR-RV forecast candidate of intraday files (``None``: not requested).
    events
        The instrument's scheduled events (:class:`EventsSettings`); ``None`` when not given.
    created
        Time stamped on outputs (default: now, UTC).
    """

    import_options: ImportOptions = field(default_factory=ImportOptions)
    estimation: EstimationSettings = field(default_factory=EstimationSettings)
    cone: ConeSettings | None = field(default_factory=ConeSettings)
    scaling: ScalingSettings | None = field(default_factory=ScalingSettings)
    garch: GarchSettings | None = None
    option: OptionSettings | None = None
    decision: DecisionSettings | None = None
    life: LifeSettings | None = None
    quotes: QuotesSettings | None = None
    intraday: IntradaySettings | None = field(default_factory=IntradaySettings)
    har: HarSettings | None = field(default_factory=HarSettings)
    events: EventsSettings | None = None
    created: datetime | None = None

    def __post_init__(self) -> None:
        for name, cls in group_types().items():
            value = getattr(self, name)
            if value is None and name in ("import_options", "estimation"):
                raise VolbenchError(f"{name} settings are required")
            if value is not None and not isinstance(value, cls):
                raise VolbenchError(f"{name} must be {cls.__name__}, got {type(value).__name__}")

    @property
    def annualization(self) -> float:
        return self.estimation.annualization

    def with_groups(self, **groups) -> Settings:
        """A copy with some groups replaced (``None`` switches a part off)."""
        return replace(self, **groups)

    def as_dict(self) -> dict:
        """JSON-ready record of every setting (the provenance of an export)."""
        out = {"schema": SCHEMA, **self.estimation.as_dict(), "import": self.import_options.as_dict()}
        for name in group_types():
            if name in ("import_options", "estimation"):
                continue
            group = getattr(self, name)
            out[RECORD_NAMES.get(name, name)] = None if group is None else group.as_dict()
        return out


RECORD_NAMES = {"option": "pricing"}
"""Groups recorded under another name in :meth:`Settings.as_dict` (the export's provenance)."""


@functools.cache
def group_types() -> dict[str, type]:
    """Every group field of :class:`Settings` and the class it holds, read from the annotations
    (so a new group is one class and one field)."""
    hints = typing.get_type_hints(Settings)
    out = {}
    for f in fields(Settings):
        kinds = [a for a in (typing.get_args(hints[f.name]) or (hints[f.name],)) if a is not type(None)]
        if len(kinds) == 1 and hasattr(kinds[0], "as_dict"):
            out[f.name] = kinds[0]
    return out
