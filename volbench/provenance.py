"""What an output needs to be rebuilt elsewhere: the environment, the command, the sources and
every setting's effective value.

:func:`environment` records the versions of volbench, Python and the numerical libraries, the
platform, the BLAS libraries loaded with their thread counts, the thread variables of the
caller's environment and the thread count in force inside fits (:data:`volbench.threads.FIT_THREADS`).
:func:`command_record` records the command as typed and the equivalent ``volbench export``
command that spells out every setting (absolute source paths), which ``volbench replay`` runs.
:func:`source_record` records each source file's absolute path, size and SHA-256.
:func:`effective_settings` flattens every settings group field by field (``garch.dist``), so a
new group or field appears in every record without a change here.
"""

from __future__ import annotations

import dataclasses
import os
import platform
import shlex
import sys
from collections.abc import Sequence
from importlib import metadata
from pathlib import Path
from typing import Any

from volbench import __version__
from volbench.threads import FIT_THREADS

PACKAGES = ("numpy", "scipy", "pandas", "arch", "statsmodels", "openpyxl", "threadpoolctl")
"""Libraries whose versions every output records."""

THREAD_VARIABLES = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "BLIS_NUM_THREADS",
                    "VECLIB_MAXIMUM_THREADS", "NUMEXPR_NUM_THREADS")
"""Environment variables that set BLAS/OpenMP thread counts."""


def _version(name: str) -> str:
    try:
        return metadata.version(name)
    except metadata.PackageNotFoundError:
        return "not installed"


def blas_libraries() -> list[dict[str, Any]]:
    """Every BLAS/OpenMP library loaded in this process with its thread count (``threadpoolctl``)."""
    from threadpoolctl import threadpool_info

    out = []
    for info in threadpool_info():
        out.append({"api": info.get("user_api"), "library": info.get("internal_api"),
                    "version": info.get("version"), "threads": info.get("num_threads"),
                    "file": Path(str(info.get("filepath", ""))).name})
    return sorted(out, key=lambda d: (str(d["api"]), str(d["library"]), str(d["file"])))


def environment() -> dict[str, Any]:
    """Versions, platform, BLAS libraries and thread settings of this run (JSON-ready)."""
    import numpy  # noqa: F401 - loads the BLAS library so it is listed

    return {
        "volbench": __version__,
        "python": platform.python_version(),
        "packages": {name: _version(name) for name in PACKAGES},
        "platform": platform.platform(),
        "machine": platform.machine(),
        "blas": blas_libraries(),
        "thread_variables": {name: os.environ.get(name, "unset") for name in THREAD_VARIABLES},
        "fit_threads": FIT_THREADS,
    }


def source_record(history) -> dict[str, Any]:
    """A history's source file: absolute path, size in bytes and SHA-256 at load time."""
    src = getattr(history, "source", None)
    path = None if src is None else Path(src).absolute()
    size = None
    if path is not None:
        try:
            size = path.stat().st_size
        except OSError:
            size = None
    return {"series": history.name, "path": None if path is None else str(path), "size": size,
            "sha256": history.sha256}


def command_record(settings, histories: Sequence, argv: Sequence[str] | None = None) -> dict[str, Any]:
    """The command as typed (``argv``; ``None`` from the window) and the equivalent export command.

    ``equivalent_argv`` are the arguments after ``volbench export`` (without ``--to``) that rebuild
    every setting on the same files by absolute path (:func:`volbench.cli.options.export_argv`).
    """
    from volbench.cli.options import export_argv

    files = list(dict.fromkeys(str(Path(h.source).absolute()) for h in histories if h.source is not None))
    equivalent = export_argv(settings, files)
    typed = None if argv is None else ["volbench", *[str(a) for a in argv]]
    return {
        "typed": typed,
        "typed_text": None if typed is None else shlex.join(typed),
        "equivalent_argv": equivalent,
        "equivalent_text": shlex.join(["volbench", "export", *equivalent, "--to", "FILE"]),
        "working_directory": os.getcwd(),
        "executable": sys.executable,
    }


def effective_settings(settings) -> dict[str, Any]:
    """Every field of every settings group, ``group.field`` -> value (nested groups dotted further);
    a group not requested is ``group`` -> ``"off"``."""
    from volbench.settings import group_types

    out: dict[str, Any] = {}
    for name in group_types():
        group = getattr(settings, name)
        if group is None:
            out[name] = "off"
            continue
        _walk(group, name, out)
    return out


def _walk(obj, prefix: str, out: dict[str, Any]) -> None:
    for f in dataclasses.fields(obj):
        value = getattr(obj, f.name)
        key = f"{prefix}.{f.name}"
        if hasattr(value, "source") and hasattr(value, "findings"):  # a file read for a setting
            out[key] = f"file {Path(value.source).absolute()}" if value.source else "given directly"
        elif dataclasses.is_dataclass(value) and not isinstance(value, type):
            _walk(value, key, out)
        elif isinstance(value, (list, tuple)):
            out[key] = ",".join(str(v) for v in value)
        elif value is None:
            out[key] = "none"
        else:
            out[key] = value


def record(settings, histories: Sequence, argv: Sequence[str] | None = None) -> dict[str, Any]:
    """Environment, command, sources and effective settings in one JSON-ready record."""
    return {
        "environment": environment(),
        "command": command_record(settings, histories, argv),
        "sources": [source_record(h) for h in histories],
        "effective_settings": effective_settings(settings),
    }
