"""The CIF reader (gemmi) against ase's reader, and its checks of every number.

Both readers must give the same crystal (cell, atoms, occupancies) for every bundled and
test CIF; the expansion by the space-group operations follows International Tables for
Crystallography Vol. A (general and special positions).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from splitting.cif import cif_number, read_cif
from splitting.errors import InputError
from splitting.readers import read_atoms

ROOT = Path(__file__).resolve().parent.parent
#: every readable CIF of the project (the broken inputs of tests/data/bad-inputs are refused on purpose)
CIFS = sorted(p for p in ROOT.glob("structures/**/*.cif") if "bad" not in p.parts) + sorted(
    p for p in (ROOT / "tests").glob("**/*.cif") if "bad-inputs" not in p.parts
)


def _occupancies(atoms) -> np.ndarray:
    table = atoms.info.get("occupancy") or {}
    kinds = atoms.arrays.get("spacegroup_kinds")
    if kinds is None or not table:
        return np.ones(len(atoms))
    syms = atoms.get_chemical_symbols()
    return np.array([float(table[str(int(k))][s]) for k, s in zip(kinds, syms, strict=True)])


def _key(atoms) -> np.ndarray:
    """Atoms as sortable rows (number, occupancy, fractional x, y, z in [0, 1))."""
    frac = np.mod(np.round(atoms.get_scaled_positions(wrap=True), 4), 1.0)
    rows = np.column_stack([atoms.numbers, np.round(_occupancies(atoms), 4), frac])
    return rows[np.lexsort(rows.T[::-1])]


@pytest.mark.parametrize("path", CIFS, ids=lambda p: p.name)
def test_gemmi_and_ase_readers_give_the_same_crystal(path: Path) -> None:
    fast = read_atoms(path)
    slow = read_atoms(path, cif_reader="ase")
    np.testing.assert_allclose(fast.cell.cellpar(), slow.cell.cellpar(), atol=1e-6)
    assert len(fast) == len(slow)
    np.testing.assert_allclose(_key(fast), _key(slow), atol=2e-4)


def test_there_are_cifs_to_compare() -> None:
    assert len(CIFS) >= 10


def _cif(rows: str, *, extra: str = "", cell: str = "4.12 4.12 4.12 90 90 90", group: str = "P m -3 m") -> str:
    a, b, c, al, be, ga = cell.split()
    return f"""data_t
_cell_length_a {a}
_cell_length_b {b}
_cell_length_c {c}
_cell_angle_alpha {al}
_cell_angle_beta {be}
_cell_angle_gamma {ga}
_space_group_name_H-M_alt '{group}'
{extra}
loop_
_atom_site_label
_atom_site_type_symbol
_atom_site_fract_x
_atom_site_fract_y
_atom_site_fract_z
_atom_site_occupancy
{rows}
"""


def test_uncertainties_in_parentheses_are_dropped() -> None:
    assert cif_number("4.1234(5)") == 4.1234
    assert cif_number("-0.25(12)") == -0.25
    assert cif_number("1e-3") == 0.001
    assert cif_number("?") is None and cif_number(".") is None
    for bad in ("abc", "nan", "inf", "1.2.3", "4.1(", ""):
        with pytest.raises(ValueError):
            cif_number(bad)
    atoms = read_cif(
        "t.cif", _cif("Cs1 Cs 0 0 0 1.0(0)\nCl1 Cl 0.5000(3) 0.5 0.5 1", cell="4.12(1) 4.12 4.12 90 90 90")
    )
    assert len(atoms) == 2
    assert atoms.cell.cellpar()[0] == pytest.approx(4.12)


def test_special_positions_are_merged_general_positions_expanded() -> None:
    # Pm-3m: 1a and 1b are single positions, 6e (x,0,0) has six (International Tables Vol. A, No. 221)
    atoms = read_cif("t.cif", _cif("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1\nF1 F 0.3 0 0 1"))
    assert sorted(atoms.get_chemical_symbols()).count("F") == 6
    assert len(atoms) == 8


def test_explicit_symmetry_operations_win_over_the_name() -> None:
    ops = "loop_\n_space_group_symop_operation_xyz\n'x,y,z'\n'-x,-y,-z'\n"
    atoms = read_cif("t.cif", _cif("C1 C 0.1 0.2 0.3 1", extra=ops, group="P 1"))
    assert len(atoms) == 2


def test_hall_symbol_is_read() -> None:
    text = _cif("C1 C 0.1 0.2 0.3 1", group="?", extra="_space_group_name_Hall '-P 2ybc'")
    assert len(read_cif("t.cif", text)) == 4  # P2_1/c general position: 4 (International Tables Vol. A, No. 14)


def test_disorder_groups_and_labels_are_kept() -> None:
    text = """data_t
_cell_length_a 5
_cell_length_b 5
_cell_length_c 5
_cell_angle_alpha 90
_cell_angle_beta 90
_cell_angle_gamma 90
loop_
_atom_site_label
_atom_site_type_symbol
_atom_site_fract_x
_atom_site_fract_y
_atom_site_fract_z
_atom_site_occupancy
_atom_site_disorder_group
C1 C 0.1 0.1 0.1 1 .
O1A O 0.3 0.1 0.1 0.6 1
O1B O 0.1 0.3 0.1 0.4 2
"""
    atoms = read_cif("t.cif", text)
    assert list(atoms.arrays["disorder_group"]) == [".", "1", "2"]
    assert atoms.info["site_labels"] == ["C1", "O1A", "O1B"]
    assert _occupancies(atoms).tolist() == [1.0, 0.6, 0.4]


def test_mixed_site_keeps_both_occupancies() -> None:
    atoms = read_cif("t.cif", _cif("K1 K 0 0 0 0.5\nRb1 Rb 0 0 0 0.5\nCl1 Cl 0.5 0.5 0.5 1"))
    assert len(atoms) == 2
    assert atoms.info["occupancy"]["0"] == {"K": 0.5, "Rb": 0.5}


@pytest.mark.parametrize(
    "rows, cell, words",
    [
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 ?", None, "occupancy is not given"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 abc", None, "occupancy 'abc' is not a number"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 nan", None, "occupancy 'nan' is not a number"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 0", None, "occupancy 0 is zero"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1e-300", None, "below 0.01"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 -1", None, "negative"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 2", None, "not between 0 and 1"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl nan 0.5 0.5 1", None, "fract_x is 'nan'"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl ? 0.5 0.5 1", None, "fract_x is '?'"),
        ("Cs1 Cs 0 0 0 1\nCl1 Xq 0.5 0.5 0.5 1", None, "no element"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0 0 0 1", None, "coincide"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1", "-4.12 4.12 4.12 90 90 90", "must be positive"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1", "nan 4.12 4.12 90 90 90", "not a number"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1", "1e400 4.12 4.12 90 90 90", "not a finite number"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1", "1e8 4.12 4.12 90 90 90", "not the cell of a crystal"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1", "4 4 4 120 120 120", "flat"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1", "4 4 4 90 90 1e-5", "flat"),
        ("Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1", "4 4 4 90 90 180", "between 0 and 180"),
        (
            "Cs1 Cs 0 0 0 1\nCl1 Cl 0.5 0.5 0.5 1 extra",
            None,
            "line 10: a row of the table _atom_site_* has a value too many",
        ),
    ],
)
def test_bad_numbers_are_named(rows: str, cell: str | None, words: str) -> None:
    text = _cif(rows, cell=cell) if cell else _cif(rows)
    with pytest.raises(InputError, match=r"t\.cif") as info:
        read_cif("t.cif", text)
    assert words in str(info.value)
    assert "\n" not in str(info.value)
