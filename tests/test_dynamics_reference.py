"""The estimate against published measurements on solid CO2 (Pa-3) and naphthalene (P2_1/a).

Measured values (every one from memory, cited where it was published):

* Raman librational lattice modes at low temperature: Eg 74, Tg 91, Tg 132 cm-1
  (W. Cahill and G. E. Leroi, J. Chem. Phys. 51, 97 (1969));
* far-infrared translational lattice modes: Tu 68 and 114 cm-1
  (D. A. Ron and O. Schnepp, J. Chem. Phys. 46, 3991 (1967));
* nu2 (bending) of the solid in the infrared: a doublet at 654.7 and 659.8 cm-1, a
  factor-group splitting of about 5 cm-1 (W. E. Osberg and D. F. Hornig, J. Chem. Phys. 20,
  1345 (1952)).

* naphthalene, Raman lattice modes at room temperature: 46, 51, 71, 74, 109, 125 cm-1
  (M. Suzuki, T. Yokoyama and M. Ito, Spectrochim. Acta 24A, 1091 (1968)), compared in
  ascending order without their species assignment.

The comparison with every line is tabulated in docs/estimate.md.  The goal (lattice modes
within 20 % in the median) is not reached for CO2: the librations come out about a third
too low with the tight-binding charges (median 0.65), about a quarter with charges scaled
to the measured quadrupole (0.77, tests/test_dynamics_quadrupole.py), and 0.80 with
distributed charges on the atoms and bond centres fitted to the measured quadrupole and a
published hexadecapole (``charges="distributed"``, tests/test_dynamics_sites.py; the
hexadecapole, -4.0 x 10^-42 esu cm^4, from C. G. Gray and K. E. Gubbins, Theory of
Molecular Fluids, vol. 1 (1984), its table of multipole moments, from memory); that is
recorded as a strict xfail, for all three.  With a parameter set fitted to CO2 (the
Lennard-Jones sets ``epm2`` and ``trappe`` with their own charges) the goal is met
(tests/test_dynamics_co2_sets.py).
"""

from __future__ import annotations

import numpy as np
import pytest

from splitting.dynamics import EstimateOptions, estimate

#: (species, origin) -> measured wavenumbers (cm-1), sources in the module docstring
OBSERVED = {
    ("Eg", "librational"): [74.0],
    ("Tg", "librational"): [91.0, 132.0],
    ("Tu", "translational"): [68.0, 114.0],
}
NU2_SPLITTING = 659.8 - 654.7


@pytest.fixture(scope="module")
def co2(structures_dir, tmp_path_factory):
    cache = tmp_path_factory.mktemp("hessians")
    return estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=str(cache)))


def _ratios(est) -> list[float]:
    out = []
    for (species, origin), seen in OBSERVED.items():
        mine = sorted(line.wavenumber_cm1 for line in est.lines if line.species == species and line.origin == origin)
        assert len(mine) == len(seen)
        out += [m / s for m, s in zip(mine, sorted(seen), strict=True)]
    return out


def test_lattice_modes_within_a_factor_of_two(co2):
    ratios = _ratios(co2)
    assert all(0.5 < r < 2.0 for r in ratios), ratios


def test_translational_modes_within_20_percent(co2):
    """Ron and Schnepp (1967): Tu 68, 114 cm-1 (from memory)."""
    mine = sorted(line.wavenumber_cm1 for line in co2.lines if line.species == "Tu" and line.origin == "translational")
    assert np.allclose(mine, [68.0, 114.0], rtol=0.2)


@pytest.mark.xfail(
    strict=True,
    reason="librations of CO2 come out about 35 % low (23 % with charges fitted to the measured quadrupole)",
)
def test_lattice_modes_median_within_20_percent(co2):
    assert abs(np.median(_ratios(co2)) - 1) < 0.2


@pytest.fixture(scope="module")
def co2_quadrupole(structures_dir, tmp_path_factory):
    cache = tmp_path_factory.mktemp("hessians")
    return estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=str(cache), charges="quadrupole"))


def test_quadrupole_charges_raise_the_median(co2, co2_quadrupole):
    """Median ratio 0.65 with tight-binding charges, 0.77 with the measured quadrupole (docs/estimate.md)."""
    assert np.median(_ratios(co2_quadrupole)) > np.median(_ratios(co2)) + 0.08
    assert all(0.5 < r < 2.0 for r in _ratios(co2_quadrupole))


@pytest.mark.xfail(strict=True, reason="with the measured quadrupole the CO2 librations are still about 25 % low")
def test_lattice_modes_median_within_20_percent_quadrupole_charges(co2_quadrupole):
    assert abs(np.median(_ratios(co2_quadrupole)) - 1) < 0.2


@pytest.fixture(scope="module")
def co2_distributed(structures_dir, tmp_path_factory):
    cache = tmp_path_factory.mktemp("hessians")
    return estimate(structures_dir / "co2_Pa-3.cif", model=EstimateOptions(cache=str(cache), charges="distributed"))


def test_distributed_charges_raise_the_median_and_keep_the_nu2_splitting(co2_quadrupole, co2_distributed):
    """Median 0.77 -> 0.80 (docs/estimate.md); nu2 doublet 654.7 / 659.8 cm-1 (Osberg and Hornig 1952, from memory).

    The bond sites follow the atoms so that the dipole derivatives are those of the
    tight-binding charges: the nu2 splitting stays within a factor 2 of the measured one
    (the quadrupole-scaled charges triple it).
    """
    ratios = _ratios(co2_distributed)
    assert np.median(ratios) > np.median(_ratios(co2_quadrupole)) + 0.02
    assert all(0.5 < r < 2.0 for r in ratios)
    nu2 = next(b for b in co2_distributed.bands if b.band == "nu2")
    tu = [w for s, w in nu2.components if s == "Tu"]
    assert 0.5 < (max(tu) - min(tu)) / NU2_SPLITTING < 2.0


@pytest.mark.xfail(
    strict=True,
    reason="with distributed charges (measured quadrupole, published hexadecapole) the CO2 median is 0.80, "
    "just outside 20 %: the librations are still 20-27 % low",
)
def test_lattice_modes_median_within_20_percent_distributed_charges(co2_distributed):
    assert abs(np.median(_ratios(co2_distributed)) - 1) < 0.2


def test_nu2_factor_group_splitting_of_the_right_size(co2):
    """Osberg and Hornig (1952): IR doublet 654.7 / 659.8 cm-1 (from memory); goal: within a factor 2."""
    nu2 = next(b for b in co2.bands if b.band == "nu2")
    tu = [w for s, w in nu2.components if s == "Tu"]
    split = max(tu) - min(tu)
    assert 0.5 < split / NU2_SPLITTING < 2.0


def test_librations_below_translations_ordering(co2):
    """The lowest Raman line (Eg libration) lies below the highest IR translation (both measured)."""
    eg = next(line for line in co2.lines if line.species == "Eg" and line.origin == "librational")
    tu = max(line.wavenumber_cm1 for line in co2.lines if line.species == "Tu" and line.origin == "translational")
    assert eg.wavenumber_cm1 < tu


#: naphthalene Raman lattice modes (cm-1), source in the module docstring (from memory)
NAPHTHALENE_RAMAN = [46.0, 51.0, 71.0, 74.0, 109.0, 125.0]


@pytest.fixture(scope="module")
def naphthalene(structures_dir, tmp_path_factory):
    cache = tmp_path_factory.mktemp("hessians")
    return estimate(structures_dir / "naphthalene_P21a.cif", model=EstimateOptions(cache=str(cache)))


def _naphthalene_ratios(est) -> list[float]:
    mine = sorted(ln.wavenumber_cm1 for ln in est.lattice_lines() if "Raman" in ln.activity)
    assert len(mine) == len(NAPHTHALENE_RAMAN)  # 3 Ag + 3 Bg librations (the engine's count)
    return [m / s for m, s in zip(mine, NAPHTHALENE_RAMAN, strict=True)]


def test_naphthalene_raman_lattice_modes_median_within_20_percent(naphthalene):
    """Suzuki, Yokoyama and Ito (1968), from memory; goal: median within 20 %."""
    ratios = _naphthalene_ratios(naphthalene)
    assert abs(np.median(ratios) - 1) < 0.2, ratios
    assert all(0.5 < r < 2.0 for r in ratios), ratios


def test_spread_over_the_sets_that_cover_the_crystal(co2, naphthalene):
    """The CO2 sets enter the spread of CO2 only, and the default output points to them there."""
    assert "'gavezzotti'" in naphthalene.uncertainty_rule and "epm2" not in naphthalene.uncertainty_rule
    assert "'epm2', 'trappe'" in co2.uncertainty_rule and "gavezzotti" not in co2.uncertainty_rule
    assert any("sets fitted to it" in w and "epm2 or trappe" in w for w in co2.warnings)
    assert not any("sets fitted to it" in w for w in naphthalene.warnings)


def test_naphthalene_raman_lattice_modes_are_librations(naphthalene):
    raman = [ln for ln in naphthalene.lattice_lines() if "Raman" in ln.activity]
    assert sorted(ln.species for ln in raman) == ["Ag", "Ag", "Ag", "Bg", "Bg", "Bg"]
    assert {ln.origin for ln in raman} == {"librational"}
