"""Point charges between units: the Ewald sum and the damped shifted-force (DSF) pair sum.

The DSF sum (C. J. Fennell and J. D. Gezelter, J. Chem. Phys. 124, 234104 (2006)) is
checked against the Ewald sum on small cells (energies, forces, force constants, the lines
of the CO2 estimate), and both against their own derivatives; the sparse block assembly
against the dense one.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.special import erfc

from splitting.dynamics.constants import COULOMB
from splitting.dynamics.coulomb import dsf_terms
from splitting.dynamics.ewald import ewald_terms

#: Madelung constant of rock salt referred to the nearest-neighbour distance:
#: C. Kittel, Introduction to Solid State Physics, 8th ed., Wiley (2005), ch. 3 (1.747565; from memory)
MADELUNG_NACL = 1.747565


def _rock_salt(a: float = 5.64):
    fr = np.array([[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]])
    pos = np.concatenate([fr * a, (fr + np.array([0.5, 0, 0])) * a])
    return np.eye(3) * a, pos, np.array([1.0] * 4 + [-1.0] * 4), np.arange(8)


def _madelung(energy: float, a: float = 5.64) -> float:
    return -energy / 4 / COULOMB * (a / 2)


def _small_cell():
    """Two 'molecules' of two atoms in a skew cell, charges summing to zero (test values)."""
    lat = np.array([[5.0, 0, 0], [0.4, 5.3, 0], [0.2, 0.3, 5.5]])
    pos = np.array([[0.1, 0.2, 0.3], [1.2, 0.1, 0.2], [2.2, 2.4, 2.0], [2.9, 3.1, 2.9]])
    return lat, pos, np.array([0.4, -0.3, 0.5, -0.6]), np.array([0, 0, 1, 1])


@pytest.fixture(scope="module")
def co2_cell(structures_dir):
    """The bundled CO2 Pa-3 cell, each molecule whole, with charges C +0.6, O -0.3 (test values)."""
    from splitting.crystal.predict import Options, units_of
    from splitting.crystal.read import load_structure
    from splitting.crystal.spacegroup import analyse_cell

    atoms = load_structure(structures_dir / "co2_Pa-3.cif")
    opts = Options()
    cell = analyse_cell(atoms.cell[:], atoms.get_scaled_positions(wrap=True), atoms.numbers, tolerance=opts.tolerance)
    n = len(cell.numbers)
    pos, unit_of = np.zeros((n, 3)), np.zeros(n, dtype=int)
    for k, u in enumerate(units_of(cell, opts)):
        pos[list(u.atoms)] = u.positions
        unit_of[list(u.atoms)] = k
    q = np.where(np.asarray(cell.numbers) == 6, 0.6, -0.3)
    return np.asarray(cell.lattice, dtype=float), pos, q, unit_of


def _numeric_gradient(fn, pos, step=1e-4):
    n = len(pos)
    out = np.zeros((n, 3))
    for k in range(3 * n):
        p, m = pos.ravel().copy(), pos.ravel().copy()
        p[k] += step
        m[k] -= step
        out.ravel()[k] = (fn(p.reshape(n, 3)) - fn(m.reshape(n, 3))) / (2 * step)
    return out


def _numeric_hessian(fn, pos, step=1e-4):
    n = len(pos)
    out = np.zeros((3 * n, 3 * n))
    for k in range(3 * n):
        p, m = pos.ravel().copy(), pos.ravel().copy()
        p[k] += step
        m[k] -= step
        out[:, k] = (fn(p.reshape(n, 3)) - fn(m.reshape(n, 3))).ravel() / (2 * step)
    return out


def test_ewald_gives_the_madelung_constant_of_rock_salt():
    _, _, e = ewald_terms(*_rock_salt(), cutoff=12.0)
    assert _madelung(e) == pytest.approx(MADELUNG_NACL, abs=1e-5)


def test_ewald_gradient_is_the_derivative_of_its_energy():
    lat, pos, q, unit_of = _small_cell()
    _, grad, _ = ewald_terms(lat, pos, q, unit_of, cutoff=6.0)
    num = _numeric_gradient(lambda p: ewald_terms(lat, p, q, unit_of, cutoff=6.0)[2], pos)
    assert np.allclose(grad, num, atol=1e-6)


@pytest.mark.parametrize("alpha", [0.3, 0.4, 0.5])
def test_ewald_does_not_depend_on_the_splitting(alpha):
    lat, pos, q, unit_of = _small_cell()
    fc, grad, e = ewald_terms(lat, pos, q, unit_of, cutoff=9.0)
    fc2, grad2, e2 = ewald_terms(lat, pos, q, unit_of, cutoff=9.0, alpha=alpha)
    scale = np.max(np.abs(fc))
    assert np.allclose(fc, fc2, atol=1e-5 * scale)
    assert np.allclose(grad, grad2, atol=1e-6)
    assert e == pytest.approx(e2, rel=1e-5)


def test_ewald_splitting_chosen_with_cell_size_changes_nothing(co2_cell):
    """A 2x2x2 supercell (96 atoms) uses a longer real-space reach; every number stays per cell."""
    lat, pos, q, unit_of = co2_cell
    n = len(q)
    shifts = np.array([(a, b, c) for a in range(2) for b in range(2) for c in range(2)]) @ lat
    big_pos = np.concatenate([pos + s for s in shifts])
    big_units = np.concatenate([unit_of + k * (unit_of.max() + 1) for k in range(8)])
    _, g1, e1 = ewald_terms(lat, pos, q, unit_of, cutoff=12.0)
    _, g8, e8 = ewald_terms(2 * lat, big_pos, np.tile(q, 8), big_units, cutoff=12.0)
    assert e8 == pytest.approx(8 * e1, rel=1e-6)
    assert np.allclose(g8[:n], g1, atol=1e-6)


def test_dsf_gradient_and_force_constants_are_derivatives():
    lat, pos, q, unit_of = _small_cell()

    def energy(p):
        return dsf_terms(lat, p, q, unit_of, cutoff=7.0)[2]

    def gradient(p):
        return dsf_terms(lat, p, q, unit_of, cutoff=7.0)[1]

    fc, grad, _ = dsf_terms(lat, pos, q, unit_of, cutoff=7.0)
    fc = fc.toarray()
    assert np.allclose(grad, _numeric_gradient(energy, pos), atol=1e-6)
    assert np.allclose(fc, _numeric_hessian(gradient, pos), atol=1e-5 * np.max(np.abs(fc)))
    assert np.allclose(fc, fc.T, atol=1e-12)
    assert np.allclose(fc.reshape(4, 3, 4, 3).sum(axis=2), 0, atol=1e-12)  # acoustic sum rule


def test_dsf_energy_and_force_vanish_at_the_cut_off():
    """Two opposite charges just inside and just outside the cut-off (big box)."""
    lat = np.eye(3) * 40
    q, units = np.array([1.0, -1.0]), np.array([0, 1])
    for r in (11.999, 12.001):
        _, grad, e = dsf_terms(lat, np.array([[0, 0, 0], [r, 0, 0]]), q, units, cutoff=12.0)
        self_term = -COULOMB * (2.4 / 12 / np.sqrt(np.pi) + 0.5 * erfc(2.4) / 12) * 2
        assert abs(e - self_term) < 1e-6
        assert np.max(np.abs(grad)) < 1e-5


def test_dsf_madelung_constant_within_a_quarter_per_cent():
    """Wolf et al. (J. Chem. Phys. 110, 8254 (1999)) show the damped sum converging on rock salt."""
    fc_e, _, _ = ewald_terms(*_rock_salt(), cutoff=12.0)
    fc, _, e = dsf_terms(*_rock_salt(), cutoff=12.0)
    assert _madelung(e) == pytest.approx(MADELUNG_NACL, rel=2.5e-3)
    assert np.max(np.abs(fc.toarray() - fc_e)) < 5e-3 * np.max(np.abs(fc_e))


def test_dsf_against_ewald_on_co2(co2_cell):
    """Energy within 2 %, forces within 2 % of the largest, blocks between units within 1 %."""
    lat, pos, q, unit_of = co2_cell
    fc_e, g_e, e_e = ewald_terms(lat, pos, q, unit_of, cutoff=12.0)
    fc_d, g_d, e_d = dsf_terms(lat, pos, q, unit_of, cutoff=12.0)
    assert e_d == pytest.approx(e_e, rel=0.02)
    assert np.max(np.abs(g_d - g_e)) < 0.02 * np.max(np.abs(g_e))
    n = len(q)
    other = (unit_of[:, None] != unit_of[None, :])[:, None, :, None]
    diff = (fc_d.toarray() - fc_e).reshape(n, 3, n, 3)
    assert np.max(np.abs(np.where(other, diff, 0))) < 0.01 * np.max(np.abs(fc_e))


def test_dsf_and_ewald_estimates_of_co2_agree(structures_dir, tmp_path_factory):
    """Lattice lines within 0.5 %, splittings within 0.05 cm-1, every line within 1 cm-1."""
    from splitting.dynamics import EstimateOptions, estimate

    cache = str(tmp_path_factory.mktemp("co2-coulomb"))
    ew = estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=cache))
    ds = estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=cache, coulomb="dsf"))
    assert "damped shifted-force" in ds.model and "Ewald" in ew.model
    for a, b in zip(ew.lines, ds.lines, strict=True):
        assert (a.species, a.origin) == (b.species, b.origin)
        assert abs(a.wavenumber_cm1 - b.wavenumber_cm1) < 1.0
        if a.origin in ("translational", "librational"):
            assert b.wavenumber_cm1 == pytest.approx(a.wavenumber_cm1, rel=5e-3)
    for a, b in zip(ew.bands, ds.bands, strict=True):
        assert abs(a.splitting_cm1 - b.splitting_cm1) < 0.05


def test_sparse_blocks_equal_the_dense_sum():
    """Unsorted pairs, repeated images, and more pairs than one chunk."""
    from splitting.dynamics import pairs
    from splitting.dynamics.potential import add_pairs, radial_hessian

    rng = np.random.default_rng(7)
    n, m = 6, 50
    i, j = rng.integers(0, n, m), rng.integers(0, n, m)
    vec = rng.normal(size=(m, 3)) + 2.0
    d1, d2 = rng.normal(size=m), rng.normal(size=m)
    dense = np.zeros((n, 3, n, 3))
    add_pairs(dense, i, j, radial_hessian(vec, d1, d2))
    old, pairs.CHUNK = pairs.CHUNK, 7
    try:
        sparse = pairs.pair_force_constants(n, i, vec, d1, d2, j).toarray()
    finally:
        pairs.CHUNK = old
    assert np.allclose(sparse, dense.reshape(3 * n, 3 * n), atol=1e-12)


def test_sparse_exp6_equals_the_dense_one(co2_cell):
    from splitting.dynamics.potential import WILLIAMS, exp6_force_constants

    lat, pos, q, unit_of = co2_cell
    symbols = ["C" if x > 0 else "O" for x in q]
    fc, grad, e = exp6_force_constants(lat, pos, symbols, unit_of, WILLIAMS, cutoff=12.0)
    fs, gs, es = exp6_force_constants(lat, pos, symbols, unit_of, WILLIAMS, cutoff=12.0, sparse=True)
    assert np.allclose(fs.toarray(), fc, atol=1e-12) and np.allclose(gs, grad) and es == e


def test_cli_coulomb_option(run_cli, structures_dir, tmp_path):
    import json

    code, out, err = run_cli(
        ["estimate", structures_dir / "co2_Pa-3.cif", "--coulomb", "dsf", "--json", "--cache", tmp_path]
    )
    assert code == 0, err
    assert "damped shifted-force" in json.loads(out)["model"]
    code, _, err = run_cli(["estimate", structures_dir / "co2_Pa-3.cif", "--coulomb", "wolf"])
    assert code != 0 and "--coulomb" in err and "Traceback" not in err


def test_dsf_supercell_changes_nothing_per_cell(co2_cell):
    """A 2x2x2 supercell: energy eight times, the same forces on the same atoms."""
    lat, pos, q, unit_of = co2_cell
    n = len(q)
    shifts = np.array([(a, b, c) for a in range(2) for b in range(2) for c in range(2)]) @ lat
    big_pos = np.concatenate([pos + s for s in shifts])
    big_units = np.concatenate([unit_of + k * (unit_of.max() + 1) for k in range(8)])
    _, g1, e1 = dsf_terms(lat, pos, q, unit_of, cutoff=12.0)
    _, g8, e8 = dsf_terms(2 * lat, big_pos, np.tile(q, 8), big_units, cutoff=12.0)
    assert e8 == pytest.approx(8 * e1, rel=1e-9)
    assert np.allclose(g8[:n], g1, atol=1e-10)


def test_ewald_force_constants_symmetric_with_the_acoustic_sum_rule(co2_cell):
    lat, pos, q, unit_of = co2_cell
    fc, _, _ = ewald_terms(lat, pos, q, unit_of, cutoff=12.0)
    n = len(q)
    assert np.allclose(fc, fc.T, atol=1e-12 * np.max(np.abs(fc)))
    assert np.allclose(fc.reshape(n, 3, n, 3).sum(axis=2), 0, atol=1e-10)
