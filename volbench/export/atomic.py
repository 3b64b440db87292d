"""Atomic, no-clobber file writes for exports.

A pricing sheet that another workbook links to must never be left half-written, and an export
must never replace a file the user did not mean to replace. Every export writer goes through
:func:`atomic_write`.
"""

from __future__ import annotations

import errno
import io
import os
import re
import secrets
import time
from collections.abc import Callable
from contextlib import suppress
from pathlib import Path
from typing import BinaryIO

from volbench.errors import VolbenchError

Payload = bytes | str | Callable[[BinaryIO], None]
"""What to write: bytes, text (written as UTF-8), or a function that writes into a binary file."""

_TEMP_ATTEMPTS = 50
_STALE_SECONDS = 24 * 3600
"""A temporary file of ours whose writer cannot be checked is removed once this old."""


class _NameTaken(Exception):
    """The destination appeared between the existence check and the move."""


def atomic_write(path: str | os.PathLike, data: Payload, *, overwrite: bool = False) -> Path:
    """Write ``data`` to ``path`` so that readers see the old file or the new one, never a mix.

    Parameters
    ----------
    path
        Destination file. Its folder must exist.
    data
        Bytes, text (encoded as UTF-8), or ``write(binary_file)`` that streams the content.
    overwrite
        Replace an existing file. When false (the default) an existing file is never touched.

    Returns
    -------
    Path
        The destination path.

    Raises
    ------
    VolbenchError
        The file exists and ``overwrite`` is false; the folder is missing or not writable; the
        destination is a folder; or the write failed (disk full, permission, ...). The message
        names the path and the reason; an existing file is left unchanged in every case.

    Notes
    -----
    Common practice, no source: the content is built in memory first (a streamed payload writes
    into a buffer), so the temporary file is created at the last moment; it is uniquely named in
    the same folder (so the final rename never crosses file systems), written, flushed and
    ``fsync``-ed, and then moved into place with ``os.replace`` (atomic on POSIX and Windows).
    Without ``overwrite`` the move is a hard link, which fails if the name was taken meanwhile,
    so a file created by someone else between the check and the move is not clobbered either
    (file systems without hard links fall back to a check followed by ``os.replace``). The
    temporary file is removed on every failure path; one left by a process that was killed is
    removed by the next write to the same name (see :func:`remove_stale_temps`). Replacing a
    symbolic link replaces the link, not its target.
    """
    target = check_destination(path, overwrite=overwrite)
    folder = target.parent
    existed = target.exists()
    kept = "; the existing file is unchanged" if existed else ""
    tmp: Path | None = None
    try:
        if callable(data):
            buf = io.BytesIO()
            data(buf)
            content = buf.getvalue()
        else:
            content = data.encode("utf-8") if isinstance(data, str) else bytes(data)
        remove_stale_temps(folder, target.name)
        fd, tmp = _open_temp(folder, target.name)
        with os.fdopen(fd, "wb") as fh:
            fh.write(content)
            fh.flush()
            os.fsync(fh.fileno())
        _publish(tmp, target, overwrite)
        tmp = None
    except _NameTaken:
        raise VolbenchError(exists_message(target)) from None
    except VolbenchError as exc:
        raise VolbenchError(f"could not write {target}: {exc}{kept}") from exc
    except OSError as exc:
        raise VolbenchError(f"could not write {target}: {_reason(exc, folder)}{kept}") from exc
    finally:
        if tmp is not None:
            with suppress(OSError):
                os.unlink(tmp)
    _sync_folder(folder)
    return target


def exists_message(target: Path) -> str:
    return f"{target} already exists; pass --force (in the window: confirm the replacement) to replace it, or choose another name"


def check_destination(path: str | os.PathLike, *, overwrite: bool = False) -> Path:
    """The destination as a Path, after the checks :func:`atomic_write` makes before writing.

    Lets a front end fail before doing any work: the folder must exist, the path must not be a
    folder, and an existing file needs ``overwrite``. Raises :class:`VolbenchError` otherwise.
    """
    target = Path(os.fspath(path)).expanduser()
    folder = target.parent
    if not target.name or target.name in (".", ".."):
        raise VolbenchError(f"export path {str(target)!r} has no file name; give a file path such as out.xlsx")
    if not folder.is_dir():
        what = "is not a folder" if folder.exists() else "does not exist"
        raise VolbenchError(f"cannot write {target}: folder {folder} {what}; create it first or choose another path")
    if target.is_dir():
        raise VolbenchError(f"cannot write {target}: it is a folder; give a file path inside it, e.g. {target / 'volbench.xlsx'}")
    if target.exists() and not overwrite:
        raise VolbenchError(exists_message(target))
    return target


def _temp_pattern(name: str) -> re.Pattern:
    return re.compile(rf"\.{re.escape(name)}\.vb(\d+)-[0-9a-f]{{12}}\.tmp")


def _alive(pid: int) -> bool | None:
    """Whether process ``pid`` runs (``None`` where that cannot be asked safely)."""
    if os.name != "posix":
        return None
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OSError):
        return True
    return True


def remove_stale_temps(folder: Path, name: str) -> list[Path]:
    """Remove temporary files that an earlier, killed export to ``name`` left in ``folder``.

    Only files named as :func:`atomic_write` names its own are touched, and only when the process
    that wrote one has ended (or, where that cannot be asked, when it is a day old).
    """
    pattern = _temp_pattern(name)
    removed = []
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return removed
    for entry in entries:
        m = pattern.fullmatch(entry.name)
        if not m:
            continue
        pid = int(m.group(1))
        alive = _alive(pid)
        try:
            stale = (alive is False or (alive is None and time.time() - entry.stat().st_mtime > _STALE_SECONDS))
            if stale and pid != os.getpid():
                os.unlink(entry.path)
                removed.append(Path(entry.path))
        except OSError:
            continue
    return removed


def _open_temp(folder: Path, name: str) -> tuple[int, Path]:
    """Create ``.<name>.vb<pid>-<random>.tmp`` in ``folder`` exclusively; normal permissions (umask applies)."""
    flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)
    for _ in range(_TEMP_ATTEMPTS):
        tmp = folder / f".{name}.vb{os.getpid()}-{secrets.token_hex(6)}.tmp"
        try:
            return os.open(tmp, flags, 0o666), tmp
        except FileExistsError:
            continue
    raise VolbenchError(f"could not create a temporary file in {folder} after {_TEMP_ATTEMPTS} attempts")


def _publish(tmp: Path, target: Path, overwrite: bool) -> None:
    if overwrite:
        os.replace(tmp, target)
        return
    try:
        os.link(tmp, target)  # fails if the name is taken meanwhile: never clobbers
    except FileExistsError:
        raise _NameTaken from None
    except OSError:  # file system without hard links: check, then move
        if target.exists():
            raise _NameTaken from None
        os.replace(tmp, target)
        return
    with suppress(OSError):
        os.unlink(tmp)


def _sync_folder(folder: Path) -> None:
    """Flush the folder entry so the rename survives a crash (POSIX only; best effort)."""
    if os.name != "posix":
        return
    with suppress(OSError):
        fd = os.open(folder, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def _reason(exc: OSError, folder: Path) -> str:
    if isinstance(exc, PermissionError):
        return f"permission denied; check that you can write to the folder {folder}, or choose another path"
    if exc.errno == errno.ENOSPC:
        return "no space left on the device; free some space or choose another disk"
    if exc.errno == errno.EROFS:
        return f"the folder {folder} is on a read-only file system; choose another path"
    return exc.strerror or str(exc) or type(exc).__name__
