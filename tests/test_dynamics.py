"""The lattice-dynamics estimate: bookkeeping, invariances, the cache and the force constants.

Small units only (CO2, N2, CH4); the on-disk cache lives in a temporary folder.
"""

from __future__ import annotations

import numpy as np
import pytest

from splitting.dynamics import EstimateOptions, estimate, estimate_atoms


@pytest.fixture(scope="session")
def cache_dir(tmp_path_factory):
    return tmp_path_factory.mktemp("hessians")


@pytest.fixture(scope="session")
def co2(structures_dir, cache_dir):
    return estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=str(cache_dir)))


@pytest.fixture(scope="session")
def n2(structures_dir, cache_dir):
    return estimate(structures_dir / "alpha_N2_Pa-3.cif", model=EstimateOptions(cache=str(cache_dir)))


@pytest.mark.parametrize("name", ["co2", "n2"])
def test_every_line_of_the_engine_count(name, request, structures_dir):
    """Lines per species equal the engine's counts (optical + acoustic), with its activity."""
    from splitting.crystal.predict import predict

    est = request.getfixturevalue(name)
    pred = predict(structures_dir / ("co2_Pa-3.cif" if name == "co2" else "alpha_N2_Pa-3.cif"))
    for sp in pred.species:
        mine = [line for line in est.lines if line.species == sp.label]
        assert len(mine) == sp.optical + sp.acoustic
        assert {line.activity for line in mine} <= {sp.activity}
        assert sum(line.origin == "acoustic" for line in mine) == sp.acoustic
        assert sum(line.origin == "librational" for line in mine) == sp.librational
        assert sum(line.origin == "translational" for line in mine) == sp.translational
        assert sum(line.origin == "internal" for line in mine) == sp.internal


def test_acoustic_modes_at_zero(co2):
    assert co2.acoustic_max_cm1 < 1e-2
    assert all(line.wavenumber_cm1 > 0 for line in co2.lines if line.origin != "acoustic")


def test_bands_and_positions(co2):
    nu2 = next(b for b in co2.bands if b.band == "nu2")
    assert nu2.free_species == "Πu"
    # Πu of D∞h at a S6 site of Th: Eu + 2 Tu (the engine's correlation)
    assert sorted(s for s, _ in nu2.components) == ["Eu", "Tu", "Tu"]
    assert nu2.splitting_cm1 == pytest.approx(max(w for _, w in nu2.components) - min(w for _, w in nu2.components))
    pos = co2.positions()
    assert len(pos[("nu2", "Tu")]) == 2
    assert len(pos[("lattice", "Tg")]) == 2
    d = co2.to_dict()
    assert d["model"].startswith("model:") and d["lines"][0]["species"]


def test_rotating_the_frame_changes_nothing(structures_dir, cache_dir, co2):
    """The same crystal in a rotated Cartesian frame gives the same lines."""
    from scipy.spatial.transform import Rotation

    from splitting.crystal.read import load_structure

    atoms = load_structure(structures_dir / "co2_Pa-3.cif")
    rot = Rotation.from_euler("zyx", [20, 35, -50], degrees=True).as_matrix()
    atoms.set_cell(atoms.cell[:] @ rot.T, scale_atoms=True)
    turned = estimate_atoms(atoms, model=EstimateOptions(cache=str(cache_dir)))
    a = sorted((line.species, round(line.wavenumber_cm1, 1)) for line in co2.lines if line.origin != "acoustic")
    b = sorted((line.species, round(line.wavenumber_cm1, 1)) for line in turned.lines if line.origin != "acoustic")
    assert a == b


def test_cache_gives_the_same_answer(structures_dir, tmp_path):
    from splitting.dynamics.freeunit import free_hessian

    pos = [[0, 0, 0], [0, 0, 1.16], [0, 0, -1.16]]
    first = free_hessian("CO2", [6, 8, 8], pos, cache=tmp_path)
    again = free_hessian("CO2", [6, 8, 8], pos, cache=tmp_path)
    assert not first.from_cache and again.from_cache
    assert len(list(tmp_path.glob("*.npz"))) == 1
    assert np.allclose(first.hessian, again.hessian)


def test_symmetry_reduced_hessian_equals_the_full_one():
    """CH4: two displaced atoms (C and one H) rebuild the Hessian of all five."""
    from splitting.dynamics import freeunit

    d = 1.09 / np.sqrt(3)
    pos = np.array([[0, 0, 0], [d, d, d], [-d, -d, d], [-d, d, -d], [d, -d, -d]])
    h = freeunit.free_hessian("CH4", [6, 1, 1, 1, 1], pos)
    assert h.displaced_atoms == 2
    engine = freeunit._Engine("CH4", h.numbers, h.positions, 0)
    full = np.zeros((15, 15))
    for k in range(15):
        plus = h.positions.ravel().copy()
        minus = plus.copy()
        plus[k] += freeunit.STEP
        minus[k] -= freeunit.STEP
        full[:, k] = (engine(plus.reshape(5, 3))[1] - engine(minus.reshape(5, 3))[1]).ravel() / (2 * freeunit.STEP)
    full = (full + full.T) / 2
    assert np.max(np.abs(full - h.hessian)) < 1e-3 * np.max(np.abs(full))


def _fd_check(fn, positions, step=1e-4):
    """Force constants against central differences of the gradient."""
    fc, _ = fn(positions)
    n = len(positions)
    num = np.zeros((3 * n, 3 * n))
    for k in range(3 * n):
        p = positions.ravel().copy()
        m = p.copy()
        p[k] += step
        m[k] -= step
        num[:, k] = (fn(p.reshape(n, 3))[1] - fn(m.reshape(n, 3))[1]).ravel() / (2 * step)
    return fc, num


def test_exp6_force_constants_are_the_derivative_of_the_gradient():
    from splitting.dynamics.potential import WILLIAMS, exp6_force_constants

    lat = np.array([[5.0, 0, 0], [0.5, 4.6, 0], [0.3, 0.2, 5.2]])
    pos = np.array([[0.1, 0.2, 0.3], [1.3, 0.1, 0.2], [2.4, 2.5, 2.1], [3.1, 3.3, 2.9]])
    unit_of = np.array([0, 0, 1, 1])
    symbols = ["C", "H", "O", "N"]

    def fn(p):
        fc, grad, _ = exp6_force_constants(lat, p, symbols, unit_of, WILLIAMS, cutoff=7.0)
        return fc, grad

    fc, num = _fd_check(fn, pos)
    assert np.allclose(fc, num, atol=1e-5 * np.max(np.abs(fc)) + 1e-7)


def test_ewald_force_constants_are_the_derivative_of_the_gradient():
    from splitting.dynamics.ewald import coulomb_force_constants

    lat = np.array([[4.0, 0, 0], [0.4, 4.3, 0], [0.2, 0.3, 4.5]])
    pos = np.array([[0.1, 0.2, 0.3], [1.2, 0.1, 0.2], [2.2, 2.4, 2.0], [2.9, 3.1, 2.9]])
    q = np.array([0.4, -0.3, 0.5, -0.6])
    unit_of = np.array([0, 0, 1, 1])

    def fn(p):
        return coulomb_force_constants(lat, p, q, unit_of, cutoff=6.0)

    fc, num = _fd_check(fn, pos)
    assert np.allclose(fc, num, atol=1e-4 * np.max(np.abs(fc)))
    # a larger cut-off (other Ewald splitting) gives the same force constants
    other, _ = coulomb_force_constants(lat, pos, q, unit_of, cutoff=9.0)
    assert np.allclose(fc, other, atol=1e-4 * np.max(np.abs(fc)))


def test_simulated_free_unit_species(co2):
    """Free CO2: nu1 Σg+, nu2 Πu, nu3 Σu+ from the eigenvectors."""
    species = {b.band: b.free_species for b in co2.bands}
    assert species == {"nu1": "Σg+", "nu2": "Πu", "nu3": "Σu+"}
