"""Shared pieces for sub-commands: file and setting options, loading, and output formatting."""

from __future__ import annotations

import argparse
import json
import math
import sys
from collections.abc import Sequence

from volbench import validate
from volbench.data import load_many
from volbench.data.history import PriceHistory
from volbench.data.options import DECIMALS, DELIMITER_NAMES, THOUSANDS, ImportOptions
from volbench.data.quality import QualitySettings
from volbench.errors import VolbenchError
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization


def add_file_options(p: argparse.ArgumentParser, *, many: bool = True) -> None:
    """FILE arguments and the import options every data command shares."""
    p.add_argument("files", nargs="+" if many else 1, metavar="FILE",
                   help="price CSV file(s): a date column and a close column at least; "
                        "open/high/low enable the range estimators; a symbol column holds several series")
    g = p.add_argument_group("reading the files (docs/METHODS.md, Import)")
    g.add_argument("--date-format", metavar="FMT", default=None,
                   help="strftime format of the date column when it is not ISO, e.g. %%d/%%m/%%Y; "
                        "'excel' for spreadsheet serial day numbers")
    g.add_argument("--delimiter", metavar="D", default=None,
                   choices=[*DELIMITER_NAMES, "tab"],
                   help="field separator: ',', ';', tab or '|' (default: inferred from the header line)")
    g.add_argument("--decimal", choices=list(DECIMALS), default=None,
                   help="decimal mark (default: inferred from every number; refused when the file does not say)")
    g.add_argument("--thousands", choices=list(THOUSANDS), default=None,
                   help="thousands separator, or none (default: inferred from every number)")
    g.add_argument("--adjusted", action="store_true",
                   help="use the adjusted close (open/high/low scaled to match) when the file has one")
    g.add_argument("--adjust-splits", action="store_true",
                   help="back-adjust every detected unadjusted split (earlier prices divided by the ratio, "
                        "volume multiplied by it); each adjustment is reported")
    g.add_argument("--exclude-flagged", action="store_true",
                   help="leave out rows flagged by data-quality warnings (kept by default; the choice is reported)")
    g.add_argument("--gap-days", type=int, default=QualitySettings.gap_days, metavar="D",
                   help="report calendar gaps longer than D days (default %(default)s)")


def import_options(args: argparse.Namespace) -> ImportOptions:
    """The one :class:`ImportOptions` built from the command line's import flags."""
    return ImportOptions(
        delimiter=args.delimiter, decimal=args.decimal, thousands=args.thousands,
        date_format=args.date_format, use_adjusted=args.adjusted, adjust_splits=args.adjust_splits,
        exclude_flagged=args.exclude_flagged, quality=QualitySettings(gap_days=args.gap_days),
    )


def with_import(d: dict, history: PriceHistory) -> dict:
    """A series' JSON record with the splits applied at import (``"adjustments"``)."""
    return {**d, "adjustments": [a.as_dict() for a in history.adjustments]}


def adjustments_line(history: PriceHistory) -> str | None:
    """One line naming the splits applied at import, for table output."""
    if not history.adjustments:
        return None
    shown = "; ".join(f"{a.label} on {a.date} (line {a.line})" for a in history.adjustments)
    return f"prices adjusted for {shown}"


def add_annualization(p: argparse.ArgumentParser) -> None:
    p.add_argument("--annualization", type=validate.annualization, default=DEFAULT_ANNUALIZATION, metavar="A",
                   help="bars per year used to annualize (default %(default)g; 365 for markets open every day)")


def as_of_text(value: str) -> str:
    """``--as-of``: ISO YYYY-MM-DD or 'last' (checked against each file's range when it is read)."""
    validate.as_of(value)
    return value.strip()


def end_text(value: str) -> str:
    """``--end``: ISO YYYY-MM-DD (checked against each file's range when it is read)."""
    validate.date(value, "end date")
    return value.strip()


def start_text(value: str) -> str:
    """``--start``: ISO YYYY-MM-DD."""
    validate.date(value, "start date")
    return value.strip()


def add_as_of(p: argparse.ArgumentParser, help_text: str) -> None:
    p.add_argument("--as-of", metavar="YYYY-MM-DD|last", type=as_of_text, default=None,
                   help=help_text + "; a date outside a file's range is refused")


def window_or_all(value: str) -> int | None:
    return validate.window(value, minimum=1)


def add_format(p: argparse.ArgumentParser, choices: Sequence[str] = ("table", "json")) -> None:
    p.add_argument("--format", choices=list(choices), default="table",
                   help="output format (default table)")


def load_from_args(args: argparse.Namespace) -> list[PriceHistory]:
    """Load every FILE with the shared import options."""
    if getattr(args, "annualization", None) is not None:
        check_annualization(args.annualization)
    return load_many(args.files, import_options(args))


def parse_int_list(text: str, what: str) -> list[int]:
    """``"1,2,5"`` -> ``[1, 2, 5]`` with a clear error naming ``what``."""
    try:
        values = [int(x) for x in text.replace(" ", "").split(",") if x]
    except ValueError:
        raise VolbenchError(f"{what} must be whole numbers separated by commas, e.g. 5,21,63; got {text!r}") from None
    if not values or any(v < 1 for v in values):
        raise VolbenchError(f"{what} must be positive whole numbers separated by commas; got {text!r}")
    return values


def _clean(obj):
    """Make a structure JSON-safe: NaN/inf become null (never passed off as numbers)."""
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {str(k): _clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean(v) for v in obj]
    if hasattr(obj, "item") and callable(obj.item):  # numpy scalars
        return _clean(obj.item())
    return obj


def print_json(obj) -> None:
    json.dump(_clean(obj), sys.stdout, indent=2, allow_nan=False)
    sys.stdout.write("\n")


def render_table(headers: Sequence[str], rows: Sequence[Sequence], align: str | None = None) -> str:
    """Plain fixed-width text table; ``align`` per column 'l' or 'r' (numbers right by default)."""
    cells = [[("" if c is None else str(c)) for c in row] for row in rows]
    widths = [max([len(h)] + [len(r[i]) for r in cells]) for i, h in enumerate(headers)]
    if align is None:
        align = "l" + "r" * (len(headers) - 1)
    def fmt(row):
        return "  ".join(c.ljust(w) if a == "l" else c.rjust(w) for c, w, a in zip(row, widths, align)).rstrip()
    lines = [fmt(headers), "  ".join("-" * w for w in widths)]
    lines += [fmt(r) for r in cells]
    return "\n".join(lines)
