"""Outputs that cannot be written: nothing half-written, one line, exit 6 (R21, R22, R24).

R24 (disk full) runs on a real 64 KiB tmpfs when the tests may mount one (root), and always
with ENOSPC simulated in the writer.
"""

from __future__ import annotations

import errno
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
CALCITE = ROOT / "structures" / "calcite.cif"


def _one_error_line(code: int, out: str, err: str, expected: int) -> str:
    assert code == expected, err
    assert err.startswith("error: ") and err.count("\n") == 1, err
    assert "internal error" not in err
    return err


def test_R21_a_file_name_too_long(run_cli, tmp_path: Path) -> None:
    err = _one_error_line(*run_cli(["predict", tmp_path / ("y" * 300 + ".cif")]), 2)
    assert "too long" in err
    err = _one_error_line(*run_cli(["draw", CALCITE, "-o", tmp_path / ("y" * 300 + ".svg")]), 6)
    assert "too long" in err


def test_R22_output_name_is_a_folder(run_cli, tmp_path: Path) -> None:
    folder = tmp_path / "isdir.svg"
    folder.mkdir()
    err = _one_error_line(*run_cli(["draw", CALCITE, "-o", folder]), 6)
    assert "folder" in err


@pytest.mark.skipif(os.geteuid() == 0, reason="root writes into read-only folders")
def test_R22_read_only_folder(run_cli, tmp_path: Path) -> None:
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o555)
    try:
        err = _one_error_line(*run_cli(["draw", CALCITE, "-o", ro / "x.svg"]), 6)
        assert "permission denied" in err
        assert list(ro.iterdir()) == []
    finally:
        ro.chmod(0o755)


def test_R22_demo_out_names_a_file_or_a_folder_of_other_files(run_cli, tmp_path: Path) -> None:
    afile = tmp_path / "afile"
    afile.write_text("mine\n")
    err = _one_error_line(*run_cli(["demo", "--out", afile]), 6)
    assert "a file of that name exists" in err
    assert afile.read_text() == "mine\n"
    mine = tmp_path / "mine"
    mine.mkdir()
    (mine / "notes.txt").write_text("keep\n")
    err = _one_error_line(*run_cli(["demo", "--out", mine]), 6)
    assert "holds other files" in err
    assert [p.name for p in mine.iterdir()] == ["notes.txt"]


def test_R24_disk_full_while_writing_a_figure(run_cli, tmp_path: Path, monkeypatch) -> None:
    """ENOSPC in the middle of a write: one line, exit 6, neither the file nor a temporary left."""
    real = os.fdopen

    def full(fd, *args, **kwargs):
        handle = real(fd, *args, **kwargs)

        class Full:
            def __enter__(self):
                return self

            def __exit__(self, *exc):
                handle.close()
                return False

            def write(self, data):
                raise OSError(errno.ENOSPC, "No space left on device")

            def __getattr__(self, name):
                return getattr(handle, name)

        return Full()

    monkeypatch.setattr(os, "fdopen", full)
    out = tmp_path / "x.png"
    err = _one_error_line(*run_cli(["draw", CALCITE, "-o", out]), 6)
    assert "no space left" in err
    assert list(tmp_path.iterdir()) == []


def test_R24_demo_leaves_no_partial_folder_after_a_failure(run_cli, tmp_path: Path, monkeypatch) -> None:
    """The demo writes into a temporary folder renamed whole: a failure half-way leaves nothing."""
    import splitting.demo as demo
    from splitting._io import output_error

    calls = {"n": 0}
    real = demo.atomic_write_text

    def fail_on_fifth(path, text):
        calls["n"] += 1
        if calls["n"] == 5:
            raise output_error(path, OSError(errno.ENOSPC, "No space left on device"))
        return real(path, text)

    monkeypatch.setattr(demo, "atomic_write_text", fail_on_fifth)
    out = tmp_path / "demo"
    err = _one_error_line(*run_cli(["demo", "--out", out]), 6)
    assert "no space left" in err
    assert list(tmp_path.iterdir()) == []


def _can_mount() -> bool:
    return os.geteuid() == 0 and sys.platform.startswith("linux") and Path("/proc/filesystems").exists()


@pytest.mark.skipif(not _can_mount(), reason="needs root to mount a small tmpfs")
def test_R24_real_disk_full_on_a_small_tmpfs(tmp_path: Path) -> None:
    fs = tmp_path / "fs"
    fs.mkdir()
    if subprocess.run(["mount", "-t", "tmpfs", "-o", "size=64k", "tmpfs", str(fs)], capture_output=True).returncode:
        pytest.skip("mount refused")
    try:
        cmd = [sys.executable, "-m", "splitting"]
        proc = subprocess.run([*cmd, "draw", str(CALCITE), "-o", str(fs / "x.png")], capture_output=True, text=True)
        assert proc.returncode == 6 and proc.stderr.count("\n") == 1, proc.stderr
        assert list(fs.iterdir()) == []
        proc = subprocess.run([*cmd, "demo", "--out", str(fs / "demo")], capture_output=True, text=True)
        assert proc.returncode == 6 and proc.stderr.count("\n") == 1, proc.stderr
        assert list(fs.iterdir()) == []
    finally:
        subprocess.run(["umount", str(fs)], check=False)
