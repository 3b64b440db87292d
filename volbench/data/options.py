"""How to read price files: one validated, frozen settings object built once per front end.

The command line builds an :class:`ImportOptions` from its flags, the window from its open
dialog; both pass it to :func:`volbench.data.load_prices` / :func:`volbench.data.load_many`, and
every export records :meth:`ImportOptions.as_dict` as provenance.
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields, replace
from typing import Any, Literal

import pandas as pd

from volbench.data.quality import QualitySettings
from volbench.errors import VolbenchError

Decimal = Literal[".", ","]
Thousands = Literal[",", ".", "none"]

DELIMITER_NAMES: dict[str, str] = {",": "comma", ";": "semicolon", "\t": "tab", "|": "pipe"}
"""Delimiters a user may force, with the word shown for each (``"tab"`` is accepted for ``\\t``)."""
DECIMALS: tuple[str, ...] = (".", ",")
THOUSANDS: tuple[str, ...] = (",", ".", "none")
EXCEL = "excel"
"""``date_format`` value for spreadsheet serial day numbers (days since 1899-12-30)."""


def _check_format(fmt: str) -> None:
    try:
        pd.to_datetime(pd.Series(["2000-01-01"], dtype=object), format=fmt, errors="coerce")
    except (ValueError, TypeError, KeyError) as exc:
        raise VolbenchError(f"date format {fmt!r} is not a valid strftime format ({exc}); "
                            "write it like %d/%m/%Y or %Y-%m-%d %H:%M") from None


@dataclass(frozen=True)
class ImportOptions:
    """Every choice that changes how a price file is read.

    Attributes
    ----------
    delimiter
        Field separator: ``","``, ``";"``, ``"\\t"`` or ``"|"`` (``"tab"`` is accepted for a tab);
        ``None`` (default) infers it from the header line (see docs/METHODS.md, Import).
    decimal
        Decimal mark ``"."`` or ``","``; ``None`` (default) infers it from every numeric cell and
        stops with an error when the file does not settle it.
    thousands
        Thousands separator ``","``, ``"."`` or ``"none"``; ``None`` (default) infers it.
    date_format
        ``strftime`` format of the date column (e.g. ``"%d/%m/%Y"``), ``"excel"`` for spreadsheet
        serial day numbers, or ``None`` for ISO 8601.
    use_adjusted
        Take prices from the adjusted close (open/high/low scaled by the same factor).
    adjust_splits
        Back-adjust every detected unadjusted split (earlier open/high/low/close divided by the
        split ratio, volume multiplied by it); each adjustment is recorded on the history.
    exclude_flagged
        Leave out rows flagged by ``warning`` findings (recorded on each history).
    quality
        Thresholds of the data-quality checks (calendar gap, stale run, jump detection).
    """

    delimiter: str | None = None
    decimal: Decimal | None = None
    thousands: Thousands | None = None
    date_format: str | None = None
    use_adjusted: bool = False
    adjust_splits: bool = False
    exclude_flagged: bool = False
    quality: QualitySettings = field(default_factory=QualitySettings)

    def __post_init__(self) -> None:
        set_ = object.__setattr__
        if self.delimiter is not None:
            d = "\t" if self.delimiter.lower() in ("tab", "\\t") else self.delimiter
            if d not in DELIMITER_NAMES:
                raise VolbenchError(f"delimiter must be one of comma (,), semicolon (;), tab or pipe (|), "
                                    f"got {self.delimiter!r}")
            set_(self, "delimiter", d)
        if self.decimal is not None and self.decimal not in DECIMALS:
            raise VolbenchError(f"decimal mark must be '.' or ',', got {self.decimal!r}")
        if self.thousands is not None and self.thousands not in THOUSANDS:
            raise VolbenchError(f"thousands separator must be ',', '.' or 'none', got {self.thousands!r}")
        if self.decimal is not None and self.decimal == self.thousands:
            raise VolbenchError(f"the decimal mark and the thousands separator cannot both be {self.decimal!r}")
        if self.delimiter is not None and self.delimiter in (self.decimal, self.thousands):
            raise VolbenchError(f"the delimiter {self.delimiter!r} cannot also be the decimal mark or the "
                                "thousands separator")
        if self.date_format is not None:
            fmt = str(self.date_format).strip()
            if not fmt:
                fmt = None
            elif fmt.lower() == EXCEL:
                fmt = EXCEL
            elif "%" not in fmt:
                raise VolbenchError(f"date format must be 'excel' or a strftime format such as %d/%m/%Y, "
                                    f"got {self.date_format!r}")
            else:
                _check_format(fmt)
            set_(self, "date_format", fmt)
        for name in ("use_adjusted", "adjust_splits", "exclude_flagged"):
            if not isinstance(getattr(self, name), bool):
                raise VolbenchError(f"{name} must be true or false, got {getattr(self, name)!r}")
        if not isinstance(self.quality, QualitySettings):
            raise VolbenchError(f"quality must be QualitySettings, got {type(self.quality).__name__}")

    @property
    def gap_days(self) -> int:
        return self.quality.gap_days

    def with_changes(self, **changes: Any) -> ImportOptions:
        """A copy with some fields changed (validated again); ``gap_days`` goes into ``quality``."""
        if "gap_days" in changes:
            changes["quality"] = replace(changes.get("quality", self.quality), gap_days=changes.pop("gap_days"))
        unknown = sorted(set(changes) - {f.name for f in fields(self)})
        if unknown:
            raise VolbenchError(f"unknown import setting {unknown[0]!r}; choose among "
                                f"{', '.join(f.name for f in fields(self))}, gap_days")
        return replace(self, **changes)

    def as_dict(self) -> dict:
        """JSON-ready record of the settings (provenance of every export)."""
        return {
            "delimiter": None if self.delimiter is None else DELIMITER_NAMES[self.delimiter],
            "decimal": self.decimal,
            "thousands": self.thousands,
            "date_format": self.date_format,
            "use_adjusted": self.use_adjusted,
            "adjust_splits": self.adjust_splits,
            "exclude_flagged": self.exclude_flagged,
            "gap_days": self.quality.gap_days,
            "stale_run": self.quality.stale_run,
        }
