"""Charge sites off the atoms (``charges="distributed"``): the sums, their derivatives and the CO2 model.

Measured and published values (from memory): the quadrupole moment of CO2, -4.3 x 10^-26
esu cm^2 (A. D. Buckingham and R. L. Disch, Proc. R. Soc. A 273, 275 (1963)); its
hexadecapole, -4.0 x 10^-42 esu cm^4 (C. G. Gray and K. E. Gubbins, Theory of Molecular
Fluids, vol. 1 (1984), its table of multipole moments; an uncertain value); lattice modes and the nu2 splitting
of the solid as in tests/test_dynamics_reference.py.  The idea of charges off the atoms
fitted to two moments for the lattice dynamics of solid CO2: C. S. Murthy, S. F. O'Shea and
I. R. McDonald, Mol. Phys. 50, 531 (1983), from memory.
"""

from __future__ import annotations

import numpy as np
import pytest

from splitting.dynamics import EstimateOptions, estimate, estimate_atoms
from splitting.dynamics.sites import HEXADECAPOLE, ChargeSites, linear_site_charges

#: two bent triatomic units and a site on a bond of each (weights of every kind, adding up to one)
_LATTICE = np.array([[5.0, 0, 0], [0.4, 5.3, 0], [0.2, 0.3, 5.6]])
_POS = np.array([[0.1, 0.2, 0.3], [1.2, 0.1, 0.2], [0.4, 1.1, 0.1], [2.6, 2.7, 2.4], [3.5, 3.2, 2.9], [2.3, 3.6, 3.0]])
_UNITS = np.array([0, 0, 0, 1, 1, 1])
_ROWS = [{0: 1.0}, {1: 1.0}, {2: 1.0}, {0: 0.7, 1: 0.5, 2: -0.2}]
_ROWS += [{a + 3: w for a, w in row.items()} for row in _ROWS]
_SITES = ChargeSites.from_rows(_ROWS, [0.5, -0.2, -0.1, -0.2, 0.3, -0.4, 0.3, -0.2], [0] * 4 + [1] * 4, 6)


def _coulomb_on_atoms(pos):
    from splitting.dynamics.ewald import ewald_terms

    fc, grad, energy = ewald_terms(_LATTICE, _SITES.positions(pos), _SITES.charges, _SITES.unit_of, cutoff=6.0)
    return _SITES.atom_force_constants(fc), _SITES.atom_gradient(grad), energy


def test_site_force_constants_are_the_derivative_of_the_atom_gradient():
    fc, _, _ = _coulomb_on_atoms(_POS)
    num = np.zeros_like(fc)
    step = 1e-4
    for k in range(fc.shape[0]):
        p, m = _POS.ravel().copy(), _POS.ravel().copy()
        p[k] += step
        m[k] -= step
        num[:, k] = (_coulomb_on_atoms(p.reshape(-1, 3))[1] - _coulomb_on_atoms(m.reshape(-1, 3))[1]).ravel() / (
            2 * step
        )
    assert np.allclose(fc, num, atol=1e-4 * np.max(np.abs(fc)))
    # translating the whole cell costs nothing (the weights add up to one)
    assert np.allclose(fc.reshape(6, 3, 6, 3).sum(axis=2), 0, atol=1e-8 * np.max(np.abs(fc)))


def test_relaxation_energy_with_sites_matches_the_force_constant_sum():
    """The energy the relaxation minimises has the gradient the dynamical matrix uses."""
    from splitting.dynamics.potential import WILLIAMS
    from splitting.dynamics.relax import lattice_energy

    symbols = ["C", "O", "O"] * 2
    q0 = np.zeros(6)

    def coulomb(pos):
        kw = {"cutoff": 6.0, "sites": _SITES}
        with_q = lattice_energy(_LATTICE, pos, symbols, _UNITS, q0, WILLIAMS, use_charges=True, **kw)
        without = lattice_energy(_LATTICE, pos, symbols, _UNITS, q0, WILLIAMS, use_charges=False, **kw)
        return with_q - without

    _, grad, energy = _coulomb_on_atoms(_POS)
    assert coulomb(_POS) == pytest.approx(energy, rel=1e-4)  # two Ewald splittings, each good to about 1e-7 eV
    step = 1e-5
    num = np.zeros(18)
    for k in range(18):
        p, m = _POS.ravel().copy(), _POS.ravel().copy()
        p[k] += step
        m[k] -= step
        num[k] = (coulomb(p.reshape(-1, 3)) - coulomb(m.reshape(-1, 3))) / (2 * step)
    assert np.allclose(num, grad.ravel(), atol=1e-5 * np.max(np.abs(grad)))


def test_weights_must_add_up_to_one():
    with pytest.raises(ValueError, match="add up to one"):
        ChargeSites.from_rows([{0: 0.5}], [1.0], [0], 1)


def test_linear_site_charges_reproduce_both_moments():
    """Buckingham and Disch (1963): Theta -4.3; Gray and Gubbins (1984): Phi -4.0 (both from memory)."""
    z = 1.16
    qc, qo, qs = linear_site_charges(-4.3, -4.0, z)
    zs = np.array([0.0, z, -z, z / 2, -z / 2])
    q = np.array([qc, qo, qo, qs, qs])
    assert abs(q.sum()) < 1e-12
    assert float(q @ zs**2) * 4.80320 == pytest.approx(-4.3)
    assert float(q @ zs**4) * 4.80320 == pytest.approx(-4.0)


@pytest.fixture(scope="module")
def cache(tmp_path_factory):
    return str(tmp_path_factory.mktemp("hessians"))


@pytest.fixture(scope="module")
def co2(structures_dir, cache):
    return estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=cache, charges="distributed"))


def test_the_model_text_names_the_distributed_charges(co2):
    assert "distributed charges of CO2" in co2.model and "hexadecapole -4" in co2.model
    assert co2.acoustic_max_cm1 < 1e-2
    assert all(line.wavenumber_cm1 > 0 for line in co2.lines if line.origin != "acoustic")


def test_dipole_derivatives_are_those_of_the_tight_binding_charges(structures_dir, cache):
    """The bond sites follow the atoms so that W^T q equals the tight-binding charges; their moments are the targets."""
    from splitting.crystal.predict import Options, _orbits, units_of
    from splitting.crystal.read import load_structure
    from splitting.crystal.spacegroup import analyse_cell
    from splitting.dynamics.dynmat import build_cell_model
    from splitting.dynamics.quadrupole import MEASURED
    from splitting.dynamics.sites import distributed_sites

    atoms = load_structure(structures_dir / "co2_Pa-3.cif")
    opts = Options()
    cell = analyse_cell(atoms.cell[:], atoms.get_scaled_positions(), atoms.numbers, tolerance=opts.tolerance)
    units = units_of(cell, opts)
    cm = build_cell_model(cell, units, _orbits(cell, units), unit_tolerance=opts.unit_tolerance,
                          charges_given={}, cache=cache)  # fmt: skip
    sites, texts = distributed_sites(cm, units)
    assert len(texts) == 1 and sites.count == 5 * len(units)
    assert np.allclose(sites.atom_charges(), cm.charges, atol=1e-12)
    for k in range(len(units)):
        mine = sites.unit_of == k
        centre = cm.positions[cm.unit_of == k].mean(axis=0)  # C at the centre of a symmetric CO2
        r = sites.positions(cm.positions)[mine] - centre
        q = sites.charges[mine]
        axis = r[np.argmax(np.linalg.norm(r, axis=1))]
        z = r @ axis / np.linalg.norm(axis)
        assert float(q @ z**2) * 4.80320 == pytest.approx(MEASURED["CO2"][0], rel=1e-9)
        assert float(q @ z**4) * 4.80320 == pytest.approx(HEXADECAPOLE["CO2"][0], rel=1e-9)


def test_empty_bond_sites_give_the_quadrupole_model(structures_dir, cache, monkeypatch):
    """With the hexadecapole that charges on the atoms have, the bond sites carry nothing: the quadrupole model."""
    from splitting.dynamics import sites

    z = np.sqrt(3) * 0.119168 * 5.62  # C=O of the bundled file (O at x, x, x in a cubic cell; its header)
    monkeypatch.setitem(sites.HEXADECAPOLE, "CO2", (-4.3 * z**2, "charges on the atoms"))
    dist = estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=cache, charges="distributed"))
    quad = estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=cache, charges="quadrupole"))
    a = [ln.wavenumber_cm1 for ln in dist.lines if ln.origin != "acoustic"]
    b = [ln.wavenumber_cm1 for ln in quad.lines if ln.origin != "acoustic"]
    assert a == pytest.approx(b, abs=0.05)


def test_rotating_the_frame_changes_nothing(structures_dir, cache, co2):
    from scipy.spatial.transform import Rotation

    from splitting.crystal.read import load_structure

    atoms = load_structure(structures_dir / "co2_Pa-3.cif")
    rot = Rotation.from_euler("zyx", [20, 35, -50], degrees=True).as_matrix()
    atoms.set_cell(atoms.cell[:] @ rot.T, scale_atoms=True)
    turned = estimate_atoms(atoms, model=EstimateOptions(cache=cache, charges="distributed"))
    a = sorted((ln.species, ln.wavenumber_cm1) for ln in co2.lines if ln.origin != "acoustic")
    b = sorted((ln.species, ln.wavenumber_cm1) for ln in turned.lines if ln.origin != "acoustic")
    assert [s for s, _ in a] == [s for s, _ in b]
    assert [w for _, w in a] == pytest.approx([w for _, w in b], abs=0.1)


def test_dsf_sum_carries_the_sites(structures_dir, cache, co2):
    dsf = estimate(
        structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=cache, charges="distributed", coulomb="dsf")
    )
    lattice = [(ln.species, ln.wavenumber_cm1) for ln in co2.lattice_lines()]
    other = [(ln.species, ln.wavenumber_cm1) for ln in dsf.lattice_lines()]
    assert [s for s, _ in lattice] == [s for s, _ in other]
    assert np.allclose([w for _, w in lattice], [w for _, w in other], rtol=0.01)


def test_model_minimum_at_the_measured_cell(structures_dir, cache):
    """The model's own cell edge lies within 0.5 % of the measured 5.62 A (Simon and Peters 1980, from memory)."""
    est = estimate(
        structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=cache, charges="distributed", relax_cell=True)
    )
    assert abs(est.relaxation.length_change_percent[0]) < 0.5


def test_units_without_a_model_keep_their_charges(structures_dir, cache):
    a = estimate(structures_dir / "naphthalene_P21a.cif", model=EstimateOptions(cache=cache))
    b = estimate(structures_dir / "naphthalene_P21a.cif", model=EstimateOptions(cache=cache, charges="distributed"))
    assert [ln.wavenumber_cm1 for ln in a.lines] == [ln.wavenumber_cm1 for ln in b.lines]
    assert "distributed" not in b.model


def test_cli_distributed_charges(run_cli, structures_dir, tmp_path):
    code, out, err = run_cli(
        ["estimate", structures_dir / "co2_Pa-3.cif", "--charges", "distributed", "--cache", tmp_path]
    )
    assert code == 0, err
    assert "distributed charges of CO2" in out


def test_c60_bond_charges_on_its_bond_centres(structures_dir):
    """Sprik, Cheng and Klein (1992, from memory): -0.35 e on the 30 6:6 bonds, +0.175 e on the 60 6:5 bonds."""
    from types import SimpleNamespace

    from splitting.crystal.predict import Options, units_of
    from splitting.crystal.read import load_structure
    from splitting.crystal.spacegroup import analyse_cell
    from splitting.dynamics.sites import distributed_sites

    atoms = load_structure(structures_dir / "c60_ordered_Pa-3.cif")
    opts = Options()
    cell = analyse_cell(atoms.cell[:], atoms.get_scaled_positions(), atoms.numbers, tolerance=opts.tolerance)
    units = units_of(cell, opts)
    n = len(cell.numbers)
    positions, unit_of = np.zeros((n, 3)), np.zeros(n, dtype=int)
    for k, u in enumerate(units):
        positions[list(u.atoms)] = u.positions
        unit_of[list(u.atoms)] = k
    model = SimpleNamespace(positions=positions, unit_of=unit_of, charges=np.zeros(n), symbols=("C",) * n)
    sites, texts = distributed_sites(model, units)
    assert texts == [
        "bond charges of C60: -0.350 e on the centres of its 30 shorter bonds, +0.175 e on its 60 longer ones"
    ]
    assert sites.count == n + 90 * len(units)
    for k in range(len(units)):
        assert abs(sites.charges[sites.unit_of == k].sum()) < 1e-12
    # every atom has one 6:6 and two 6:5 bonds: no charge on the atoms, no dipole derivative
    assert np.allclose(sites.atom_charges(), 0, atol=1e-12)
    centres = sites.positions(positions)[n:]
    short = sites.charges[n:] < 0
    d66 = [np.min(np.linalg.norm(positions - c, axis=1)) for c in centres[short]]
    assert np.allclose(d66, 1.391 / 2, atol=1e-3)  # 6:6 bond of the bundled file (David et al. 1991)


@pytest.mark.slow
def test_c60_bond_charges_hold_the_measured_orientation_better(structures_dir, cache):
    """The Ag libration about [111] at the measured orientation: 7i cm-1 without charges, 1.8i with bond charges."""
    plain = estimate(structures_dir / "c60_ordered_Pa-3.cif", model=EstimateOptions(cache=cache, allow_imaginary=True))
    bond = estimate(structures_dir / "c60_ordered_Pa-3.cif", model=EstimateOptions(cache=cache, charges="distributed"))
    low = min(ln.wavenumber_cm1 for ln in plain.lattice_lines())
    mine = min(ln.wavenumber_cm1 for ln in bond.lattice_lines())
    assert low < -5 and -3 < mine < 0  # still not quite a minimum (see docs/estimate.md)
    assert "bond charges of C60" in bond.model
    assert any("slightly imaginary" in w for w in bond.warnings)
    assert bond.acoustic_max_cm1 < 1e-2


def test_reordering_atoms_and_shifting_the_origin_change_nothing(structures_dir, cache, co2):
    """The sites are built per unit from its atoms: their order in the file and the origin do not matter."""
    from splitting.crystal.read import load_structure

    atoms = load_structure(structures_dir / "co2_Pa-3.cif")
    rng = np.random.default_rng(7)
    moved = atoms[rng.permutation(len(atoms))]
    moved.translate(moved.cell[:].T @ np.array([0.13, -0.21, 0.37]))
    moved.wrap()
    other = estimate_atoms(moved, model=EstimateOptions(cache=cache, charges="distributed"))
    a = sorted((ln.species, ln.wavenumber_cm1) for ln in co2.lines if ln.origin != "acoustic")
    b = sorted((ln.species, ln.wavenumber_cm1) for ln in other.lines if ln.origin != "acoustic")
    assert [s for s, _ in a] == [s for s, _ in b]
    assert [w for _, w in a] == pytest.approx([w for _, w in b], abs=0.1)
    assert other.acoustic_max_cm1 < 1e-2
