"""The workbench's state model: what the user chose, announced on change.

One :class:`WorkbenchState` holds every user choice (loaded histories, the flagged-rows policy,
the selected series and every control value). It owns no computation and no widgets: controls
write to it with :meth:`WorkbenchState.set`, and it emits :attr:`WorkbenchState.changed` with
the names of the fields that really changed, so the controller recomputes only what depends on
them and panes re-render.
"""

from __future__ import annotations

from dataclasses import dataclass, fields, replace
from typing import Any

from PySide6.QtCore import QObject, Signal

from volbench import validate
from volbench.data.history import PriceHistory
from volbench.data.options import DECIMALS, DELIMITER_NAMES, THOUSANDS, ImportOptions
from volbench.errors import VolbenchError
from volbench.estimators import ESTIMATOR_KEYS


@dataclass(frozen=True)
class Choices:
    """Every user setting, as plain values (decimals for vols and rates)."""

    window: int = 20
    annualization: float = 252.0
    as_of: str | None = None
    estimators: tuple[str, ...] = ESTIMATOR_KEYS
    pricing_vol: float = 0.25
    days: int = 30
    strike: float | None = None
    rate: float = 0.0
    dividend_yield: float = 0.0
    kind: str = "call"
    garch_model: str = "all"
    garch_dist: str = "normal"
    cone_estimator: str = "close_to_close"
    exclude_flagged: bool = False
    date_format: str | None = None
    delimiter: str | None = None
    decimal: str | None = None
    thousands: str | None = None
    use_adjusted: bool = False
    adjust_splits: bool = False

    def import_options(self) -> ImportOptions:
        """How files are read, as the one validated settings object the core takes.

        Flagged rows are kept at import: the window applies ``exclude_flagged`` to what it shows.
        """
        return ImportOptions(delimiter=self.delimiter, decimal=self.decimal, thousands=self.thousands,
                             date_format=self.date_format, use_adjusted=self.use_adjusted,
                             adjust_splits=self.adjust_splits)

    def as_dict(self) -> dict:
        d = {f.name: getattr(self, f.name) for f in fields(self)}
        d["estimators"] = list(self.estimators)
        return d

    @classmethod
    def from_dict(cls, data: dict) -> Choices:
        """Rebuild from a session or settings mapping; unknown keys are ignored, bad values rejected."""
        known = {f.name: f for f in fields(cls)}
        kw: dict[str, Any] = {}
        for key, value in data.items():
            if key not in known:
                continue
            kw[key] = _coerce(key, value)
        return cls(**kw)


_INT = {"window", "days"}
_FLOAT = {"annualization", "pricing_vol", "rate", "dividend_yield"}
_CHOICE = {"kind": ("call", "put"), "garch_model": ("all", "garch", "gjr", "egarch"),
           "garch_dist": ("normal", "t")}
_OPTIONAL_CHOICE = {"delimiter": tuple(DELIMITER_NAMES), "decimal": DECIMALS, "thousands": THOUSANDS}
IMPORT_FIELDS = frozenset({"date_format", "delimiter", "decimal", "thousands", "use_adjusted", "adjust_splits"})
"""Choices that change how files are read: changing one reads the files again."""


def _window(value) -> int:
    w = validate.window(value, minimum=2)
    if w is None:
        raise VolbenchError("window must be a whole number of bars, not 'all', in the window's settings")
    return w


_VALIDATE = {"window": _window, "annualization": validate.annualization,
             "pricing_vol": validate.pricing_vol, "days": validate.days,
             "cone_estimator": validate.estimator}
"""Settings checked by the same functions as the command line and the export (volbench.validate)."""


def _coerce(key: str, value):
    if key in _VALIDATE:
        return _VALIDATE[key](value)
    if key == "as_of":
        return None if value in (None, "") or validate.as_of(value) is None else str(value).strip()
    try:
        if key in _INT:
            return int(value)
        if key in _FLOAT:
            return float(value)
        if key == "strike":
            return None if value in (None, "", 0, 0.0) else float(value)
        if key in ("as_of", "date_format"):
            return None if value in (None, "") else str(value)
        if key == "estimators":
            return tuple(validate.estimator(str(k)) for k in value)
        if key == "garch_model":
            return value if value == "all" else validate.model(value)
        if key in ("exclude_flagged", "use_adjusted", "adjust_splits"):
            return bool(value)
        if key in _OPTIONAL_CHOICE:
            if value in (None, ""):
                return None
            if value not in _OPTIONAL_CHOICE[key]:
                shown = ", ".join(repr(v) for v in _OPTIONAL_CHOICE[key])
                raise VolbenchError(f"{key} must be one of {shown} or empty, got {value!r}")
            return value
        if key in _CHOICE:
            if value not in _CHOICE[key]:
                raise VolbenchError(f"{key} must be one of {', '.join(_CHOICE[key])}, got {value!r}")
            return value
        return value
    except (TypeError, ValueError):
        raise VolbenchError(f"setting {key!r} has an unreadable value {value!r}") from None


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
        if choices is not None and name in Choices.__dataclass_fields__:
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
            elif name in Choices.__dataclass_fields__:
                value = _coerce(name, value)
                if getattr(self._choices, name) != value:
                    new_choices[name] = value
                    changed.add(name)
            else:
                raise AttributeError(f"WorkbenchState has no field {name!r}")
        if new_choices:
            self._choices = replace(self._choices, **new_choices)
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
        self.changed.emit(frozenset({"histories", "selected", *Choices.__dataclass_fields__}))
