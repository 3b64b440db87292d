"""Rebuild an export from its own record and compare every cell: the validator's one-command check.

An ``.xlsx`` or ``.json`` export records, in its ``inputs`` table (JSON: ``provenance``), the
equivalent ``volbench export`` command with every setting spelled out and each source's absolute
path and SHA-256 (:mod:`volbench.provenance`). :func:`replay` reads that record, checks each
source's SHA-256 first, runs the command again (on the recorded files or the ones given), writes
the result in the same format to a temporary folder, reads both files the same way and compares
every cell: numbers exactly (the shortest round-trip text is written, so equal doubles read back
equal), text as text. Rows describing the machine and the command (``inputs`` groups
``environment`` and ``command``, and a source's path and size) are listed apart, not counted as
differences: they say where the numbers were made, not what they are.
"""

from __future__ import annotations

import dataclasses
import json
import math
import os
import tempfile
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import datetime
from pathlib import Path
from typing import Any

from volbench.errors import VolbenchError

ENVIRONMENT_GROUPS = frozenset({"environment", "command"})
"""``inputs`` groups that describe where and how a file was made, not its numbers."""

ENVIRONMENT_ITEMS = frozenset({("source", "source"), ("source", "absolute_path"), ("source", "size_bytes")})
"""``inputs`` (group, item) pairs that may change with the folder a source is read from."""


@dataclass(frozen=True)
class Difference:
    """One cell that differs: table, row (1 = header), column name, both values and the gap."""

    table: str
    row: int
    column: str
    recorded: Any
    rebuilt: Any

    @property
    def gap(self) -> float | None:
        a, b = self.recorded, self.rebuilt
        if isinstance(a, (int, float)) and isinstance(b, (int, float)) and not isinstance(a, bool):
            return float(b) - float(a)
        return None

    def text(self) -> str:
        gap = "" if self.gap is None else f" (rebuilt - recorded = {self.gap:.6g})"
        return (f"{self.table} row {self.row}, {self.column}: recorded {self.recorded!r}, "
                f"rebuilt {self.rebuilt!r}{gap}")


@dataclass(frozen=True)
class ReplayResult:
    """What a replay found: source hash changes, differing cells, environment differences."""

    path: Path
    cells: int
    tables: int
    hash_changes: tuple[str, ...] = ()
    differences: tuple[Difference, ...] = ()
    environment: tuple[str, ...] = field(default=())

    @property
    def identical(self) -> bool:
        return not self.hash_changes and not self.differences


# ---------------------------------------------------------------------------------- reading
@dataclass(frozen=True)
class Recorded:
    """An export as read back: every table as rows of cells (header first) and its record."""

    fmt: str
    tables: dict[str, list[list[Any]]]
    argv: list[str]
    created: str
    sources: list[dict]


def _xlsx_tables(path: Path) -> dict[str, list[list[Any]]]:
    from openpyxl import load_workbook

    try:
        wb = load_workbook(path, read_only=True, data_only=True)
    except Exception as exc:  # noqa: BLE001 - any unreadable workbook is bad input
        raise VolbenchError(f"{path}: cannot read it as an .xlsx workbook ({exc}); give a volbench export") from None
    try:
        return {ws.title: [list(r) for r in ws.iter_rows(values_only=True)] for ws in wb.worksheets}
    finally:
        wb.close()


def _json_tables(doc: dict) -> dict[str, list[list[Any]]]:
    out = {}
    for name, records in doc.get("tables", {}).items():
        header = list(records[0]) if records else []
        out[name] = [header] + [[r.get(c) for c in header] for r in records]
    return out


def _inputs(tables: dict[str, list[list[Any]]], path: Path) -> list[dict]:
    rows = tables.get("inputs")
    if not rows or [str(c) for c in rows[0][:4]] != ["group", "series", "item", "value"]:
        raise VolbenchError(f"{path}: no inputs table; give an .xlsx or .json file written by volbench export")
    return [dict(zip(("group", "series", "item", "value"), r[:4])) for r in rows[1:]]


def read_export(path: str | os.PathLike) -> Recorded:
    """Read an ``.xlsx`` or ``.json`` export and its record (equivalent command, creation time, sources).

    Raises
    ------
    VolbenchError
        Missing file, another format, or an export without the record (made before replay existed).
    """
    p = Path(path)
    if not p.is_file():
        raise VolbenchError(f"{p}: no such file; give the .xlsx or .json export to replay")
    fmt = p.suffix.lower()
    if fmt == ".csv":
        raise VolbenchError(f"{p}: a .csv export holds the estimates table only; replay the .xlsx or .json export")
    if fmt == ".json":
        try:
            doc = json.loads(p.read_text(encoding="utf-8"))
        except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
            raise VolbenchError(f"{p}: cannot read it as JSON ({exc})") from None
        if not isinstance(doc, dict) or "provenance" not in doc:
            raise VolbenchError(f"{p}: not a volbench export (no provenance)")
        tables = _json_tables(doc)
    elif fmt == ".xlsx":
        tables = _xlsx_tables(p)
    else:
        raise VolbenchError(f"{p}: cannot replay a {fmt or 'suffix-less'} file; give an .xlsx or .json export")
    rows = _inputs(tables, p)
    record = {(r["group"], r["item"]): r["value"] for r in rows if not r["series"]}
    argv_text = record.get(("command", "equivalent_argv (JSON)"))
    created = record.get(("run", "created (UTC)"))
    if not argv_text or not created:
        raise VolbenchError(f"{p}: the inputs table holds no equivalent command; the file was written before "
                            "volbench recorded one, so it cannot be replayed")
    try:
        argv = json.loads(argv_text)
    except json.JSONDecodeError:
        raise VolbenchError(f"{p}: the recorded command is not readable ({argv_text[:60]!r})") from None
    sources: dict[str, dict] = {}
    for r in rows:
        if r["group"] == "source" and r["series"]:
            sources.setdefault(str(r["series"]), {"series": str(r["series"])})[str(r["item"])] = r["value"]
    return Recorded(fmt, tables, [str(a) for a in argv], str(created), list(sources.values()))


# ---------------------------------------------------------------------------------- comparing
def _same(a, b) -> bool:
    if isinstance(a, float) and isinstance(b, float) and math.isnan(a) and math.isnan(b):
        return True
    return a == b and type(a) is type(b) or (a == b and {type(a), type(b)} <= {int, float})


def _skip(table: str, row: list[Any]) -> bool:
    if table != "inputs" or len(row) < 3:
        return False
    return row[0] in ENVIRONMENT_GROUPS or (row[0], row[2]) in ENVIRONMENT_ITEMS


def compare_tables(recorded: dict[str, list[list[Any]]], rebuilt: dict[str, list[list[Any]]]
                   ) -> tuple[int, list[Difference], list[str]]:
    """Cells compared, differing cells, and environment rows that changed (listed apart)."""
    cells, diffs, env = 0, [], []
    for name in list(dict.fromkeys([*recorded, *rebuilt])):
        if name not in recorded or name not in rebuilt:
            diffs.append(Difference(name, 0, "(table)", "present" if name in recorded else "absent",
                                    "present" if name in rebuilt else "absent"))
            continue
        a_rows = [r for r in recorded[name] if not _skip(name, r)]
        b_rows = [r for r in rebuilt[name] if not _skip(name, r)]
        if name == "inputs":
            env += _environment_changes(recorded[name], rebuilt[name])
        header = [str(c) for c in (a_rows[0] if a_rows else [])]
        for i in range(max(len(a_rows), len(b_rows))):
            a = a_rows[i] if i < len(a_rows) else None
            b = b_rows[i] if i < len(b_rows) else None
            if a is None or b is None:
                diffs.append(Difference(name, i + 1, "(row)", a, b))
                continue
            for j in range(max(len(a), len(b))):
                x = a[j] if j < len(a) else None
                y = b[j] if j < len(b) else None
                cells += 1
                if not _same(x, y):
                    col = header[j] if j < len(header) else f"column {j + 1}"
                    diffs.append(Difference(name, i + 1, col, x, y))
    return cells, diffs, env


def _environment_changes(a_rows, b_rows) -> list[str]:
    a = {(r[0], r[1], r[2]): r[3] for r in a_rows[1:] if _skip("inputs", r) and r[0] != "command"}
    b = {(r[0], r[1], r[2]): r[3] for r in b_rows[1:] if _skip("inputs", r) and r[0] != "command"}
    return [f"{k[0]} {k[2]}{' (' + str(k[1]) + ')' if k[1] else ''}: recorded {a.get(k)!r}, now {b.get(k)!r}"
            for k in sorted(set(a) | set(b), key=str) if a.get(k) != b.get(k)]


# ---------------------------------------------------------------------------------- replay
def replay(path: str | os.PathLike, sources: Sequence[str | os.PathLike] = ()) -> ReplayResult:
    """Rebuild the export at ``path`` from its record and compare every cell.

    Parameters
    ----------
    path
        An ``.xlsx`` or ``.json`` file written by ``volbench export`` (or the window's export).
    sources
        Price files to use instead of the recorded ones, in the recorded order (e.g. the files
        moved); their SHA-256 is checked against the record all the same.

    Raises
    ------
    VolbenchError
        Bad input: not an export, no record, a source that cannot be read, or a wrong number of sources.
    """
    from volbench.cli import build_parser
    from volbench.cli.options import settings_from_args
    from volbench.data import load_many
    from volbench.export.bundle import build_bundle
    from volbench.export.writers import write_export

    rec = read_export(path)
    argv = list(rec.argv)
    n_files = _leading_files(argv)
    if sources:
        if len(sources) != n_files:
            raise VolbenchError(f"the export was made from {n_files} file(s); give --source once for each, "
                                f"in the recorded order, got {len(sources)}")
        argv = [str(Path(s).absolute()) for s in sources] + argv[n_files:]
    files = argv[:n_files]
    with tempfile.TemporaryDirectory(prefix="volbench-replay-") as tmp:
        target = Path(tmp) / f"rebuilt{rec.fmt}"
        try:
            args = build_parser().parse_args(["export", *argv, "--to", str(target)])
        except SystemExit:
            raise VolbenchError(f"{path}: the recorded command is not one this volbench accepts: "
                                f"{' '.join(argv)[:200]}") from None
        try:
            created = datetime.fromisoformat(rec.created)
        except ValueError:
            raise VolbenchError(f"{path}: the recorded creation time {rec.created!r} is not an ISO time") from None
        settings = dataclasses.replace(settings_from_args(args), created=created)
        histories = load_many(files, settings.import_options)
        changes = []
        recorded_hash = {s["series"]: s.get("sha256") for s in rec.sources}
        for h in histories:
            old = recorded_hash.get(h.name)
            if old and old != h.sha256:
                changes.append(f"{h.source}: SHA-256 recorded {old}, now {h.sha256} (the file changed)")
        names = {h.name for h in histories}
        changes += [f"series {name!r} recorded (SHA-256 {sha}) is not in the files read now"
                    for name, sha in recorded_hash.items() if name not in names]
        write_export(target, build_bundle(histories, settings), overwrite=True)
        rebuilt = _json_tables(json.loads(target.read_text(encoding="utf-8"))) if rec.fmt == ".json" \
            else _xlsx_tables(target)
    cells, diffs, env = compare_tables(rec.tables, rebuilt)
    return ReplayResult(Path(path), cells, len(rec.tables), tuple(changes), tuple(diffs), tuple(env))


def _leading_files(argv: Sequence[str]) -> int:
    n = 0
    for a in argv:
        if a.startswith("--"):
            break
        n += 1
    return n
