"""Pieces of batch screening that need no cluster: inputs, keys, the sandbox, the part store."""

from __future__ import annotations

import os
import signal
from pathlib import Path

import pytest

from splitting.batch.inputs import collect, options_text, structure_key
from splitting.batch.sandbox import Sandbox
from splitting.batch.store import PartStore, read_metadata
from splitting.errors import InputError


def test_collect_folder_pattern_and_list(tmp_path: Path, structures_dir: Path) -> None:
    (tmp_path / "a").mkdir()
    (tmp_path / "a" / "x.cif").write_text("x")
    (tmp_path / "a" / "notes.md").write_text("not a structure")
    (tmp_path / "a" / "POSCAR").write_text("x")
    (tmp_path / "list.txt").write_text("# two files\na/x.cif\n\nmissing.cif\n")
    got = collect([tmp_path / "a", tmp_path / "list.txt", str(structures_dir / "calcite.*")])
    names = [Path(p).name for p in got]
    # a folder gives structure files by ending; the list repeats a/x.cif (kept once) and names a missing file
    assert names == ["POSCAR", "x.cif", "missing.cif", "calcite.cif", "calcite.extxyz", "calcite.vasp"]


@pytest.mark.parametrize("source", ["nowhere", "nowhere/*.cif"])
def test_collect_bad_source(source: str, tmp_path: Path) -> None:
    with pytest.raises(InputError, match=r"no such file|matches no file"):
        collect([tmp_path / source])


def test_collect_empty_folder(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="no structure files in this folder"):
        collect([tmp_path])


def test_key_depends_on_content_and_options() -> None:
    a = options_text({"tolerance": 0.01, "formulas": []})
    b = options_text({"formulas": [], "tolerance": 0.01})
    assert a == b  # key order does not matter
    assert structure_key(b"x", a) == structure_key(b"x", b)
    assert structure_key(b"x", a) != structure_key(b"y", a)
    assert structure_key(b"x", a) != structure_key(b"x", options_text({"tolerance": 0.02, "formulas": []}))


@pytest.fixture
def box():
    sandbox = Sandbox()
    yield sandbox
    sandbox.close()


def test_sandbox_limits(box: Sandbox, structures_dir: Path, tmp_path: Path) -> None:
    import ase.io

    c60 = structures_dir / "c60_ordered_Pa-3.cif"
    calcite = structures_dir / "calcite.cif"
    # the budget is address space above the child's size after its warm-up, measured with the
    # heap's free memory given back (glibc), so an 8,640-atom cell cannot fit in 1 MiB
    big = tmp_path / "c60_3x3x4.cif"
    ase.io.write(big, ase.io.read(c60).repeat((3, 3, 4)), format="cif")
    row, bands = box.run(str(big), "k", big.read_bytes(), {}, timeout=0, memory=1)
    assert (row["ok"], row["error_kind"], bands) == (False, "MemoryLimit", [])
    assert row["error"] == f"{big}: ran out of memory (limit 1 MiB per structure)"
    row, _ = box.run(str(c60), "k", c60.read_bytes(), {}, timeout=0.01, memory=0)
    assert (row["ok"], row["error_kind"]) == (False, "Timeout")
    row, bands = box.run(str(calcite), "k", calcite.read_bytes(), {}, timeout=60, memory=0)  # a fresh child
    assert row["ok"] and row["space_group"] == "R-3c" and bands


def test_sandbox_crash_is_a_row(box: Sandbox, structures_dir: Path) -> None:
    calcite = structures_dir / "calcite.cif"
    box.run(str(calcite), "k", calcite.read_bytes(), {}, timeout=60, memory=0)
    assert box._proc is not None
    os.kill(box._proc.pid, signal.SIGSEGV)  # as a crash in compiled code would end it
    box._proc.wait()
    row, _ = box.run(str(calcite), "k", calcite.read_bytes(), {}, timeout=60, memory=0)
    assert row["ok"]  # the dead child was noticed before sending and replaced


def test_half_written_part_is_not_committed(tmp_path: Path) -> None:
    store = PartStore(tmp_path / "out", {"version": "x"})
    row = {"path": "a.cif", "name": "a.cif", "key": "k1", "ok": False, "error_kind": "InputError", "error": "e"}
    store.commit("p1", [row], [])
    (store.parts / "p2.bands.parquet").write_bytes(b"left over by an interrupted run")
    assert store.committed_keys() == {"k1"}
    s, b = store.assemble([("b.cif", "k1")], {"version": "x"})
    assert read_metadata(s)["table"] == "structures" and read_metadata(b)["table"] == "bands"
    names = sorted(p.name for p in store.parts.iterdir())
    assert names == ["p1.bands.parquet", "p1.structures.parquet", "p2.bands.parquet"]


def test_read_metadata_of_other_files(tmp_path: Path) -> None:
    other = tmp_path / "x.parquet"
    other.write_text("not parquet")
    with pytest.raises(InputError, match=r"not a Parquet file that 'splitting screen' wrote") as caught:
        read_metadata(other)
    assert "magic" not in str(caught.value) and str(other) in str(caught.value)
