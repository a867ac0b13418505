"""Timing of the model lattice-dynamics estimate (splitting.dynamics).

Run with::

    .venv/bin/python -m pytest benchmarks/bench_dynamics.py --benchmark-enable -q -o addopts=""

Goals (on 2 cores):

* ``test_free_c60_hessian``: GFN2-xTB Hessian of free C60 by the symmetry-reduced route
  (one displaced atom), no cache: under 1 minute;
* ``test_c60_whole_estimate``: the whole estimate of the bundled C60 Pa-3 cell (240 atoms),
  no cache: under 3 minutes;
* ``test_naphthalene_estimate``: naphthalene P2_1/a, no cache: under 1 minute;
* ``test_c60_cached_estimate``: C60 Pa-3 again with the Hessian cached: under 5 s;
* ``test_intermolecular_cost_vs_atoms``: the exp-6 and the Ewald force constants of CO2
  supercells (12 to 324 atoms); prints the exponent of time against atoms of each (goal:
  about 1, linear; the reciprocal-space Ewald term couples every pair of charges, so its
  k = 0 force constants fill a dense matrix, quadratic for large enough cells).

Timings on a shared machine depend strongly on the load: multi-threaded BLAS under
contention costs several times the single-threaded CPU time (``OMP_NUM_THREADS=1`` helps).

The C60 estimates pass ``allow_imaginary`` because the bundled structure, not relaxed, has
one slightly imaginary libration in the model.
"""

from __future__ import annotations

import time
from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parent.parent
STRUCTURES = ROOT / "structures"


def _once(benchmark, fn):
    return benchmark.pedantic(fn, rounds=1, iterations=1, warmup_rounds=0)


@pytest.fixture(scope="module")
def c60_cache(tmp_path_factory):
    return tmp_path_factory.mktemp("c60-hessian")


def test_free_c60_hessian(benchmark, tmp_path):
    import ase.io

    from splitting.dynamics.freeunit import free_hessian

    mol = ase.io.read(STRUCTURES / "molecules" / "c60.xyz")
    h = _once(benchmark, lambda: free_hessian("C60", mol.numbers, mol.positions, cache=tmp_path))
    assert h.displaced_atoms == 1 and h.hessian.shape == (180, 180)


def test_c60_whole_estimate(benchmark, c60_cache):
    from splitting.dynamics import EstimateOptions, estimate

    opts = EstimateOptions(cache=str(c60_cache), allow_imaginary=True)
    est = _once(benchmark, lambda: estimate(STRUCTURES / "c60_ordered_Pa-3.cif", model=opts))
    assert len(est.lines) > 100


def test_c60_cached_estimate(benchmark, c60_cache):
    from splitting.dynamics import EstimateOptions, estimate

    opts = EstimateOptions(cache=str(c60_cache), allow_imaginary=True)
    estimate(STRUCTURES / "c60_ordered_Pa-3.cif", model=opts)  # fill the cache if run alone
    est = _once(benchmark, lambda: estimate(STRUCTURES / "c60_ordered_Pa-3.cif", model=opts))
    assert est.acoustic_max_cm1 < 1.0


def test_naphthalene_estimate(benchmark, tmp_path):
    from splitting.dynamics import EstimateOptions, estimate

    opts = EstimateOptions(cache=str(tmp_path))
    est = _once(benchmark, lambda: estimate(STRUCTURES / "naphthalene_P21a.cif", model=opts))
    assert len(est.lattice_lines()) == 9


def test_intermolecular_cost_vs_atoms(benchmark):
    from splitting.crystal.read import load_structure
    from splitting.dynamics.ewald import coulomb_force_constants
    from splitting.dynamics.potential import WILLIAMS, exp6_force_constants

    base = load_structure(STRUCTURES / "co2_Pa-3.cif")
    sizes, t_exp6, t_ewald = [], [], []

    def run(atoms):
        n = len(atoms)
        pos = atoms.positions
        unit_of = np.arange(n) // 3  # unit labels only select pairs; exactness is not needed here
        q = np.tile([0.4, -0.2, -0.2], n // 3)
        t0 = time.perf_counter()
        exp6_force_constants(atoms.cell[:], pos, atoms.get_chemical_symbols(), unit_of, WILLIAMS, cutoff=12.0)
        t1 = time.perf_counter()
        coulomb_force_constants(atoms.cell[:], pos, q, unit_of, cutoff=12.0)
        return t1 - t0, time.perf_counter() - t1

    for rep in ((1, 1, 1), (2, 1, 1), (2, 2, 1), (2, 2, 2), (3, 2, 2), (3, 3, 3)):
        atoms = base.repeat(rep)
        sizes.append(len(atoms))
        a, b = run(atoms)
        t_exp6.append(a)
        t_ewald.append(b)
    _once(benchmark, lambda: run(base.repeat((2, 2, 2))))
    for name, times in (("exp-6", t_exp6), ("Ewald", t_ewald)):
        slope = np.polyfit(np.log(sizes[2:]), np.log(times[2:]), 1)[0]
        print(
            f"\n{name} force constants: atoms {sizes}, seconds {[round(t, 3) for t in times]}, "
            f"exponent {slope:.2f} (1 = linear)"
        )
        assert slope < 2.5
