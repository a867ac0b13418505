"""Batch screening on a local Dask cluster: tables, failures as rows, metadata, the command.

One two-process cluster is shared by the tests of this file (closed by its fixture).
"""

from __future__ import annotations

import shutil
from collections.abc import Iterator
from pathlib import Path

import numpy as np
import pytest
from conftest import local_cluster

from splitting.batch import read_screening, screen
from splitting.batch.store import read_metadata
from splitting.crystal.predict import Options, predict

GOOD = ["calcite.cif", "co2_Pa-3.cif", "nh4cl_ordered_P-43m.cif", "naphthalene_P21a.cif", "diamond.cif"]


@pytest.fixture(scope="module")
def cluster() -> Iterator[str]:
    """Address of a local cluster with two single-threaded worker processes."""
    with local_cluster() as address:
        yield address


@pytest.fixture
def folder(tmp_path: Path, structures_dir: Path) -> Path:
    """Good bundled crystals, a distorted NH4Cl cell, and three broken files."""
    import ase.io

    src = tmp_path / "in"
    src.mkdir()
    for name in GOOD:
        shutil.copy(structures_dir / name, src / name)
    # invented: NH4Cl with every atom moved at random by ~0.03 A (P1; the ion keeps its Td shape)
    atoms = ase.io.read(structures_dir / "nh4cl_ordered_P-43m.cif")
    atoms.positions += np.random.default_rng(1).normal(0.0, 0.03, atoms.positions.shape)
    ase.io.write(src / "nh4cl_distorted.extxyz", atoms, format="extxyz")
    (src / "garbage.cif").write_bytes(b"\x00\xff\x13" * 200)
    (src / "empty.xyz").write_bytes(b"")
    (src / "cut.cif").write_text((structures_dir / "calcite.cif").read_text()[:1500])
    return src


def test_corrupted_among_good(folder: Path, tmp_path: Path, cluster: str) -> None:
    run = screen(folder, tmp_path / "out", scheduler=cluster)
    s = run.structures.set_index("name")
    assert len(s) == 9 and s.index.is_unique
    bad = ["garbage.cif", "empty.xyz", "cut.cif"]
    assert not s.loc[bad, "ok"].any() and s.loc[bad, "error_kind"].eq("InputError").all()
    assert s.loc["empty.xyz", "error"] == f"{folder / 'empty.xyz'}: the file is empty"
    assert s.drop(index=bad)["ok"].all() and s.drop(index=bad)["error"].isna().all()
    assert run.computed == 9 and run.reused == 0
    # calcite: R-3c, No. 167, CO3 on 6a with site group D3 (structures/README.md: Graf, Am. Mineral. 46,
    # 1283 (1961); site symbol 32 as in International Tables Vol. A, space group 167)
    assert (s.loc["calcite.cif", "space_group"], s.loc["calcite.cif", "space_group_number"]) == ("R-3c", 167)
    b = run.bands[run.bands["name"] == "calcite.cif"].set_index(["unit", "band_kind", "band"], drop=False)
    e = b.loc[("CO3^2-", "internal", "E'")]
    assert (e["site_group"], e["wyckoff"], e["free_group"], e["site_order"]) == ("D3", "6a", "D3h", 6)
    # E' of carbonate in calcite -> Eg + Eu: one IR, one Raman component (from memory, cf. the
    # correlation for calcite in K. Nakamoto, Infrared and Raman Spectra of Inorganic and
    # Coordination Compounds, Part A)
    assert e["factor_components"] == "Eg + Eu"
    assert (e["ir"], e["raman"], e["silent"], e["ins"]) == (1, 1, 0, 2)


def test_rows_follow_the_pipeline(folder: Path, tmp_path: Path, cluster: str) -> None:
    """Every good row says what predict() says (the batch holds no symmetry code of its own)."""
    run = screen(folder, tmp_path / "out", scheduler=cluster, part_size=2)
    for row in run.structures[run.structures["ok"]].itertuples():
        p = predict(row.path)
        t = p.totals()
        assert (row.space_group_number, row.factor_group) == (p.space_group.number, p.factor_group)
        assert (row.ir, row.raman, row.silent, row.polar) == (t["ir"], t["raman"], t["silent"], t["polar"])
        assert row.ins == t["optical"] and row.units == len(p.units)
        assert list(row.site_groups) == [u.site_group for u in p.units]
        bands = run.bands[(run.bands["key"] == row.key) & (run.bands["band_kind"] == "internal")]
        assert list(bands["factor_components"]) == [str(c.factor) for u in p.units for c in u.correlation]
        assert list(bands["modes"]) == [c.modes for u in p.units for c in u.correlation]


def test_screening_queries(folder: Path, tmp_path: Path, cluster: str) -> None:
    """The queries of docs/screening.md."""
    screen(folder, tmp_path / "out", scheduler=cluster)
    run = read_screening(tmp_path / "out")
    bands = run.bands
    tetra_low = bands[(bands["free_group"] == "Td") & (bands["site_order"] <= 2)]
    assert set(tetra_low["name"]) == {"nh4cl_distorted.extxyz"}
    assert set(tetra_low["unit"]) == {"NH4+"} and set(tetra_low["unit_common_name"]) == {"ammonium"}
    many_ir = bands[(bands["band_kind"] == "internal") & (bands["ir"] >= 3)]
    # a T2 band of a Td ion on a C1 site in P1: three A components, all IR-active (common practice)
    assert {"nh4cl_distorted.extxyz"} <= set(many_ir["name"])
    assert not many_ir["name"].isin(["calcite.cif", "diamond.cif"]).any()
    s = run.structures
    ok = s[s["ok"]]
    c1 = ok[ok["lowest_molecular_site_order"] == 1].sort_values("atoms_primitive", ascending=False)
    assert list(c1["name"]) == ["nh4cl_distorted.extxyz"]  # P1 after the random moves
    acentric = ok[~ok["centrosymmetric"] & ok["unit_names"].apply(lambda names: "NH4+" in list(names))]
    # P-43m has no centre of symmetry (International Tables Vol. A, space group 215), nor has P1
    assert set(acentric["name"]) == {"nh4cl_ordered_P-43m.cif", "nh4cl_distorted.extxyz"}
    failed = s.loc[~s["ok"], ["name", "error_kind", "error"]]
    assert set(failed["name"]) == {"garbage.cif", "empty.xyz", "cut.cif"}


def test_metadata(folder: Path, tmp_path: Path, cluster: str) -> None:
    from importlib.metadata import version

    opts = Options(tolerance=0.02, bond_scale=1.2)
    screen(folder, tmp_path / "out", scheduler=cluster, options=opts, timeout=30, memory=1000)
    for name, table in (("structures", "structures"), ("bands", "bands")):
        meta = read_metadata(tmp_path / "out" / f"{name}.parquet")
        assert meta["table"] == table and meta["version"] == version("splitting")
        assert meta["options"]["tolerance"] == 0.02 and meta["options"]["bond_scale"] == 1.2
        assert meta["limits"] == {"timeout": 30.0, "memory": 1000} and meta["inputs"] == 9


def test_copies_screened_once(folder: Path, tmp_path: Path, cluster: str) -> None:
    shutil.copy(folder / "calcite.cif", folder / "calcite_copy.cif")
    run = screen(folder, tmp_path / "out", scheduler=cluster)
    s = run.structures.set_index("name")
    assert run.computed == 9 and len(s) == 10
    assert s.loc["calcite.cif", "key"] == s.loc["calcite_copy.cif", "key"]
    assert (run.bands["name"] == "calcite_copy.cif").sum() == (run.bands["name"] == "calcite.cif").sum() > 0


def test_time_limit_is_a_failure_row(structures_dir: Path, tmp_path: Path, cluster: str) -> None:
    run = screen(structures_dir / "c60_ordered_Pa-3.cif", tmp_path / "out", scheduler=cluster, timeout=0.02)
    row = run.structures.iloc[0]
    assert not row["ok"] and row["error_kind"] == "Timeout"
    assert row["error"].endswith("not done within the time limit of 0.02 s")


def test_command(folder: Path, tmp_path: Path, cluster: str, run_cli) -> None:
    out = tmp_path / "out"
    code, stdout, stderr = run_cli(["screen", folder, "-o", out, "--scheduler", cluster, "--quiet"])
    assert code == 0 and stderr == ""
    assert "screened 9 structures: 6 ok, 3 failed" in stdout and "InputError 3" in stdout
    assert (out / "structures.parquet").is_file() and (out / "bands.parquet").is_file()
    code, stdout, _ = run_cli(["screen", folder, "-o", out, "--scheduler", cluster, "--quiet"])
    assert code == 0 and "(0 done now, 9 from earlier parts)" in stdout


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (["nowhere/*.cif"], "the pattern matches no file"),
        (["missing.cif"], "no such file or folder"),
        (["{s}", "--timeout", "-1"], "--timeout: -1 is out of range: give a number at least 0 and at most"),
        (["{s}", "--part-size", "0"], "--part-size: 0 is out of range: give a whole number at least 1 and at most"),
        # addresses that cannot be one are refused at once, before any connection is tried
        (["{s}", "--scheduler", "tcp://256.0.0.1:1"], "256.0.0.1 is not an IPv4 address"),
        (["{s}", "--scheduler", "nonsense"], "the address needs a host and a port 1-65535"),
        (["{s}", "--scheduler", "tcp://localhost:70000"], "the address needs a host and a port 1-65535"),
        (["{s}", "--scheduler", "http://localhost:8786"], "unknown transport 'http'"),
    ],
)
def test_bad_input(argv: list[str], message: str, tmp_path: Path, structures_dir: Path, run_cli) -> None:
    out = tmp_path / "out"
    args = [a.format(s=structures_dir / "calcite.cif") for a in argv]
    code, stdout, stderr = run_cli(["screen", *args, "-o", out, "--quiet"])
    assert code != 0 and stdout == ""
    assert stderr.startswith("error: ") and message in stderr and stderr.count("\n") == 1
    assert not out.exists()


def test_scheduler_address_refused_before_connecting(tmp_path: Path, structures_dir: Path) -> None:
    """An address that cannot exist is refused by its syntax (the message says which part is wrong),
    not after the connection's 30 s wait (whose message says no scheduler answers)."""
    from splitting.errors import InputError

    with pytest.raises(InputError, match="not an IPv4 address") as info:
        screen(structures_dir / "calcite.cif", tmp_path / "out", scheduler="tcp://256.0.0.1:1")
    assert "answers" not in str(info.value)
    assert not (tmp_path / "out").exists()
