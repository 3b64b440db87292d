"""``volbench replay``: rebuild an export from its own record and compare every cell."""

from __future__ import annotations

import argparse
import sys

from volbench.export.replay import replay

EXIT_DIFFERS = 3
SHOWN = 40


def register(sub) -> None:
    p = sub.add_parser(
        "replay", help="rebuild an .xlsx or .json export from its record and compare every cell",
        description="Reads the equivalent command, the sources' SHA-256 and the creation time recorded in an "
                    "export's inputs table, checks each source's SHA-256, runs the analysis again, and compares "
                    "every cell of every table. Exit 0: everything reproduces; 3: something differs (listed "
                    "with table, row, column and the gap); 2: bad input. Machine and command rows (versions, "
                    "threads, paths) are listed apart and do not count as differences.",
    )
    p.add_argument("export", metavar="EXPORT", help="an .xlsx or .json file written by volbench export")
    p.add_argument("--source", action="append", default=[], metavar="FILE",
                   help="price file to use instead of the recorded one (repeat for each, in the recorded order)")
    p.set_defaults(func=run_replay)


def run_replay(args: argparse.Namespace) -> int:
    r = replay(args.export, args.source)
    for line in r.hash_changes:
        print(f"source changed: {line}")
    for line in r.environment:
        print(f"environment differs (not counted): {line}")
    if r.identical:
        print(f"replay {r.path}: identical: {r.cells} cells in {r.tables} tables reproduce exactly")
        return 0
    print(f"replay {r.path}: {len(r.differences)} of {r.cells} cells differ"
          + (" and the source changed" if r.hash_changes else ""))
    for d in r.differences[:SHOWN]:
        print(f"  {d.text()}")
    if len(r.differences) > SHOWN:
        print(f"  ... and {len(r.differences) - SHOWN} more")
    sys.stdout.flush()
    return EXIT_DIFFERS
