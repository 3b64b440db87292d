"""Atomic, no-clobber writes: the old file survives every failure and no temporary file is left.

Source for the technique: common practice, no source (temporary file in the same folder, fsync,
then os.replace, which POSIX and Windows document as atomic within one file system).
"""

from __future__ import annotations

import errno
import os
import stat

import pytest

from volbench.errors import VolbenchError
from volbench.export import atomic as atomic_mod
from volbench.export import atomic_write


def _listing(folder):
    return sorted(p.name for p in folder.iterdir())


@pytest.mark.parametrize("payload, expected", [
    (b"\x00\x01binary", b"\x00\x01binary"),
    ("text \u00e9\n", "text \u00e9\n".encode()),
    (lambda fh: fh.write(b"streamed"), b"streamed"),
])
def test_writes_bytes_text_and_streams(tmp_path, payload, expected):
    target = tmp_path / "out.dat"
    assert atomic_write(target, payload) == target
    assert target.read_bytes() == expected
    assert _listing(tmp_path) == ["out.dat"]


def test_refuses_to_overwrite_and_leaves_the_file_unchanged(tmp_path):
    target = tmp_path / "sheet.csv"
    target.write_bytes(b"old")
    with pytest.raises(VolbenchError, match=r"sheet\.csv already exists; pass --force \(in the window: confirm the replacement\) to replace it"):
        atomic_write(target, b"new")
    assert target.read_bytes() == b"old"
    assert _listing(tmp_path) == ["sheet.csv"]


def test_overwrite_true_replaces(tmp_path):
    target = tmp_path / "sheet.csv"
    target.write_bytes(b"old")
    atomic_write(target, b"new", overwrite=True)
    assert target.read_bytes() == b"new"
    assert _listing(tmp_path) == ["sheet.csv"]


def test_failure_mid_write_keeps_old_file_and_removes_temp(tmp_path):
    target = tmp_path / "sheet.xlsx"
    target.write_bytes(b"old content")
    seen = {}

    def half_then_disk_full(fh):
        fh.write(b"partial new cont")
        fh.flush()
        seen["temp"] = [p for p in _listing(tmp_path) if p != "sheet.xlsx"]
        raise OSError(errno.ENOSPC, "No space left on device")

    with pytest.raises(VolbenchError, match=r"could not write .*sheet\.xlsx: no space left on the device; "
                                            r".*the existing file is unchanged"):
        atomic_write(target, half_then_disk_full, overwrite=True)
    assert seen["temp"] == []  # the content is built before any temporary file exists
    assert target.read_bytes() == b"old content"
    assert _listing(tmp_path) == ["sheet.xlsx"]


def test_disk_full_while_writing_the_temp_file_removes_it(tmp_path, monkeypatch):
    target = tmp_path / "sheet.xlsx"
    target.write_bytes(b"old content")
    seen = {}

    def full(fd):
        seen["temp"] = [p for p in _listing(tmp_path) if p != "sheet.xlsx"]
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(atomic_mod.os, "fsync", full)
    with pytest.raises(VolbenchError, match=r"no space left on the device; .*the existing file is unchanged"):
        atomic_write(target, b"new content", overwrite=True)
    assert len(seen["temp"]) == 1 and seen["temp"][0].startswith(".sheet.xlsx.vb")  # it really existed
    assert target.read_bytes() == b"old content"
    assert _listing(tmp_path) == ["sheet.xlsx"]


def test_a_later_write_removes_temp_files_left_by_a_killed_export(tmp_path):
    # a process that has ended: start one and wait for it (its pid is then free)
    import subprocess
    import sys
    done = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"], capture_output=True, text=True,
                          check=True)
    dead = int(done.stdout)
    left = tmp_path / f".sheet.xlsx.vb{dead}-0123456789ab.tmp"
    left.write_bytes(b"")
    mine = tmp_path / f".sheet.xlsx.vb{os.getpid()}-0123456789ab.tmp"  # a live writer's: kept
    mine.write_bytes(b"")
    other = tmp_path / ".other.xlsx.vb1-0123456789ab.tmp"  # another name's: not ours to judge
    other.write_bytes(b"")
    unrelated = tmp_path / ".sheet.xlsx.someone.tmp"
    unrelated.write_bytes(b"")
    atomic_write(tmp_path / "sheet.xlsx", b"new")
    if os.name == "posix":
        assert not left.exists()
    assert mine.exists() and other.exists() and unrelated.exists()


def test_failed_rename_keeps_old_file_and_removes_temp(tmp_path, monkeypatch):
    target = tmp_path / "sheet.json"
    target.write_bytes(b"{}")

    def refuse(src, dst):
        raise PermissionError(errno.EACCES, "Permission denied", str(dst))

    monkeypatch.setattr(atomic_mod.os, "replace", refuse)
    with pytest.raises(VolbenchError, match=r"could not write .*sheet\.json: permission denied; check that you "
                                            r"can write to the folder"):
        atomic_write(target, b'{"new": 1}', overwrite=True)
    assert target.read_bytes() == b"{}"
    assert _listing(tmp_path) == ["sheet.json"]


def test_bug_in_writer_propagates_but_cleans_up(tmp_path):
    target = tmp_path / "sheet.csv"
    target.write_bytes(b"old")

    def buggy(fh):
        fh.write(b"x")
        raise RuntimeError("writer bug")

    with pytest.raises(RuntimeError, match="writer bug"):
        atomic_write(target, buggy, overwrite=True)
    assert target.read_bytes() == b"old"
    assert _listing(tmp_path) == ["sheet.csv"]


def test_file_appearing_during_the_write_is_not_clobbered(tmp_path):
    target = tmp_path / "sheet.csv"

    def someone_else_creates_it(fh):
        target.write_bytes(b"theirs")
        fh.write(b"ours")

    with pytest.raises(VolbenchError, match=r"sheet\.csv already exists; pass --force"):
        atomic_write(target, someone_else_creates_it)
    assert target.read_bytes() == b"theirs"
    assert _listing(tmp_path) == ["sheet.csv"]


def test_falls_back_when_hard_links_are_not_supported(tmp_path, monkeypatch):
    def no_links(src, dst):
        raise OSError(errno.EPERM, "Operation not permitted")

    monkeypatch.setattr(atomic_mod.os, "link", no_links)
    target = tmp_path / "sheet.csv"
    atomic_write(target, b"new")
    assert target.read_bytes() == b"new"
    assert _listing(tmp_path) == ["sheet.csv"]


def test_missing_folder_is_a_clear_error(tmp_path):
    with pytest.raises(VolbenchError, match=r"folder .*nowhere does not exist; create it first"):
        atomic_write(tmp_path / "nowhere" / "out.csv", b"x")


def test_destination_that_is_a_folder(tmp_path):
    (tmp_path / "out.csv").mkdir()
    with pytest.raises(VolbenchError, match=r"out\.csv: it is a folder; give a file path inside it"):
        atomic_write(tmp_path / "out.csv", b"x", overwrite=True)


def test_unwritable_folder_simulated(tmp_path, monkeypatch):
    def denied(path, flags, mode=0o777):
        raise PermissionError(errno.EACCES, "Permission denied", str(path))

    monkeypatch.setattr(atomic_mod.os, "open", denied)
    with pytest.raises(VolbenchError, match=r"could not write .*out\.csv: permission denied; check that you can "
                                            r"write to the folder"):
        atomic_write(tmp_path / "out.csv", b"x")
    assert _listing(tmp_path) == []


@pytest.mark.skipif(os.name != "posix" or os.geteuid() == 0, reason="needs POSIX permissions and a non-root user")
def test_unwritable_folder_for_real(tmp_path):
    folder = tmp_path / "locked"
    folder.mkdir()
    folder.chmod(stat.S_IRUSR | stat.S_IXUSR)
    try:
        with pytest.raises(VolbenchError, match=r"permission denied; check that you can write to the folder"):
            atomic_write(folder / "out.csv", b"x")
    finally:
        folder.chmod(stat.S_IRWXU)
    assert _listing(folder) == []


@pytest.mark.skipif(os.name != "posix", reason="POSIX permission bits")
def test_new_file_gets_normal_permissions(tmp_path):
    old = os.umask(0o022)
    try:
        atomic_write(tmp_path / "out.csv", b"x")
    finally:
        os.umask(old)
    # 0o666 & ~0o022: readable by others like any file the user saves (not the 0o600 of mkstemp)
    assert stat.S_IMODE((tmp_path / "out.csv").stat().st_mode) == 0o644
