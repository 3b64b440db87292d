"""Turn the PATH arguments of a survey (files, folders, glob patterns) into the files to read."""

from __future__ import annotations

import glob
import os
from collections.abc import Iterable
from pathlib import Path

from volbench.survey.record import SurveyRecord, failed

PRICE_SUFFIXES = (".csv", ".tsv")
"""File suffixes a folder is searched for (not recursively; case-insensitive)."""

_GLOB_CHARS = set("*?[")


def expand_paths(specs: Iterable[str | os.PathLike]) -> list[str | SurveyRecord]:
    """Files named by ``specs``, in order, each once; a spec that names nothing is an error record.

    Parameters
    ----------
    specs
        File paths, folders (their ``*.csv`` and ``*.tsv`` files, sorted by name, not searched
        recursively) or glob patterns (``**`` searches subfolders), as given on the command line.

    Returns
    -------
    list
        File paths (str) and, in place of a spec that names no file, a failed
        :class:`~volbench.survey.record.SurveyRecord` saying why (missing file, empty folder,
        pattern without a match), so that a survey reports it as a row and carries on.
    """
    out: list[str | SurveyRecord] = []
    seen: set[str] = set()

    def add(path: str) -> None:
        key = os.path.realpath(path)
        if key not in seen:
            seen.add(key)
            out.append(path)

    for spec in specs:
        text = os.fspath(spec)
        p = Path(text).expanduser()
        if p.is_dir():
            found = sorted(str(f) for f in p.iterdir() if f.is_file() and f.suffix.lower() in PRICE_SUFFIXES)
            if not found:
                out.append(failed(p.name or str(p), str(p), f"{p}: folder holds no {' or '.join(PRICE_SUFFIXES)} "
                                  "files (subfolders are not searched; use a pattern such as "
                                  f"'{p / '**' / '*.csv'}')"))
            for f in found:
                add(f)
        elif p.is_file():
            add(str(p))
        elif _GLOB_CHARS & set(text):
            found = sorted(f for f in glob.glob(str(p), recursive=True) if os.path.isfile(f))
            if not found:
                out.append(failed(p.name, text, f"{text}: no file matches this pattern"))
            for f in found:
                add(f)
        else:
            what = "not found" if not p.exists() else "is not a file or folder"
            out.append(failed(p.stem or text, str(p), f"{p}: {what}; check the path"))
    return out
