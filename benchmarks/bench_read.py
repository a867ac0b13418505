"""Reading a large P1 CIF: the gemmi reader against ase's, on the same file.

Run with ``make bench``.  The file is the ordered C60 cell (240 atoms, Pa-3) expanded to the
whole cell and repeated 2 x 2 x 2 (1,920 atoms), written with every atom as its own site in
P1; ase's CIF reader compares each new atom with every earlier one (quadratic), gemmi and our
expansion are linear.  Measured on the 2-core development machine (December 2026):
ase 16.8 s, gemmi 0.044 s (first read, including the import of the periodic tree).
"""

from __future__ import annotations

import time
from pathlib import Path

import pytest

from splitting.readers import read_atoms

ROOT = Path(__file__).resolve().parent.parent
C60 = ROOT / "structures" / "c60_ordered_Pa-3.cif"


def write_p1_cif(atoms, path: Path) -> Path:
    """Write ``atoms`` as a P1 CIF, one site per atom."""
    a, b, c, al, be, ga = atoms.cell.cellpar()
    lines = [
        "data_p1",
        f"_cell_length_a {a:.6f}",
        f"_cell_length_b {b:.6f}",
        f"_cell_length_c {c:.6f}",
        f"_cell_angle_alpha {al:.6f}",
        f"_cell_angle_beta {be:.6f}",
        f"_cell_angle_gamma {ga:.6f}",
        "_space_group_name_H-M_alt 'P 1'",
        "loop_",
        "_space_group_symop_operation_xyz",
        "'x,y,z'",
        "loop_",
        "_atom_site_label",
        "_atom_site_type_symbol",
        "_atom_site_fract_x",
        "_atom_site_fract_y",
        "_atom_site_fract_z",
    ]
    for i, (s, f) in enumerate(zip(atoms.get_chemical_symbols(), atoms.get_scaled_positions(), strict=True)):
        lines.append(f"{s}{i + 1} {s} {f[0]:.6f} {f[1]:.6f} {f[2]:.6f}")
    path.write_text("\n".join(lines) + "\n")
    return path


@pytest.fixture(scope="module")
def p1_1920(tmp_path_factory: pytest.TempPathFactory) -> Path:
    atoms = read_atoms(C60).repeat((2, 2, 2))
    assert len(atoms) == 1920
    return write_p1_cif(atoms, tmp_path_factory.mktemp("read") / "c60_222_P1.cif")


def test_read_p1_1920_gemmi(benchmark, p1_1920: Path) -> None:
    atoms = benchmark(read_atoms, p1_1920)
    assert len(atoms) == 1920


def test_read_p1_1920_ase_once(p1_1920: Path) -> None:
    """ase's reader once (it takes tens of seconds); printed for the record, not a goal."""
    start = time.perf_counter()
    atoms = read_atoms(p1_1920, cif_reader="ase")
    seconds = time.perf_counter() - start
    print(f"\nase CIF reader, 1,920-atom P1 file: {seconds:.1f} s")
    assert len(atoms) == 1920
