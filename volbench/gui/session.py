"""Save and reopen a workbench session: the files, the selected series and every choice.

A session is a small JSON document with a ``"version"`` field. Reading refuses, with a message
the user can act on, a file that is not JSON, is not a volbench session, or was written by a
newer version than this one reads. Each price file is stored with its SHA-256 and size as loaded,
so that reopening the session can say which files changed or moved since.
"""

from __future__ import annotations

import hashlib
import json
import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

from volbench import __version__
from volbench.errors import VolbenchError
from volbench.gui.state import Choices

SESSION_VERSION = 1
SESSION_KIND = "volbench-session"


@dataclass(frozen=True)
class FileCheck:
    """How a session's price file compares with the version the session was saved with.

    ``status``: ``"same"``, ``"changed"`` (SHA-256 or size differ), ``"moved"`` (found through
    its path relative to the session, not its saved path), ``"missing"`` or ``"unknown"`` (no
    fingerprint saved). ``note`` says what differs, in words.
    """

    path: str
    status: str
    note: str = ""


@dataclass(frozen=True)
class Session:
    files: tuple[str, ...]
    selected: str | None
    choices: Choices
    fingerprints: tuple[tuple[str, str | None, int | None], ...] = ()
    """(path, SHA-256, size in bytes) of each file as loaded (written)."""
    checks: tuple[FileCheck, ...] = ()
    """How each file compares now (filled by :func:`read_session`)."""


def file_fingerprint(path: str | Path) -> tuple[str, int]:
    """SHA-256 and size of a file's bytes now."""
    h = hashlib.sha256()
    size = 0
    with open(path, "rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            h.update(chunk)
            size += len(chunk)
    return h.hexdigest(), size


def session_dict(session: Session, base: Path | None = None) -> dict:
    """JSON-ready mapping; file paths stored absolute and relative to ``base`` (the session's folder),
    with the SHA-256 and size of the version loaded."""
    prints = {str(Path(p).resolve()): (sha, size) for p, sha, size in session.fingerprints}
    files = []
    for f in session.files:
        p = Path(f).resolve()
        rel = None
        if base is not None:
            try:
                rel = os.path.relpath(p, base.resolve())
            except ValueError:  # other drive on Windows
                rel = None
        sha, size = prints.get(str(p), (None, None))
        files.append({"path": str(p), "relative": rel, "sha256": sha, "size": size})
    return {
        "kind": SESSION_KIND,
        "version": SESSION_VERSION,
        "written_by": f"volbench {__version__}",
        "files": files,
        "selected": session.selected,
        "choices": session.choices.as_dict(),
    }


def write_session(path: str | Path, session: Session) -> Path:
    """Write ``session`` to ``path`` atomically (temporary file in the same folder, then rename)."""
    path = Path(path)
    text = json.dumps(session_dict(session, path.parent), indent=2)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            fh.write(text + "\n")
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


def read_session(path: str | Path) -> Session:
    """Read a session file.

    Raises
    ------
    VolbenchError
        Missing, not JSON, not a session, written by a newer volbench, or holding bad values.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise VolbenchError(f"{path}: session file not found; choose an existing .json session") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise VolbenchError(f"{path}: cannot read the session file ({exc}); choose a session saved "
                            "by volbench") from None
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise VolbenchError(f"{path}: line {exc.lineno}: the session file is damaged (not valid JSON: "
                            f"{exc.msg}); open another session or save a new one") from None
    if not isinstance(data, dict) or data.get("kind") != SESSION_KIND or "version" not in data:
        raise VolbenchError(f"{path}: not a volbench session (no 'kind' and 'version' fields); "
                            "choose a file saved with File > Save session")
    version = data["version"]
    if not isinstance(version, int) or version < 1:
        raise VolbenchError(f"{path}: session version must be a positive whole number, got {version!r}")
    if version > SESSION_VERSION:
        raise VolbenchError(f"{path}: the session was saved by a newer volbench (session version "
                            f"{version}; this one reads up to {SESSION_VERSION}); update volbench "
                            "to open it")
    files = []
    checks = []
    for entry in data.get("files", []):
        if not isinstance(entry, dict) or not isinstance(entry.get("path"), str):
            raise VolbenchError(f"{path}: a file entry is malformed ({entry!r}); save the session again")
        p = Path(entry["path"])
        moved = False
        if not p.exists() and entry.get("relative"):
            alt = (path.parent / entry["relative"]).resolve()
            if alt.exists():
                p, moved = alt, True
        files.append(str(p))
        checks.append(_check_file(p, moved, entry))
    choices = data.get("choices", {})
    if not isinstance(choices, dict):
        raise VolbenchError(f"{path}: 'choices' must be a mapping; save the session again")
    try:
        parsed = Choices.from_dict(choices)
    except VolbenchError as exc:
        raise VolbenchError(f"{path}: {exc}; save the session again") from None
    selected = data.get("selected")
    return Session(tuple(files), selected if isinstance(selected, str) else None, parsed, checks=tuple(checks))


def _check_file(p: Path, moved: bool, entry: dict) -> FileCheck:
    if not p.is_file():
        return FileCheck(str(p), "missing", "not found at its saved path nor next to the session")
    sha, size = entry.get("sha256"), entry.get("size")
    if not isinstance(sha, str):
        return FileCheck(str(p), "moved" if moved else "unknown",
                         f"found at {p} (moved since the session was saved)" if moved else "")
    try:
        now_sha, now_size = file_fingerprint(p)
    except OSError as exc:
        return FileCheck(str(p), "missing", f"cannot be read ({exc.strerror or exc})")
    if now_sha != sha or (isinstance(size, int) and now_size != size):
        what = (f"size {size:,} -> {now_size:,} bytes" if isinstance(size, int) and size != now_size
                else "same size, different content")
        where = f"; found at {p}" if moved else ""
        return FileCheck(str(p), "changed", f"{what}, SHA-256 differs{where}")
    if moved:
        return FileCheck(str(p), "moved", f"found at {p} (moved since the session was saved; content unchanged)")
    return FileCheck(str(p), "same")
