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
* ``test_intermolecular_cost_vs_atoms``: the exp-6, the damped shifted-force (DSF) and
  the Ewald terms of CO2 supercells (12 to 1,800 atoms) and NH4Cl supercells (6 to 2,058
  atoms); prints time and peak memory and their exponents against atoms (goal: about 1,
  linear, for exp-6 and DSF, whose force constants are sparse; the reciprocal-space Ewald
  term couples every pair of charges, so its force constants fill a dense matrix: about 2).

Timings on a shared machine depend strongly on the load: multi-threaded BLAS under
contention costs several times the single-threaded CPU time (``OMP_NUM_THREADS=1`` helps).

The C60 estimates pass ``allow_imaginary`` because the bundled structure, not relaxed, has
one slightly imaginary libration in the model; ``test_c60_relaxed_estimate`` turns the
molecules to the model's minimum on their sites first (``relax``) and checks that every
line is then real.
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


def test_c60_relaxed_estimate(benchmark, c60_cache):
    """The bundled C60 Pa-3 cell relaxed within its space group (one turn about the 3-fold axis): all lines real."""
    from splitting.dynamics import EstimateOptions, estimate

    estimate(STRUCTURES / "c60_ordered_Pa-3.cif", model=EstimateOptions(cache=str(c60_cache), allow_imaginary=True))
    opts = EstimateOptions(cache=str(c60_cache), relax=True)
    est = _once(benchmark, lambda: estimate(STRUCTURES / "c60_ordered_Pa-3.cif", model=opts))
    assert all(line.wavenumber_cm1 > 0 for line in est.lines if line.origin != "acoustic")
    assert est.relaxation.degrees_of_freedom == 1
    print(f"\nC60 Pa-3 relaxed: {est.relaxation.summary}")
    print("lattice lines (cm-1):", [(ln.species, round(ln.wavenumber_cm1, 1)) for ln in est.lattice_lines()])


def test_naphthalene_estimate(benchmark, tmp_path):
    from splitting.dynamics import EstimateOptions, estimate

    opts = EstimateOptions(cache=str(tmp_path))
    est = _once(benchmark, lambda: estimate(STRUCTURES / "naphthalene_P21a.cif", model=opts))
    assert len(est.lattice_lines()) == 9


def _intermolecular_run(case: str, rep: tuple[int, int, int], which: str) -> tuple[int, float, float]:
    """Atoms, seconds and peak traced memory (MiB) of one intermolecular term of one supercell."""
    import tracemalloc

    from splitting.crystal.read import load_structure
    from splitting.dynamics.coulomb import dsf_terms
    from splitting.dynamics.ewald import ewald_terms
    from splitting.dynamics.potential import WILLIAMS, exp6_force_constants

    atoms = load_structure(STRUCTURES / _CASES[case]).repeat(rep)
    n = len(atoms)
    # charges of the right size and sign for timing only (not the model's tight-binding ones)
    q = np.array([_TEST_CHARGES[z] for z in atoms.numbers])
    unit_of = np.arange(n)  # unit labels only select pairs; exactness is not needed here
    symbols = [s if s in "CHNO" else "C" for s in atoms.get_chemical_symbols()]
    tracemalloc.start()
    t0 = time.perf_counter()
    if which == "exp-6":
        exp6_force_constants(atoms.cell[:], atoms.positions, symbols, unit_of, WILLIAMS, cutoff=12.0, sparse=True)
    elif which == "dsf":
        dsf_terms(atoms.cell[:], atoms.positions, q, unit_of, cutoff=12.0)
    else:
        ewald_terms(atoms.cell[:], atoms.positions, q, unit_of, cutoff=12.0)
    seconds = time.perf_counter() - t0
    peak = tracemalloc.get_traced_memory()[1] / 2**20
    tracemalloc.stop()
    return n, seconds, peak


_CASES = {"co2": "co2_Pa-3.cif", "nh4cl": "nh4cl_ordered_P-43m.cif"}
_TEST_CHARGES = {6: 0.6, 8: -0.3, 7: -0.4, 1: 0.35, 17: -1.0}
_SUPERCELLS = {
    "co2": ((1, 1, 1), (2, 1, 1), (2, 2, 2), (3, 3, 3), (4, 4, 4), (5, 5, 5), (5, 5, 6)),
    "nh4cl": ((1, 1, 1), (2, 2, 2), (4, 4, 4), (6, 6, 6), (7, 7, 7)),
}


@pytest.mark.parametrize("case", ["co2", "nh4cl"])
def test_intermolecular_cost_vs_atoms(benchmark, case):
    """Time and memory of the exp-6, the DSF and the Ewald terms, 6-12 to about 2,000 atoms.

    Prints the exponent of time and of memory against atoms over the cells of 90 atoms and
    more (1 = linear), each time the faster of two runs.  Goal: about 1 for exp-6 and DSF;
    the Ewald sum is dense, about 2.
    """
    kinds = ("exp-6", "dsf", "ewald") if case == "co2" else ("dsf", "ewald")
    # the faster of two runs of each size (the machine is shared; memory is the same each time)
    table = {
        k: [min((_intermolecular_run(case, rep, k) for _ in range(2)), key=lambda r: r[1]) for rep in _SUPERCELLS[case]]
        for k in kinds
    }
    _once(benchmark, lambda: _intermolecular_run(case, (2, 2, 2), "dsf"))
    for kind, rows in table.items():
        n, t, m = (np.array(x) for x in zip(*rows, strict=True))
        big = n >= 90
        slope_t = np.polyfit(np.log(n[big]), np.log(t[big]), 1)[0]
        slope_m = np.polyfit(np.log(n[big]), np.log(m[big]), 1)[0]
        print(
            f"\n{case} {kind}: atoms {n.tolist()}, seconds {np.round(t, 3).tolist()}, MiB {np.round(m, 1).tolist()}; "
            f"exponent time {slope_t:.2f}, memory {slope_m:.2f}"
        )
        if kind != "ewald":
            assert slope_t < 1.4 and slope_m < 1.4
