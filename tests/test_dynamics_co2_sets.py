"""Parameter sets fitted to CO2 only (Lennard-Jones 12-6 with their own charges): derivatives, coverage, reference.

Published values (every one from memory):

* EPM2: J. G. Harris and K. H. Yung, J. Phys. Chem. 99, 12021 (1995): sigma_CC 2.757 Å,
  eps_CC/k 28.129 K, sigma_OO 3.033 Å, eps_OO/k 80.507 K, C-O cross term sigma 2.892 Å,
  eps/k 47.588 K; charges C +0.6512, O -0.3256 e;
* TraPPE CO2: J. J. Potoff and J. I. Siepmann, AIChE J. 47, 1676 (2001): sigma_C 2.80 Å,
  eps_C/k 27.0 K, sigma_O 3.05 Å, eps_O/k 79.0 K, Lorentz-Berthelot combining; charges
  C +0.70, O -0.35 e;
* the lattice modes and the nu2 splitting of solid CO2 as in tests/test_dynamics_reference.py
  (Cahill and Leroi 1969, Ron and Schnepp 1967, Osberg and Hornig 1952).

The figures of every choice are tabulated in docs/estimate.md.
"""

from __future__ import annotations

import numpy as np
import pytest
from test_dynamics import _fd_check
from test_dynamics_reference import NU2_SPLITTING, _ratios

from splitting.dynamics import EstimateOptions, estimate
from splitting.dynamics.constants import KELVIN
from splitting.dynamics.potential import EPM2, TRAPPE, WILLIAMS, ParameterSet, exp6_force_constants, sets_covering
from splitting.errors import InputError

#: every term at once (exp-6 of the Williams carbon with an r^-12 wall added): a test set, invented
_MIXED = ParameterSet(
    "mixed",
    "invented for the tests",
    {"C": (*WILLIAMS.like["C"][:3], 400.0), "O": (*WILLIAMS.like["O"][:3], 900.0)},
    {},
)
_LAT = np.array([[5.0, 0, 0], [0.5, 4.6, 0], [0.3, 0.2, 5.2]])
_POS = np.array([[0.1, 0.2, 0.3], [1.3, 0.1, 0.2], [2.4, 2.5, 2.1], [3.1, 3.3, 2.9]])
_UNIT_OF = np.array([0, 0, 1, 1])
_SYMBOLS = ["C", "O", "O", "C"]


@pytest.mark.parametrize("params", [EPM2, TRAPPE, _MIXED], ids=lambda p: p.name)
def test_force_constants_are_the_derivative_of_the_gradient(params):
    def fn(p):
        fc, grad, _ = exp6_force_constants(_LAT, p, _SYMBOLS, _UNIT_OF, params, cutoff=7.0)
        return fc, grad

    fc, num = _fd_check(fn, _POS)
    assert np.allclose(fc, num, atol=1e-5 * np.max(np.abs(fc)) + 1e-7)


@pytest.mark.parametrize("params", [EPM2, _MIXED], ids=lambda p: p.name)
def test_gradient_is_the_derivative_of_the_energy_and_of_the_relaxation_energy(params):
    from splitting.dynamics.relax import lattice_energy

    _, grad, _ = exp6_force_constants(_LAT, _POS, _SYMBOLS, _UNIT_OF, params, cutoff=7.0)
    step = 1e-5
    for name, energy in (
        ("force constants", lambda p: exp6_force_constants(_LAT, p, _SYMBOLS, _UNIT_OF, params, cutoff=7.0)[2]),
        (
            "relaxation",
            lambda p: lattice_energy(_LAT, p, _SYMBOLS, _UNIT_OF, np.zeros(4), params, cutoff=7.0, use_charges=False),
        ),
    ):
        num = np.zeros_like(grad)
        for k in range(grad.size):
            d = np.zeros(grad.size)
            d[k] = step
            num.flat[k] = (energy(_POS + d.reshape(-1, 3)) - energy(_POS - d.reshape(-1, 3))) / (2 * step)
        assert np.allclose(grad, num, atol=1e-6 * np.max(np.abs(grad))), name


def test_sparse_force_constants_equal_the_dense_ones():
    fc, grad, e = exp6_force_constants(_LAT, _POS, _SYMBOLS, _UNIT_OF, TRAPPE, cutoff=9.0)
    fs, gs, es = exp6_force_constants(_LAT, _POS, _SYMBOLS, _UNIT_OF, TRAPPE, cutoff=9.0, sparse=True)
    assert np.allclose(fs.toarray(), fc, atol=1e-12) and np.allclose(gs, grad) and es == e


def test_lennard_jones_pairs_as_published():
    """EPM2's own C-O term and TraPPE's Lorentz-Berthelot one (Harris and Yung 1995, Potoff and Siepmann 2001)."""
    for params, (sigma, eps) in ((EPM2, (2.892, 47.588)), (TRAPPE, ((2.80 + 3.05) / 2, np.sqrt(27.0 * 79.0)))):
        a, b, c, d = params.pair("C", "O")
        assert b == 0 and c == 0
        assert np.isclose((d / a) ** (1 / 6), sigma)  # sigma^6 = D / A
        assert np.isclose(a * a / (4 * d), eps * KELVIN)  # eps = A^2 / (4 D)


def test_which_sets_cover_which_units():
    assert sets_covering({"C", "O"}, {"CO2"}) == ["williams", "epm2", "trappe"]
    assert "epm2" not in sets_covering({"C", "O"}, {"CO2", "CO"})
    assert EPM2.covers({"C", "O"}, {"CO2"}) and not EPM2.covers({"C", "O"}, {"C3O2"})
    assert not EPM2.covers({"C", "H"})


def _one_error_line(code: int, out: str, err: str) -> str:
    assert code == 2  # bad input (docs/exit-codes.md)
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: "), err
    return lines[0]


def test_set_on_another_unit_is_refused(run_cli, structures_dir, tmp_path):
    argv = ["estimate", structures_dir / "naphthalene_P21a.cif", "--potential", "epm2", "--cache", tmp_path]
    line = _one_error_line(*run_cli(argv))
    assert "unit C10H8" in line and "fitted to CO2 only" in line and "williams, gavezzotti" in line


def test_set_on_a_crystal_no_set_covers(run_cli, structures_dir, tmp_path):
    argv = ["estimate", structures_dir / "nh4cl_ordered_P-43m.cif", "--potential", "trappe", "--cache", tmp_path]
    line = _one_error_line(*run_cli(argv))
    assert "trappe" in line and "fitted to CO2 only" in line and "no estimate can be made" in line


def test_set_charges_need_a_set_that_has_them(run_cli, structures_dir, tmp_path):
    argv = ["estimate", structures_dir / "co2_Pa-3.cif", "--charges", "set", "--cache", tmp_path]
    line = _one_error_line(*run_cli(argv))
    assert "'williams' has no charges of its own" in line and "epm2, trappe" in line


def test_set_on_nitrogen_is_refused_in_the_api(structures_dir):
    with pytest.raises(
        InputError, match=r"unit N2: the Lennard-Jones 12-6 set 'epm2' was fitted to CO2 only; .*williams"
    ):
        estimate(structures_dir / "alpha_N2_Pa-3.cif", model=EstimateOptions(potential="epm2"))


@pytest.fixture(scope="module")
def cache(tmp_path_factory):
    return str(tmp_path_factory.mktemp("hessians"))


@pytest.fixture(scope="module")
def co2_sets(structures_dir, cache):
    """The estimate of CO2 with each CO2 set and its own charges, at the bundled structure."""
    return {
        name: estimate(
            structures_dir / "co2_Pa-3.cif", model=EstimateOptions(potential=name, charges="set", cache=cache)
        )
        for name in ("epm2", "trappe")
    }


@pytest.mark.parametrize("name", ["epm2", "trappe"])
def test_lattice_modes_median_within_20_percent_with_a_co2_set(co2_sets, name):
    """Median model / observed 0.89 (epm2) and 0.93 (trappe), every line within 20 % (docs/estimate.md)."""
    ratios = _ratios(co2_sets[name])
    assert abs(np.median(ratios) - 1) < 0.2, ratios
    assert all(0.75 < r < 1.2 for r in ratios), ratios


@pytest.mark.parametrize("name", ["epm2", "trappe"])
def test_libration_over_translation_near_the_observed_ratio(co2_sets, name):
    """Eg / lower Tu: 74 / 68 = 1.09 observed; 1.0 with either set (0.66 with the default williams)."""
    est = co2_sets[name]
    eg = min(ln.wavenumber_cm1 for ln in est.lines if ln.species == "Eg" and ln.origin == "librational")
    tu = min(ln.wavenumber_cm1 for ln in est.lines if ln.species == "Tu" and ln.origin == "translational")
    assert 0.9 < eg / tu < 1.2


def test_set_charges_and_the_spread_over_sets(co2_sets):
    est = co2_sets["epm2"]
    assert "Lennard-Jones 12-6 set 'epm2'" in est.model and "charges of the set 'epm2' on CO2" in est.model
    # the spread: the other CO2 set with its own charges; the general sets without charges of their own left out
    assert "'trappe'" in est.uncertainty_rule and "williams" not in est.uncertainty_rule
    assert not any("sets fitted to it" in w for w in est.warnings)


@pytest.mark.xfail(
    strict=True,
    reason="fixed charges are the dipole derivatives too: with the sets' own charges the nu2 splitting of CO2 "
    "is about 20 cm-1, four times the measured 5.1 (with --charges distributed it is 9 cm-1)",
)
@pytest.mark.parametrize("name", ["epm2", "trappe"])
def test_nu2_splitting_within_a_factor_2_with_the_sets_own_charges(co2_sets, name):
    nu2 = next(b for b in co2_sets[name].bands if b.band == "nu2")
    tu = [w for s, w in nu2.components if s == "Tu"]
    assert 0.5 < (max(tu) - min(tu)) / NU2_SPLITTING < 2.0


def test_distributed_charges_with_a_co2_set_meet_both_goals(structures_dir, cache):
    """trappe with ``charges="distributed"``: median 0.95, nu2 splitting 8.8 cm-1 (Osberg and Hornig: 5.1)."""
    est = estimate(
        structures_dir / "co2_Pa-3.cif", model=EstimateOptions(potential="trappe", charges="distributed", cache=cache)
    )
    ratios = _ratios(est)
    assert abs(np.median(ratios) - 1) < 0.2, ratios
    nu2 = next(b for b in est.bands if b.band == "nu2")
    tu = [w for s, w in nu2.components if s == "Tu"]
    assert 0.5 < (max(tu) - min(tu)) / NU2_SPLITTING < 2.0


def test_relaxed_cell_with_a_co2_set(structures_dir, cache):
    """The model's own cell: 1.3 % below the bundled 5.62 Å (Simon and Peters 1980), median 1.03."""
    est = estimate(
        structures_dir / "co2_Pa-3.cif",
        model=EstimateOptions(potential="trappe", charges="set", cache=cache, relax_cell=True),
    )
    assert -2.5 < est.relaxation.length_change_percent[0] < 0
    assert abs(np.median(_ratios(est)) - 1) < 0.2
