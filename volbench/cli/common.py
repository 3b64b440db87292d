"""Shared pieces for sub-commands: file and setting options, loading, and output formatting."""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Sequence

from volbench.cli.options import (
    add_estimation,
    add_every,
    import_from_args,
    int_list,
    settings_from_args,
)
from volbench.data import load_many
from volbench.data.history import PriceHistory
from volbench.data.options import ImportOptions
from volbench.format import json_safe
from volbench.intraday.days import by_days, interval_phrase
from volbench.settings import Settings


def add_file_options(p: argparse.ArgumentParser, *, many: bool = True) -> None:
    """FILE arguments and the settings groups every data command shares (the import options)."""
    p.add_argument("files", nargs="+" if many else 1, metavar="FILE",
                   help="price CSV file(s): a date column and a close column at least; "
                        "open/high/low enable the range estimators; a symbol column holds several series")
    add_every(p)


def import_options(args: argparse.Namespace) -> ImportOptions:
    """The one :class:`ImportOptions` built from the command line's import flags."""
    return import_from_args(args)


def with_import(d: dict, history: PriceHistory) -> dict:
    """A series' JSON record with the splits applied at import (``"adjustments"``), the bar interval of
    its file (``"bar_interval_seconds"``) and, for an intraday file analysed by day, its sessions."""
    out = {**d, "adjustments": [a.as_dict() for a in history.adjustments],
           "bar_interval_seconds": history.bar_interval_seconds}
    if history.intraday is not None:
        out["intraday"] = history.intraday.as_dict()
    return out


def adjustments_line(history: PriceHistory) -> str | None:
    """One line naming the splits applied at import, for table output."""
    if not history.adjustments:
        return None
    shown = "; ".join(f"{a.label} on {a.date} (line {a.line})" for a in history.adjustments)
    return f"prices adjusted for {shown}"


def add_annualization(p: argparse.ArgumentParser) -> None:
    """``--annualization`` (the estimation group with no window and no as-of date)."""
    add_estimation(p)


def add_format(p: argparse.ArgumentParser, choices: Sequence[str] = ("table", "json")) -> None:
    p.add_argument("--format", choices=list(choices), default="table",
                   help="output format (default table)")


def load_from_args(args: argparse.Namespace, settings: Settings | None = None) -> list[PriceHistory]:
    """Load every FILE with the import options, after every setting of the command was validated;
    an intraday file comes back as its daily bars (:func:`volbench.intraday.days.by_days`)."""
    settings = settings if settings is not None else settings_from_args(args)
    histories = load_many(args.files, settings.import_options)
    brk = settings.intraday.seconds if settings.intraday is not None else None
    return [by_days(h, brk) for h in histories]  # intraday files are analysed by day


def print_interval(history: PriceHistory) -> None:
    """Print the table line stating the bar interval and sessions of an intraday file analysed by
    day (a file of daily bars prints as it always did; its JSON says ``bar_interval_seconds``)."""
    if history.intraday is not None:
        print(interval_phrase(history))


def parse_int_list(text: str, what: str) -> list[int]:
    """``"1,2,5"`` -> ``[1, 2, 5]`` with a clear error naming ``what``."""
    return int_list(text, what)


def print_json(obj) -> None:
    json.dump(json_safe(obj), sys.stdout, indent=2, allow_nan=False)
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
