"""Relaxing the lattice within its space group before the estimate (splitting.dynamics.relax).

Checks: the relaxed structure keeps the engine's space group (found again by the engine on
the relaxed cell); the energy goes down and its derivatives vanish at the end; imaginary
lines that come from a structure away from the model's minimum (naphthalene with its
molecules turned by 10 degrees, on their sites) disappear, and the relaxation finds the
same minimum as from the structure as given; a relaxation that runs away is refused.
"""

from __future__ import annotations

import ase
import numpy as np
import pytest

from splitting.crystal.predict import Options, _orbits, units_of
from splitting.crystal.read import load_structure
from splitting.crystal.spacegroup import analyse_cell
from splitting.dynamics import EstimateOptions, estimate, estimate_atoms
from splitting.dynamics.dynmat import build_cell_model
from splitting.dynamics.potential import WILLIAMS
from splitting.dynamics.relax import _Structure, relax_structure
from splitting.errors import InputError


@pytest.fixture(scope="module")
def cache(tmp_path_factory):
    return str(tmp_path_factory.mktemp("hessians"))


def _pieces(atoms, cache):
    opts = Options()
    cell = analyse_cell(atoms.cell[:], atoms.get_scaled_positions(wrap=True), atoms.numbers, tolerance=opts.tolerance)
    units = units_of(cell, opts)
    orbits = _orbits(cell, units)
    cm = build_cell_model(cell, units, orbits, unit_tolerance=opts.unit_tolerance, charges_given={}, cache=cache)
    return cell, units, orbits, cm


@pytest.mark.parametrize(
    ("name", "with_cell", "free"),
    [("co2_Pa-3.cif", True, 1), ("naphthalene_P21a.cif", False, 3), ("naphthalene_P21a.cif", True, 7)],
)
def test_relaxed_structure_keeps_its_space_group(structures_dir, cache, name, with_cell, free):
    """Pa-3 CO2: only the cell edge is free; P2_1/a naphthalene: three turns (+ four cell parameters)."""
    atoms = load_structure(structures_dir / name)
    cell, units, orbits, cm = _pieces(atoms, cache)
    new_cell, new_units, _turns, rel = relax_structure(
        cell, units, orbits, cm, WILLIAMS, cutoff=12.0, use_charges=True, with_cell=with_cell
    )
    assert rel.degrees_of_freedom == free
    assert rel.energy_after_ev < rel.energy_before_ev
    assert rel.residual < 1e-3
    again = analyse_cell(new_cell.lattice, new_cell.frac, new_cell.numbers, tolerance=1e-3)
    assert again.info.number == cell.info.number
    assert len(again.numbers) == len(cell.numbers)
    # rigid units: every distance inside a unit is kept
    for u, v in zip(units, new_units, strict=True):
        d0 = np.linalg.norm(u.positions[:, None] - u.positions[None], axis=2)
        d1 = np.linalg.norm(v.positions[:, None] - v.positions[None], axis=2)
        assert np.allclose(d0, d1, atol=1e-9)
    if not with_cell:
        assert np.allclose(new_cell.lattice, cell.lattice)
    if name.startswith("co2"):
        assert rel.largest_turn_degrees == 0.0 and rel.largest_shift_angstrom == 0.0
        lengths = rel.length_change_percent
        assert lengths[0] == pytest.approx(lengths[1]) == pytest.approx(lengths[2])  # stays cubic


def test_imaginary_lines_of_turned_molecules_disappear(structures_dir, cache):
    atoms = load_structure(structures_dir / "naphthalene_P21a.cif")
    cell, units, orbits, _ = _pieces(atoms, cache)
    x = np.zeros(3)
    x[0] = np.radians(10.0)  # every molecule turned, on its inversion centre
    lattice, pos, _ = _Structure(cell, units, orbits, len(cell.numbers), False).build(x)
    turned = ase.Atoms(numbers=cell.numbers, positions=pos, cell=lattice, pbc=True)
    with pytest.raises(InputError, match="--relax"):
        estimate_atoms(turned, model=EstimateOptions(cache=cache))
    shown = estimate_atoms(turned, model=EstimateOptions(cache=cache, allow_imaginary=True))
    assert min(line.wavenumber_cm1 for line in shown.lines if line.origin != "acoustic") < -10
    relaxed = estimate_atoms(turned, model=EstimateOptions(cache=cache, relax=True))
    assert all(line.wavenumber_cm1 > 0 for line in relaxed.lines if line.origin != "acoustic")
    assert relaxed.relaxation.largest_turn_degrees > 8
    # the same minimum as from the structure as given
    direct = estimate_atoms(atoms, model=EstimateOptions(cache=cache, relax=True))
    a = [line.wavenumber_cm1 for line in relaxed.lattice_lines()]
    b = [line.wavenumber_cm1 for line in direct.lattice_lines()]
    assert np.allclose(a, b, atol=0.5)
    assert "relaxed within the space group" in direct.model
    d = direct.to_dict()["relaxation"]
    assert d["degrees_of_freedom"] == 3 and not d["cell"]


def test_runaway_relaxation_is_refused(structures_dir, cache):
    """CO2 in a cell 40 % too large: the cell would have to shrink beyond the bound."""
    atoms = load_structure(structures_dir / "co2_Pa-3.cif")
    cell, units, _, _ = _pieces(atoms, cache)
    pos = np.zeros((len(cell.numbers), 3))
    for u in units:  # every molecule moved with the cell, its shape kept
        pos[list(u.atoms)] = u.positions + 0.4 * u.centre
    big = ase.Atoms(numbers=cell.numbers, positions=pos, cell=cell.lattice * 1.4, pbc=True)
    with pytest.raises(InputError, match="ran away"):
        estimate_atoms(big, model=EstimateOptions(cache=cache, relax_cell=True))


def test_cli_relax_needs_an_estimate(structures_dir, capsys):
    from splitting.cli import main

    assert main(["predict", str(structures_dir / "co2_Pa-3.cif"), "--relax"]) != 0
    assert "--estimate" in capsys.readouterr().err


def test_estimate_command_relaxes(structures_dir, cache, capsys):
    import json

    from splitting.cli import main

    assert main(["estimate", str(structures_dir / "co2_Pa-3.cif"), "--relax-cell", "--cache", cache, "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["relaxation"]["cell"] and out["relaxation"]["degrees_of_freedom"] == 1
    assert "cell relaxed" in out["model"]
    est = estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=cache))
    assert est.relaxation is None and "as given" in est.model


def test_relaxed_estimate_read_back_from_the_cache_folder(structures_dir, cache, tmp_path):
    from splitting.dynamics import memo

    est = estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=cache, relax_cell=True))
    memo._write(tmp_path / "e.json", est)
    back = memo._read(tmp_path / "e.json")
    assert back.relaxation == est.relaxation
    assert back.to_dict() == est.to_dict()


def test_alpha_nitrogen_cell_runs_away(structures_dir, cache):
    """The N parameters (fitted to azahydrocarbons) bind N2 far too strongly: the cell would shrink past the bound.

    As given the model's lattice energy is about -19 kJ/mol of N2, against a measured
    sublimation enthalpy of about 7 kJ/mol (from memory); the relaxation is refused, not
    carried to a collapsed crystal.
    """
    path = structures_dir / "alpha_N2_Pa-3.cif"
    with pytest.raises(InputError, match="ran away"):
        estimate(path, model=EstimateOptions(cache=cache, relax_cell=True))
    assert estimate(path, model=EstimateOptions(cache=cache, relax=True)).relaxation.degrees_of_freedom == 0
