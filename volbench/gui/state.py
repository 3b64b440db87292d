"""The workbench's state model: what the user chose, announced on change.

One :class:`WorkbenchState` holds every user choice (loaded histories, the selected series and a
:class:`Choices`). It owns no computation and no widgets: controls write to it with
:meth:`WorkbenchState.set`, and it emits :attr:`WorkbenchState.changed` with the names of the
fields that really changed, so the controller recomputes only what depends on them and panes
re-render.

:class:`Choices` is made of the same settings objects the command line builds
(:class:`~volbench.data.options.ImportOptions`, :class:`~volbench.settings.EstimationSettings`,
:class:`~volbench.settings.ConeSettings`, ...): a control names one field (``"window"``,
``"pricing_vol"``), :data:`FIELDS` says which group and attribute holds it, and changing it
rebuilds that group, which validates the value with :mod:`volbench.validate`. So a bad value gets
the command line's message, word for word.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field, fields, replace
from typing import Any

from PySide6.QtCore import QObject, Signal

from volbench import validate
from volbench.data.history import PriceHistory
from volbench.data.options import ImportOptions
from volbench.errors import VolbenchError
from volbench.estimators import ESTIMATOR_KEYS
from volbench.models.family import MODEL_REGISTRY
from volbench.settings import (
    ConeSettings,
    EstimationSettings,
    EventsSettings,
    GarchSettings,
    HarSettings,
    IntradaySettings,
    LifeSettings,
    OptionSettings,
    QuotesSettings,
    ScalingSettings,
    Settings,
)


@dataclass(frozen=True)
class LifeChoice:
    """The window's option life: days on a basis, or an expiry date, which wins when set.

    The window keeps the days while an expiry is shown (so switching back restores them);
    :meth:`settings` gives the :class:`~volbench.settings.LifeSettings` every job runs with, the
    object the command line builds from ``--days``/``--day-basis`` or ``--expiry``.
    """

    days: int = 30
    basis: str = "trading"
    expiry: str | None = None
    holidays: str | None = None
    read: Any = field(default=None, compare=False, repr=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "days", validate.days(self.days))
        object.__setattr__(self, "basis", validate.day_basis(self.basis))
        object.__setattr__(self, "expiry", validate.expiry(self.expiry))
        if self.holidays is not None and self.read is None:  # read once, when chosen (bad rows: findings)
            from volbench.pricing.daycount import read_holidays

            object.__setattr__(self, "read", read_holidays(self.holidays))

    def with_changes(self, **changes: Any) -> LifeChoice:
        read = None if "holidays" in changes else self.read  # a new file is read in __post_init__
        return replace(self, read=read, **changes)

    def settings(self) -> LifeSettings:
        if self.expiry is not None:
            return LifeSettings(expiry=self.expiry, holidays=self.read)
        return LifeSettings(days=self.days, basis=self.basis, holidays=self.read)


@dataclass(frozen=True)
class QuotesChoice:
    """The window's market quotes file (``None``: none), read once when chosen; :meth:`settings`
    gives the :class:`~volbench.settings.QuotesSettings` jobs run with (``None`` without a file)."""

    file: str | None = None
    read: Any = field(default=None, compare=False, repr=False)

    def __post_init__(self) -> None:
        if self.file is not None and self.read is None:
            object.__setattr__(self, "read", QuotesSettings(file=self.file))

    def with_changes(self, **changes: Any) -> QuotesChoice:
        return QuotesChoice(**{"file": self.file, **changes})

    def settings(self) -> QuotesSettings | None:
        return self.read



@dataclass(frozen=True)
class ScreenChoices:
    """Choices of the window that no command-line group holds.

    Attributes
    ----------
    linked
        One window per screen: the comparison's estimator candidates use the estimation Window
        (as the estimates table and the rolling plot do). Unlinked, they use the option's life,
        as ``volbench compare`` does without ``--window``. See DEVELOPERS.md, "One window of truth".
    """

    linked: bool = True

    def __post_init__(self) -> None:
        for f in fields(self):
            if not isinstance(getattr(self, f.name), bool):
                raise VolbenchError(f"{f.name} must be true or false, got {getattr(self, f.name)!r}")

    def with_changes(self, **changes: Any) -> ScreenChoices:
        return replace(self, **changes)


SCREEN_GROUP = "screen"
"""The group of :class:`ScreenChoices` (held by :class:`Choices`, not passed to the core)."""

GROUPS: dict[str, Callable[[], Any]] = {
    "import_options": ImportOptions,
    "estimation": lambda: EstimationSettings(window=20),
    "cone": ConeSettings,
    "scaling": ScalingSettings,
    "garch": GarchSettings,
    "option": lambda: OptionSettings(pricing_vol=0.25),
    "life": LifeChoice,
    "quotes": QuotesChoice,
    "intraday": IntradaySettings,
    "har": HarSettings,
    "events": lambda: None,
    SCREEN_GROUP: ScreenChoices,
}
"""The settings groups the window holds, with the window's defaults (the option's life in
:class:`LifeChoice`, given to jobs as :class:`~volbench.settings.LifeSettings`)."""


def _window(value):
    w = validate.window(value, minimum=1)
    if w is None:
        raise VolbenchError("window must be a whole number of bars, not 'all', in the window's settings")
    return w


def _garch_models(value):
    return validate.models(value)


def _garch_model_shown(models) -> str:
    return "all" if tuple(models) == tuple(MODEL_REGISTRY) else models[0]


def _strike(value):
    return None if value in (None, "", 0, 0.0) else value


def _optional_text(value):
    return None if value in (None, "") else value


@dataclass(frozen=True)
class Field:
    """Where one control's value lives: ``group.attribute``, with conversions both ways."""

    group: str | None
    attribute: str
    to_group: Callable[[Any], Any] = lambda v: v
    from_group: Callable[[Any], Any] = lambda v: v


FIELDS: dict[str, Field] = {
    "window": Field("estimation", "window", _window),
    "annualization": Field("estimation", "annualization"),
    "as_of": Field("estimation", "as_of", _optional_text),
    "pricing_vol": Field("option", "pricing_vol"),
    "days": Field("life", "days"),
    "day_basis": Field("life", "basis"),
    "expiry": Field("life", "expiry", _optional_text),
    "holidays_file": Field("life", "holidays", _optional_text),
    "premium": Field("option", "premium", _optional_text),
    "quotes_file": Field("quotes", "file", _optional_text),
    "strike": Field("option", "strike", _strike),
    "rate": Field("option", "rate"),
    "dividend_yield": Field("option", "dividend_yield"),
    "kind": Field("option", "kind"),
    "garch_model": Field("garch", "models", _garch_models, _garch_model_shown),
    "garch_dist": Field("garch", "dist"),
    "cone_estimator": Field("cone", "estimator"),
    "exclude_flagged": Field("import_options", "exclude_flagged"),
    "date_format": Field("import_options", "date_format", _optional_text),
    "delimiter": Field("import_options", "delimiter", _optional_text),
    "decimal": Field("import_options", "decimal", _optional_text),
    "thousands": Field("import_options", "thousands", _optional_text),
    "use_adjusted": Field("import_options", "use_adjusted"),
    "adjust_splits": Field("import_options", "adjust_splits"),
    "gap_days": Field("import_options", "gap_days"),
    "session_break": Field("intraday", "session_break", _optional_text),
    "estimators": Field(None, "estimators", lambda v: tuple(validate.estimator(str(k)) for k in v)),
    "events_file": Field("events", "file", _optional_text),
    "linked": Field(SCREEN_GROUP, "linked"),
    "hodges_tompkins": Field("cone", "hodges_tompkins"),
    "ewma_lambda": Field("estimation", "lam"),
}
"""Every control's field name -> the settings group and attribute that hold it."""

OPTIONAL_GROUPS: dict[str, Callable[[dict], Any]] = {
    "events": lambda attrs: None if attrs.get("file") is None else EventsSettings(**attrs),
}
"""Groups that are off (``None``) until their field is set: built anew from it, never changed in place."""

IMPORT_FIELDS = frozenset({"date_format", "delimiter", "decimal", "thousands", "use_adjusted", "adjust_splits",
                           "gap_days", "session_break"})
"""Choices that change how files are read: changing one reads the files again."""


class Choices:
    """Every user setting of the window, held as the settings objects the command line builds.

    Build it from field names (``Choices(window=40, pricing_vol=0.3)``); read a field as an
    attribute (``choices.window``) or a whole group (``choices.group("option")``);
    :meth:`settings` gives the :class:`~volbench.settings.Settings` every job runs with.
    """

    __slots__ = ("_estimators", "_groups")

    def __init__(self, **values: Any) -> None:
        self._groups = {name: make() for name, make in GROUPS.items()}
        self._estimators: tuple[str, ...] = ESTIMATOR_KEYS
        self._apply(values)

    # ------------------------------------------------------------------ reading
    def __getattr__(self, name: str):
        field = FIELDS.get(name)
        if field is None:
            raise AttributeError(name)
        if field.group is None:
            return field.from_group(self._estimators)
        group = self._groups[field.group]
        if group is None:  # an optional group not given (no events file)
            return None
        value = group.quality.gap_days if field.attribute == "gap_days" else getattr(group, field.attribute)
        return field.from_group(value)

    def group(self, name: str):
        """The settings object of group ``name`` (``"estimation"``, ``"option"``, ...)."""
        return self._groups[name]

    def settings(self) -> Settings:
        """Every group as the one :class:`Settings` a job runs with (the same object the CLI builds).

        With ``linked`` (the default) the comparison's estimator window is the estimation window,
        so the estimates table, the rolling plot, the comparison and an export agree.
        """
        groups = {k: (g.settings() if isinstance(g, (LifeChoice, QuotesChoice)) else g)
                  for k, g in self._groups.items() if k != SCREEN_GROUP}
        option, window = groups.get("option"), groups["estimation"].window
        if option is not None and self._groups[SCREEN_GROUP].linked and window is not None and window >= 2:
            groups["option"] = option.with_changes(window=window)
        return Settings(**groups)

    @property
    def comparison_window(self) -> int | None:
        """Bars behind the comparison's estimator candidates (``None``: the option's life in trading days)."""
        o = self.settings().option
        return None if o is None else o.window

    def import_options(self) -> ImportOptions:
        """How files are read. Flagged rows are kept at import: the window applies the choice to what it shows."""
        return self._groups["import_options"].with_changes(exclude_flagged=False)

    def __eq__(self, other) -> bool:
        return isinstance(other, Choices) and self.as_dict() == other.as_dict()

    def __hash__(self) -> int:
        return hash(tuple(sorted((k, str(v)) for k, v in self.as_dict().items())))

    def __repr__(self) -> str:
        return f"Choices({', '.join(f'{k}={v!r}' for k, v in self.as_dict().items())})"

    # ------------------------------------------------------------------ changing
    def _apply(self, values: dict) -> None:
        changes: dict[str, dict[str, Any]] = {}
        for name, value in values.items():
            field = FIELDS.get(name)
            if field is None:
                raise AttributeError(f"Choices has no field {name!r}")
            converted = field.to_group(value)
            if field.group is None:
                self._estimators = converted
            else:
                changes.setdefault(field.group, {})[field.attribute] = converted
        for group, attrs in changes.items():
            if group in OPTIONAL_GROUPS:  # built from its one field, or off
                self._groups[group] = OPTIONAL_GROUPS[group](attrs)
                continue
            self._groups[group] = self._groups[group].with_changes(**attrs)

    def replace(self, **values: Any) -> Choices:
        """A copy with some fields changed, each validated by its settings group."""
        new = Choices.__new__(Choices)
        new._groups = dict(self._groups)
        new._estimators = self._estimators
        new._apply(values)
        return new

    # ------------------------------------------------------------------ saving
    def as_dict(self) -> dict:
        """Every field by name (the shape sessions and remembered settings store)."""
        d = {}
        for name in FIELDS:
            value = getattr(self, name)
            d[name] = list(value) if name == "estimators" else value
        return d

    @classmethod
    def from_dict(cls, data: dict) -> Choices:
        """Rebuild from a session or settings mapping; unknown keys are ignored, bad values rejected."""
        return cls(**{k: v for k, v in data.items() if k in FIELDS})


class WorkbenchState(QObject):
    """Loaded histories, the selected series and every control value; emits on change.

    Signals
    -------
    changed(frozenset[str])
        Names of the fields that changed in one update (``"histories"``, ``"selected"`` or any
        :class:`Choices` field).
    """

    changed = Signal(object)

    def __init__(self, choices: Choices | None = None, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self._choices = choices or Choices()
        self._histories: tuple[PriceHistory, ...] = ()
        self._files: tuple[str, ...] = ()
        self._selected: str | None = None

    # ------------------------------------------------------------------ reading
    @property
    def choices(self) -> Choices:
        return self._choices

    def __getattr__(self, name: str):
        # only reached for names not found normally: expose Choices fields as attributes
        if name.startswith("_"):
            raise AttributeError(name)
        choices = self.__dict__.get("_choices")
        if choices is not None and name in FIELDS:
            return getattr(choices, name)
        raise AttributeError(name)

    @property
    def histories(self) -> tuple[PriceHistory, ...]:
        """Histories as loaded (flagged rows present)."""
        return self._histories

    @property
    def files(self) -> tuple[str, ...]:
        return self._files

    @property
    def selected(self) -> str | None:
        return self._selected

    def loaded(self, name: str | None = None) -> PriceHistory | None:
        """The loaded history called ``name`` (default: the selected one)."""
        name = self._selected if name is None else name
        return next((h for h in self._histories if h.name == name), None)

    def view(self) -> PriceHistory | None:
        """The selected history with the flagged-rows policy and as-of date applied.

        Raises
        ------
        VolbenchError
            The as-of date lies before the first row.
        """
        h = self.loaded()
        if h is None:
            return None
        h = h.select(self._choices.exclude_flagged)
        return h.up_to(validate.as_of_for(h, self._choices.as_of))

    def views(self) -> list[PriceHistory]:
        """Every loaded history with the flagged-rows policy applied."""
        return [h.select(self._choices.exclude_flagged) for h in self._histories]

    # ------------------------------------------------------------------ writing
    def set(self, name: str, value) -> None:
        """Set one field; emits ``changed`` only if the value differs."""
        self.update(**{name: value})

    def update(self, **values) -> None:
        """Set several fields at once and emit one ``changed`` with those that differ."""
        changed: set[str] = set()
        new_choices: dict[str, Any] = {}
        for name, value in values.items():
            if name == "selected":
                if value != self._selected:
                    if value is not None and self.loaded(value) is None:
                        raise VolbenchError(f"no loaded series is called {value!r}")
                    self._selected = value
                    changed.add("selected")
            elif name in FIELDS:
                new_choices[name] = value
            else:
                raise AttributeError(f"WorkbenchState has no field {name!r}")
        if new_choices:
            updated = self._choices.replace(**new_choices)  # validated: a bad value raises, nothing changes
            changed |= {k for k in new_choices if getattr(updated, k) != getattr(self._choices, k)}
            self._choices = updated
        if changed:
            self.changed.emit(frozenset(changed))

    def set_histories(self, histories, files=(), *, keep_selection: bool = True) -> None:
        """Replace the loaded histories (and the files they came from)."""
        self._histories = tuple(histories)
        self._files = tuple(str(f) for f in files)
        names = [h.name for h in self._histories]
        changed = {"histories"}
        if not (keep_selection and self._selected in names):
            new = names[0] if names else None
            if new != self._selected:
                self._selected = new
            changed.add("selected")
        self.changed.emit(frozenset(changed))

    def restore(self, histories, files, choices: Choices, selected: str | None) -> None:
        """Replace histories, files, every choice and the selection at once (one ``changed``)."""
        self._histories = tuple(histories)
        self._files = tuple(str(f) for f in files)
        self._choices = choices
        names = [h.name for h in self._histories]
        self._selected = selected if selected in names else (names[0] if names else None)
        self.changed.emit(frozenset({"histories", "selected", *FIELDS}))
