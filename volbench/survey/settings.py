"""What a survey computes for every series: one frozen, validated settings object.

A survey's settings are the run's settings groups (:class:`volbench.settings.Settings`: how files
are read, the estimation window and annualization, the cone, the scaling check, the GARCH fits and
any group added later) plus what only a survey has: the option's life and a pricing vol for
every series or per series. The command line builds the groups with the same helpers as every
other command (``volbench.cli.options``), so a group added for every data command reaches each
survey worker without a change here.

The same object travels to every worker (a process of the local pool or a Dask worker), so it
holds plain values only and pickles cheaply.
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path
from types import MappingProxyType

from volbench import validate
from volbench.data.options import ImportOptions
from volbench.errors import VolbenchError
from volbench.settings import (
    ConeSettings,
    EstimationSettings,
    GarchSettings,
    ScalingSettings,
    Settings,
    group_types,
)
from volbench.types import DEFAULT_ANNUALIZATION, DEFAULT_CONE_WINDOWS

DEFAULT_DAYS = 21
"""Option life in bars when none is given: about one calendar month of trading days (common practice)."""

SURVEY_GARCH = GarchSettings(models=("garch",))
"""The fits of ``--with-garch`` when no model is named: GARCH(1,1), normal innovations (one fit a series)."""

KNOWN_GROUPS = ("import_options", "estimation", "cone", "scaling", "garch", "option")
"""Groups the survey reads field by field; any other group is recorded as it is (:meth:`SurveySettings.as_dict`)."""


def survey_groups(**groups) -> Settings:
    """The survey's default groups (estimation, cone, scaling; no GARCH), with ``groups`` replaced."""
    return Settings(**{"estimation": EstimationSettings(), "cone": ConeSettings(), "scaling": ScalingSettings(),
                       "garch": None, **groups})


@dataclass(frozen=True)
class SurveySettings:
    """Settings shared by every series of a survey, validated once when the object is built.

    Attributes
    ----------
    groups
        The run's settings groups (:class:`volbench.settings.Settings`): ``estimation`` (window,
        annualization, interval level, estimator options; a window of ``None`` means ``days``,
        the window that matches the option's life, as ``volbench compare`` uses), ``cone``
        (estimator and windows), ``scaling`` (horizons, level), ``garch`` (``None``: no fits;
        else the models ranked by BIC as ``volbench garch`` does, the preferred model's forward
        vol over ``days`` bars), ``import_options`` and any group added later.
    days
        Option life in bars: the cone column the vols are placed in and the GARCH forward-vol
        horizon.
    pricing_vol
        One proposed pricing vol for every series (decimal), or ``None``.
    pricing_vols
        Pricing vol per series name (symbol, or file stem for a one-series file); read with
        :func:`read_pricing_vols`. Takes precedence over ``pricing_vol`` for the names it holds.
    """

    groups: Settings = field(default_factory=survey_groups)
    days: int = DEFAULT_DAYS
    pricing_vol: float | None = None
    pricing_vols: Mapping[str, float] = field(default_factory=dict)

    def __post_init__(self) -> None:
        set_ = object.__setattr__
        if not isinstance(self.groups, Settings):
            raise VolbenchError(f"groups must be Settings, got {type(self.groups).__name__}")
        set_(self, "days", validate.days(self.days))
        window = self.groups.estimation.window
        if window is not None and window < 2:
            raise VolbenchError(f"window must be >= 2 bars, got {window}")
        if self.pricing_vol is not None:
            set_(self, "pricing_vol", validate.pricing_vol(self.pricing_vol))
        vols = {str(k): validate.pricing_vol(v, f"pricing vol of {k!r}") for k, v in dict(self.pricing_vols).items()}
        set_(self, "pricing_vols", MappingProxyType(vols))

    @classmethod
    def build(cls, *, window: int | None = None, days: int = DEFAULT_DAYS,
              annualization: float = DEFAULT_ANNUALIZATION, pricing_vol: float | None = None,
              pricing_vols: Mapping[str, float] | None = None, with_garch: bool = False,
              garch_models=("garch",), garch_dist: str = "normal", cone_estimator: str = "close_to_close",
              cone_windows=DEFAULT_CONE_WINDOWS, horizons=None, alpha: float = 0.05,
              import_options: ImportOptions | None = None, **groups) -> SurveySettings:
        """Settings from plain values (a script's or the window's way), each checked by its group.

        ``groups`` replaces or adds whole groups by :class:`~volbench.settings.Settings` field.
        """
        garch = replace(SURVEY_GARCH, models=garch_models, dist=garch_dist) if with_garch else None
        base = {"import_options": import_options or ImportOptions(),
                "estimation": EstimationSettings(window=window, annualization=annualization),
                "cone": ConeSettings(estimator=cone_estimator, windows=cone_windows),
                "scaling": ScalingSettings(horizons=horizons, alpha=alpha), "garch": garch}
        return cls(groups=survey_groups(**{**base, **groups}), days=days, pricing_vol=pricing_vol,
                   pricing_vols=pricing_vols or {})

    def __reduce__(self):  # MappingProxyType does not pickle: rebuild from a plain dict
        return (_rebuild, (self._fields(),))

    def _fields(self) -> dict:
        out = {name: getattr(self, name) for name in self.__dataclass_fields__}
        out["pricing_vols"] = dict(self.pricing_vols)
        return out

    # ---- what the per-series survey reads, from the groups
    @property
    def estimation(self) -> EstimationSettings:
        return self.groups.estimation

    @property
    def cone(self) -> ConeSettings:
        return self.groups.cone or ConeSettings()

    @property
    def scaling(self) -> ScalingSettings:
        return self.groups.scaling or ScalingSettings()

    @property
    def garch(self) -> GarchSettings | None:
        return self.groups.garch

    @property
    def import_options(self) -> ImportOptions:
        return self.groups.import_options

    @property
    def annualization(self) -> float:
        return self.groups.annualization

    @property
    def window(self) -> int | None:
        return self.estimation.window

    @property
    def with_garch(self) -> bool:
        return self.garch is not None

    @property
    def cone_estimator(self) -> str:
        return self.cone.estimator

    @property
    def cone_windows(self) -> tuple[int, ...]:
        return self.cone.windows

    @property
    def estimate_window(self) -> int:
        """The window of the point estimates: ``window``, or ``days`` (at least 2 bars)."""
        return self.window if self.window is not None else max(self.days, 2)

    def pricing_vol_for(self, name: str) -> float | None:
        """The pricing vol proposed for series ``name`` (per-series entry first), or ``None``."""
        return self.pricing_vols.get(name, self.pricing_vol)

    def as_dict(self) -> dict:
        g = self.garch
        out = {"window": self.estimate_window, "days": self.days, "annualization": self.annualization,
               "confidence": self.estimation.confidence,
               "estimator_options": {"zero_mean": self.estimation.zero_mean, "ewma_lambda": self.estimation.lam},
               "pricing_vol": self.pricing_vol, "pricing_vols": len(self.pricing_vols),
               "with_garch": g is not None, "garch_models": list(g.models) if g else [],
               "garch_dist": g.dist if g else None, "cone_estimator": self.cone_estimator,
               "cone_windows": list(self.cone_windows), "horizons": list(self.scaling.horizons),
               "alpha": self.scaling.alpha, "import": self.import_options.as_dict(),
               "flagged_rows": "excluded" if self.import_options.exclude_flagged else "kept"}
        for name in group_types():  # groups added later, recorded as they are
            group = getattr(self.groups, name)
            if name not in KNOWN_GROUPS and group is not None:
                out[name] = group.as_dict()
        return out


def _rebuild(fields: dict) -> SurveySettings:
    return SurveySettings(**fields)


def read_pricing_vols(path: str | Path) -> dict[str, float]:
    """Read a pricing-vol file: one ``symbol,pricing_vol`` pair a line, an optional header line.

    Parameters
    ----------
    path
        CSV file. The first line is a header when its second cell is not a number. Blank lines
        are skipped. Vols are decimals (0.25 for 25 %).

    Returns
    -------
    dict
        Series name -> pricing vol, in file order.

    Raises
    ------
    VolbenchError
        Missing or unreadable file, a line without two cells, an empty symbol, a vol that is not a
        decimal in (0, 5), a symbol listed twice, or no pair at all. The message names the file
        and line.
    """
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise VolbenchError(f"{p}: pricing-vol file not found; give a CSV of symbol,pricing_vol lines") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise VolbenchError(f"{p}: cannot read the pricing-vol file ({exc}); give a UTF-8 CSV") from None
    out: dict[str, float] = {}
    first_line: dict[str, int] = {}
    header_checked = False
    for number, cells in enumerate(csv.reader(io.StringIO(text)), start=1):
        cells = [c.strip() for c in cells]
        if not any(cells):
            continue
        if len(cells) < 2 or not cells[1]:
            raise VolbenchError(f"{p}: line {number}: expected two cells, symbol,pricing_vol; got {','.join(cells)!r}")
        symbol, value = cells[0], cells[1]
        if not header_checked:
            header_checked = True
            if not _is_number(value):
                continue  # header line
        if not symbol:
            raise VolbenchError(f"{p}: line {number}, column 1: symbol is empty; fill in the series name")
        try:
            vol = validate.pricing_vol(value, f"pricing vol of {symbol!r}")
        except VolbenchError as exc:
            raise VolbenchError(f"{p}: line {number}, column 2: {exc}") from None
        if symbol in out:
            raise VolbenchError(f"{p}: line {number}: symbol {symbol!r} is listed again (first on line "
                                f"{first_line[symbol]}); keep one line per symbol")
        out[symbol] = vol
        first_line[symbol] = number
    if not out:
        raise VolbenchError(f"{p}: no symbol,pricing_vol line found; add lines such as 'kestrel_orchards,0.25'")
    return out


def _is_number(text: str) -> bool:
    try:
        return math.isfinite(float(text))
    except ValueError:
        return False
