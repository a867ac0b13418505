"""Structure files that broke the reader: each gives one ``error:`` line and exit status 2.

Each case is a small variant of a bundled file (calcite, CsCl) with one number spoiled:
NaN or inf coordinates (these once crashed the symmetry library), count lines claiming
10^12 atoms, cells that are flat, negative, absurd or not finite, occupancies that are
not numbers or out of [0.01, 1], atoms that coincide or table rows that do not fit.
"""

from __future__ import annotations

import gzip
from pathlib import Path

import pytest
from test_predict_bad_input import assert_one_error_line

ROOT = Path(__file__).resolve().parent.parent
CALCITE_XYZ = (ROOT / "structures" / "calcite.extxyz").read_text()
CALCITE_VASP = (ROOT / "structures" / "calcite.vasp").read_text()


def _cscl(cell: str = "4.12 4.12 4.12 90 90 90", rows: str = "Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1") -> str:
    a, b, c, al, be, ga = cell.split()
    return (
        f"data_cscl\n_cell_length_a {a}\n_cell_length_b {b}\n_cell_length_c {c}\n"
        f"_cell_angle_alpha {al}\n_cell_angle_beta {be}\n_cell_angle_gamma {ga}\n"
        "_space_group_name_H-M_alt 'P m -3 m'\nloop_\n_atom_site_label\n_atom_site_type_symbol\n"
        "_atom_site_fract_x\n_atom_site_fract_y\n_atom_site_fract_z\n_atom_site_occupancy\n" + rows + "\n"
    )


def _spoil_first_atom(text: str, value: str) -> str:
    lines = text.splitlines()
    lines[2] = f"Ca {value} {value} {value}"
    return "\n".join(lines) + "\n"


def _spoil_poscar(text: str) -> str:
    lines = text.splitlines()
    lines[8] = "  nan nan nan"
    return "\n".join(lines) + "\n"


def _count(text: str, n: str) -> str:
    return n + "\n" + text.split("\n", 1)[1]


CASES = {
    "nan coordinates (extxyz)": ("c.extxyz", _spoil_first_atom(CALCITE_XYZ, "nan"), "not a finite number"),
    "inf coordinates (extxyz)": ("c.extxyz", _spoil_first_atom(CALCITE_XYZ, "inf"), "not a finite number"),
    "nan coordinates (POSCAR)": ("POSCAR", _spoil_poscar(CALCITE_VASP), "not a finite number"),
    "nan in the lattice (extxyz)": ("c.extxyz", CALCITE_XYZ.replace('Lattice="4.9896', 'Lattice="nan', 1), "finite"),
    "count line 10^12 (extxyz)": ("c.extxyz", _count(CALCITE_XYZ, "999999999999"), "999999999999 atoms"),
    "count line 10^12 (xyz)": ("m.xyz", "1000000000000\nx\nC 0 0 0\n", "only 1 lines"),
    "count line not a number": ("m.xyz", "many\nx\nC 0 0 0\n", "number of atoms"),
    "flat cell, one angle 1e-5": ("f.cif", _cscl("4.12 4.12 4.12 1e-5 90 90"), "flat"),
    "flat cell, 120 120 120": ("f.cif", _cscl("4 4 4 120 120 120"), "flat"),
    "flat cell, angle 179.9999": ("f.cif", _cscl("4 4 4 90 90 179.9999"), "flat"),
    "nan cell length": ("f.cif", _cscl("nan 4.12 4.12 90 90 90"), "_cell_length_a"),
    "inf cell length": ("f.cif", _cscl("inf 4.12 4.12 90 90 90"), "_cell_length_a"),
    "1e400 cell length": ("f.cif", _cscl("1e400 4.12 4.12 90 90 90"), "not a finite number"),
    "1e8 cell length": ("f.cif", _cscl("1e8 1e8 1e8 90 90 90"), "not the cell of a crystal"),
    "1e300 cell length": ("f.cif", _cscl("1e300 4.12 4.12 90 90 90"), "not the cell of a crystal"),
    "negative cell length": ("f.cif", _cscl("-4.12 4.12 4.12 90 90 90"), "must be positive"),
    "zero cell length": ("f.cif", _cscl("0 4.12 4.12 90 90 90"), "must be positive"),
    "occupancy ?": ("f.cif", _cscl(rows="Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 ?"), "occupancy is not given"),
    "occupancy text": ("f.cif", _cscl(rows="Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 abc"), "'abc' is not a number"),
    "atoms coincide": ("f.cif", _cscl(rows="Cs1 Cs 0 0 0 1\nCl2 Cl 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1"), "coincide"),
    "atoms coincide across the cell edge": (
        "f.cif",
        _cscl(rows="Cs1 Cs 0 0 0 1\nCs2 Cs 0.9999 0 0 1\nCl1 Cl 0.5 0.5 0.5 1"),
        "coincide",
    ),
    "row with a value too many": (
        "f.cif",
        _cscl(rows="Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1 0.5"),
        "a value too many or too few",
    ),
}


@pytest.mark.parametrize("name", CASES)
@pytest.mark.parametrize("command", [["predict"], ["predict", "--disordered"]])
def test_spoiled_structure_file(name: str, command: list[str], tmp_path: Path, run_cli) -> None:
    filename, text, words = CASES[name]
    path = tmp_path / filename
    path.write_text(text)
    message = assert_one_error_line(*run_cli([*command, path]), names=str(path))
    assert words in message
    assert run_cli([*command, path])[0] == 2


@pytest.mark.parametrize(
    "occupancy, words", [("0", "is zero"), ("1e-300", "below 0.01"), ("nan", "not a number"), ("inf", "not a number")]
)
def test_bad_occupancy_with_disordered(occupancy: str, words: str, tmp_path: Path, run_cli) -> None:
    path = tmp_path / "occ.cif"
    path.write_text(_cscl(rows=f"Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 {occupancy}"))
    assert words in assert_one_error_line(*run_cli(["predict", "--disordered", path]))


def test_negative_occupancy_never_changes_the_element(tmp_path: Path, run_cli) -> None:
    path = tmp_path / "occ.cif"
    path.write_text(_cscl(rows="Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 -1"))
    assert "negative" in assert_one_error_line(*run_cli(["predict", "--disordered", path]))


def test_molecule_with_nan_coordinates(tmp_path: Path, run_cli) -> None:
    path = tmp_path / "w.xyz"
    path.write_text("3\nwater\nO 0 0 nan\nH 0 0.757 -0.469\nH 0 -0.757 -0.469\n")
    assert "not a finite number" in assert_one_error_line(*run_cli(["molecule", path]))


def test_special_files_are_refused(run_cli) -> None:
    assert "not a regular file" in assert_one_error_line(*run_cli(["predict", "/dev/zero"]))
    assert "not a regular file" in assert_one_error_line(*run_cli(["molecule", "/dev/urandom"]))


def test_fifo_is_refused_without_blocking(tmp_path: Path, run_cli) -> None:
    import os

    fifo = tmp_path / "x.cif"
    os.mkfifo(fifo)
    assert "FIFO" in assert_one_error_line(*run_cli(["predict", fifo]))


def test_gzip_bomb_is_capped(tmp_path: Path, run_cli, monkeypatch: pytest.MonkeyPatch) -> None:
    """Reproducer R10 (a small .xyz.gz expanding to gigabytes), scaled down with a 1 MB cap."""
    monkeypatch.setenv("SPLITTING_MAX_INPUT_MB", "1")
    bomb = tmp_path / "bomb.xyz.gz"
    with gzip.open(bomb, "wb") as handle:
        handle.write(b"0" * (3 * 2**20))
    message = assert_one_error_line(*run_cli(["predict", bomb]))
    assert "input limit of 1 MB" in message and "--max-input-mb" in message


def test_compressed_structure_is_read(tmp_path: Path, run_cli) -> None:
    path = tmp_path / "calcite.extxyz.gz"
    with gzip.open(path, "wt") as handle:
        handle.write(CALCITE_XYZ)
    code, out, err = run_cli(["predict", path])
    assert code == 0 and "R-3c" in out, err


def test_too_long_and_unreadable_paths(tmp_path: Path, run_cli) -> None:
    long_name = tmp_path / ("y" * 300 + ".cif")
    assert "too long" in assert_one_error_line(*run_cli(["predict", long_name]))
    not_a_folder = tmp_path / "f.cif"
    not_a_folder.write_text("x")
    assert "not a folder" in assert_one_error_line(*run_cli(["predict", not_a_folder / "x.cif"]))
