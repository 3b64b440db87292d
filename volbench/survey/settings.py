"""What a survey computes for every series: one frozen, validated settings object.

The same object travels to every worker (a process of the local pool or a Dask worker), so it
holds plain values only and pickles cheaply.
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType

from volbench import validate
from volbench.data.options import ImportOptions
from volbench.errors import VolbenchError
from volbench.estimators import get_spec
from volbench.pricing.bsm import check_pricing_vol
from volbench.pricing.cone import DEFAULT_CONE_WINDOWS, _check_days, _check_windows
from volbench.scaling.check import DEFAULT_HORIZONS, check_alpha, check_horizons
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization, check_window

DEFAULT_DAYS = 21
"""Option life in bars when none is given: about one calendar month of trading days (common practice)."""


@dataclass(frozen=True)
class SurveySettings:
    """Settings shared by every series of a survey, validated once when the object is built.

    Attributes
    ----------
    window
        Bars in the estimation window of the point estimates; ``None`` means ``days`` (the
        window that matches the option's life, as ``volbench compare`` uses).
    days
        Option life in bars: the cone column the vols are placed in and the GARCH forward-vol
        horizon.
    annualization
        Bars per year.
    pricing_vol
        One proposed pricing vol for every series (decimal), or ``None``.
    pricing_vols
        Pricing vol per series name (symbol, or file stem for a one-series file); read with
        :func:`read_pricing_vols`. Takes precedence over ``pricing_vol`` for the names it holds.
    with_garch, garch_models, garch_dist
        Fit GARCH-family models (all of ``garch_models``, ranked by BIC as ``volbench garch`` does)
        and report the preferred model's forward vol over ``days`` bars.
    cone_estimator, cone_windows
        Estimator and windows of the volatility cone (the defaults of ``volbench cone``).
    horizons, alpha
        Horizons and significance level of the scaling check (the defaults of ``volbench scaling``).
    import_options
        How files are read (:class:`volbench.data.ImportOptions`), as for every data command.
    """

    window: int | None = None
    days: int = DEFAULT_DAYS
    annualization: float = DEFAULT_ANNUALIZATION
    pricing_vol: float | None = None
    pricing_vols: Mapping[str, float] = field(default_factory=dict)
    with_garch: bool = False
    garch_models: tuple[str, ...] = ("garch",)
    garch_dist: str = "normal"
    cone_estimator: str = "close_to_close"
    cone_windows: tuple[int, ...] = DEFAULT_CONE_WINDOWS
    horizons: tuple[int, ...] = DEFAULT_HORIZONS
    alpha: float = 0.05
    import_options: ImportOptions = field(default_factory=ImportOptions)

    def __post_init__(self) -> None:
        set_ = object.__setattr__
        days = _check_days(self.days)
        set_(self, "days", days)
        if self.window is not None:
            w = check_window(self.window, minimum=2)
            if w is None:
                raise VolbenchError("a survey window must be a number of bars (>= 2), not 'all'")
            set_(self, "window", w)
        set_(self, "annualization", check_annualization(self.annualization))
        if self.pricing_vol is not None:
            set_(self, "pricing_vol", check_pricing_vol(self.pricing_vol))
        vols = {str(k): check_pricing_vol(v, f"pricing vol of {k!r}") for k, v in dict(self.pricing_vols).items()}
        set_(self, "pricing_vols", MappingProxyType(vols))
        set_(self, "with_garch", bool(self.with_garch))
        set_(self, "garch_models", validate.models(self.garch_models))
        set_(self, "garch_dist", validate.distribution(self.garch_dist))
        set_(self, "cone_estimator", get_spec(self.cone_estimator).key)
        set_(self, "cone_windows", _check_windows(self.cone_windows))
        set_(self, "horizons", check_horizons(self.horizons))
        set_(self, "alpha", check_alpha(self.alpha))
        if not isinstance(self.import_options, ImportOptions):
            raise VolbenchError(f"import_options must be ImportOptions, got {type(self.import_options).__name__}")

    def __reduce__(self):  # MappingProxyType does not pickle: rebuild from a plain dict
        return (_rebuild, (self._fields(),))

    def _fields(self) -> dict:
        out = {name: getattr(self, name) for name in self.__dataclass_fields__}
        out["pricing_vols"] = dict(self.pricing_vols)
        return out

    @property
    def estimate_window(self) -> int:
        """The window of the point estimates: ``window``, or ``days`` (at least 2 bars)."""
        return self.window if self.window is not None else max(self.days, 2)

    def pricing_vol_for(self, name: str) -> float | None:
        """The pricing vol proposed for series ``name`` (per-series entry first), or ``None``."""
        return self.pricing_vols.get(name, self.pricing_vol)

    def as_dict(self) -> dict:
        return {"window": self.estimate_window, "days": self.days, "annualization": self.annualization,
                "pricing_vol": self.pricing_vol, "pricing_vols": len(self.pricing_vols),
                "with_garch": self.with_garch, "garch_models": list(self.garch_models),
                "garch_dist": self.garch_dist, "cone_estimator": self.cone_estimator,
                "cone_windows": list(self.cone_windows), "horizons": list(self.horizons), "alpha": self.alpha,
                "import": self.import_options.as_dict(),
                "flagged_rows": "excluded" if self.import_options.exclude_flagged else "kept"}


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
            vol = check_pricing_vol(value, f"pricing vol of {symbol!r}")
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
