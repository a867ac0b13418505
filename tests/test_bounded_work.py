"""Inputs that once made the work explode: each gives one ``error:`` line or an answer, quickly.

Flat or degenerate cells, absurd bond options, absurd subgroup indices, very long peak
lists and very large cells.  The neighbour search that replaced the one that hung is
checked against ase's neighbour list (a general-purpose reference library).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parent.parent
CALCITE = ROOT / "structures" / "calcite.cif"
Runner = Callable[[Sequence[str]], tuple[int, str, str]]


def _one_error_line(code: int, out: str, err: str) -> str:
    assert code not in (0, 70), err
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: "), err
    assert "internal error" not in lines[0] and "Traceback" not in err
    return lines[0]


def _cscl_cif(a: float, b: float, c: float, alpha: float, beta: float, gamma: float) -> str:
    """A CsCl-like cell with the given parameters (invented)."""
    return f"""data_cell
_cell_length_a {a}
_cell_length_b {b}
_cell_length_c {c}
_cell_angle_alpha {alpha}
_cell_angle_beta {beta}
_cell_angle_gamma {gamma}
_space_group_name_H-M_alt 'P 1'
loop_
_space_group_symop_operation_xyz
'x,y,z'
loop_
_atom_site_label
_atom_site_type_symbol
_atom_site_fract_x
_atom_site_fract_y
_atom_site_fract_z
Cs1 Cs 0 0 0
Cl1 Cl 0.5 0.5 0.5
"""


# ------------------------------------------------------------------ flat cells
@pytest.mark.parametrize(
    "params",
    [
        (4.12, 4.12, 4.12, 1e-5, 90, 90),
        (4.12, 4.12, 4.12, 90, 90, 179.9999),
        (4, 4, 4, 120, 120, 120),  # a + b + c = 0: no volume at all
        (4, 4, 4, 90, 90, 0.0001),
    ],
)
def test_flat_cell_is_refused(params, tmp_path: Path, run_cli: Runner) -> None:
    path = tmp_path / "flat.cif"
    path.write_text(_cscl_cif(*params))
    message = _one_error_line(*run_cli(["predict", path]))
    assert "flat.cif" in message and "flat" in message.split("flat.cif", 1)[1]


def test_sheared_but_valid_cell_is_fine(run_cli: Runner, tmp_path: Path) -> None:
    """A legitimate cell written with a long, oblique basis (b' = b + 10 a) is the same crystal."""
    import ase.io

    from splitting.crystal.predict import predict

    atoms = ase.io.read(CALCITE)
    cell = atoms.cell[:].copy()
    cell[1] += 10 * cell[0]
    sheared = atoms.copy()
    sheared.set_cell(cell, scale_atoms=False)
    sheared.wrap()
    path = tmp_path / "sheared.extxyz"
    ase.io.write(path, sheared, format="extxyz")
    assert predict(path).to_dict()["species"] == predict(CALCITE).to_dict()["species"]


# ------------------------------------------------------------------ neighbour search
@pytest.mark.parametrize("seed", range(12))
def test_periodic_pairs_agree_with_ase(seed: int) -> None:
    from ase import Atoms
    from ase.neighborlist import neighbor_list

    from splitting.crystal.neighbours import periodic_pairs

    rng = np.random.default_rng(seed)
    lattice = rng.normal(size=(3, 3)) + np.eye(3) * rng.uniform(3, 8)
    if seed % 3 == 0:
        lattice[1] += 3 * lattice[0]  # oblique basis
    frac = rng.uniform(-1.5, 2.5, size=(int(rng.integers(1, 25)), 3))
    cutoff = float(rng.uniform(0.5, 6))
    atoms = Atoms(numbers=[6] * len(frac), positions=frac @ lattice, cell=lattice, pbc=True)
    i, j, shift = neighbor_list("ijS", atoms, cutoff)
    p = periodic_pairs(lattice, frac, cutoff)
    assert sorted(zip(i.tolist(), j.tolist(), map(tuple, shift.tolist()), strict=True)) == sorted(
        zip(p.i.tolist(), p.j.tolist(), map(tuple, p.shift.tolist()), strict=True)
    )
    vec = (frac[p.j] + p.shift - frac[p.i]) @ lattice
    np.testing.assert_allclose(np.linalg.norm(vec, axis=1), p.distance)


def test_absurd_cutoff_is_refused_before_the_search() -> None:
    from splitting.crystal.neighbours import periodic_pairs
    from splitting.errors import InputError

    with pytest.raises(InputError, match="pairs"):
        periodic_pairs(np.eye(3) * 4.0, np.zeros((2000, 3)) + 0.5, 500.0)


# ------------------------------------------------------------------ bond options
@pytest.mark.parametrize(
    ("args", "words"),
    [
        (["--bond-scale", "1e3"], "bond-scale"),
        (["--bond-scale", "inf"], "bond-scale"),
        (["--bond-scale", "nan"], "bond-scale"),
        (["--bond", "C-O=inf"], "C-O"),
        (["--bond", "C-O=nan"], "C-O"),
        (["--bond", "C-O=1e9"], "C-O"),
        (["--bond", "C-O=-1"], "C-O"),
    ],
)
def test_bond_options_out_of_range(args: list[str], words: str, run_cli: Runner) -> None:
    message = _one_error_line(*run_cli(["predict", CALCITE, *args]))
    assert words in message


def test_bond_scale_in_range_still_works(run_cli: Runner) -> None:
    code, out, err = run_cli(["predict", CALCITE, "--bond-scale", "1.5"])
    assert code == 0 and "CO3" in out, err


# ------------------------------------------------------------------ large cells
def test_cell_above_the_atom_limit_is_refused_at_once() -> None:
    from ase.build import bulk

    from splitting.crystal.predict import predict_atoms
    from splitting.errors import InputError

    big = bulk("C", "diamond", a=3.567, cubic=True).repeat((15, 15, 12))  # 21,600 atoms
    with pytest.raises(InputError, match="--max-atoms 21600"):
        predict_atoms(big)


def test_atom_limit_option(run_cli: Runner) -> None:
    message = _one_error_line(*run_cli(["predict", CALCITE, "--max-atoms", "10"]))
    assert "--max-atoms 30" in message  # the conventional calcite cell holds 30 atoms
    code, _, err = run_cli(["predict", CALCITE, "--max-atoms", "30"])
    assert code == 0, err


# ------------------------------------------------------------------ subgroup index
@pytest.mark.parametrize("index", ["1000", "49", "1", "-3"])
def test_lower_index_out_of_range(index: str, run_cli: Runner) -> None:
    message = _one_error_line(*run_cli(["lower", ROOT / "structures" / "co2_Pa-3.cif", "--max-index", index]))
    assert "index" in message
