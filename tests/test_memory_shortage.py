"""Running out of memory is said as such: never "damaged file", never an internal error.

A damaged header can ask for gigabytes, and so can a sound file read under a screening child's
``--memory`` limit; either way the user is told that memory ran short, and batch screening
records it as ``MemoryLimit`` (docs/screening.md).
"""

from __future__ import annotations

import gzip
from pathlib import Path

import pytest

from splitting.errors import InputError, MemoryShortageError


def _no_memory(*args, **kwargs):
    raise MemoryError


def test_shortage_is_an_input_error_with_its_exit_code() -> None:
    assert issubclass(MemoryShortageError, InputError)
    assert MemoryShortageError.exit_code == InputError.exit_code == 2


def test_ase_reader_reports_a_shortage(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    import ase.io

    from splitting.readers import read_atoms

    path = tmp_path / "cell.xyz"
    path.write_text("1\n\nC 0 0 0\n")
    monkeypatch.setattr(ase.io, "read", _no_memory)
    with pytest.raises(MemoryShortageError, match=r"cell\.xyz: reading the file needs more memory"):
        read_atoms(path)


def test_decompression_reports_a_shortage(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    from splitting._io import read_input_bytes

    path = tmp_path / "cell.xyz.gz"
    path.write_bytes(gzip.compress(b"1\n\nC 0 0 0\n"))
    monkeypatch.setattr(gzip.GzipFile, "read", _no_memory)
    with pytest.raises(MemoryShortageError, match=r"needs more memory"):
        read_input_bytes(path)


def test_symmetry_search_lets_a_shortage_through(monkeypatch: pytest.MonkeyPatch) -> None:
    # spglib's allocation failure is the machine's limit, not "no space group at this tolerance"
    import numpy as np
    import spglib

    from splitting.crystal.spacegroup import spglib_dataset

    monkeypatch.setattr(spglib, "get_symmetry_dataset", _no_memory)
    with pytest.raises(MemoryError):
        spglib_dataset(np.eye(3) * 4, np.zeros((1, 3)), np.array([6]), 0.01)


def test_screening_records_a_reader_shortage_as_memory_limit(
    structures_dir: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    import splitting.crystal.predict as pipeline
    from splitting.batch.work import screen_one

    calcite = str(structures_dir / "calcite.cif")

    def short(path, *args, **kwargs):
        raise MemoryShortageError(f"{path}: reading the file needs more memory than this process may have")

    monkeypatch.setattr(pipeline, "load_structure", short)
    row, bands = screen_one("lab/calcite.cif", "k", calcite, {})
    assert (row["ok"], row["error_kind"], bands) == (False, "MemoryLimit", [])
    assert row["error"].startswith("lab/calcite.cif: reading the file needs more memory")


def test_cli_says_memory_ran_out(structures_dir: Path, monkeypatch: pytest.MonkeyPatch, run_cli) -> None:
    import splitting.crystal.predict as pipeline

    monkeypatch.setattr(pipeline, "load_structure", _no_memory)
    code, out, err = run_cli(["predict", structures_dir / "calcite.cif"])
    assert code == 2 and out == ""
    assert err == "error: ran out of memory; the input is too large for the memory this process may use\n"
