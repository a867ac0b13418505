"""``splitting estimate`` on bad input and the command's outputs: one line on stderr, never a traceback."""

from __future__ import annotations

import json

import numpy as np
import pytest


@pytest.fixture
def cache(tmp_path):
    folder = tmp_path / "cache"
    folder.mkdir()
    return folder


def _one_error_line(code: int, out: str, err: str) -> str:
    assert code != 0
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: "), err
    assert "Traceback" not in err
    return lines[0]


def test_text_output(run_cli, structures_dir, cache):
    code, out, err = run_cli(["estimate", structures_dir / "co2_Pa-3.cif", "--cache", cache])
    assert code == 0, err
    assert "model: harmonic k = 0 lattice dynamics" in out
    assert "librational (CO2)" in out and "nu2 of CO2" in out
    assert "factor-group splitting" in out


def test_json_and_progress(run_cli, structures_dir, cache):
    code, out, err = run_cli(["estimate", structures_dir / "co2_Pa-3.cif", "--cache", cache, "--json", "--progress"])
    assert code == 0
    data = json.loads(out)
    assert data["factor_group"] == "Th"
    assert {line["origin"] for line in data["lines"]} == {"acoustic", "translational", "librational", "internal"}
    assert "free-unit Hessian" in err


def test_element_not_covered(run_cli, structures_dir, cache):
    line = _one_error_line(*run_cli(["estimate", structures_dir / "nh4cl_ordered_P-43m.cif", "--cache", cache]))
    assert "element Cl" in line and "unit Cl" in line


def test_parameter_set_without_oxygen(run_cli, structures_dir, cache):
    argv = ["estimate", structures_dir / "co2_Pa-3.cif", "--potential", "gavezzotti", "--cache", cache]
    line = _one_error_line(*run_cli(argv))
    assert "element O" in line and "gavezzotti" in line


def test_far_from_equilibrium(run_cli, structures_dir, cache, tmp_path):
    """Molecule centres moved apart by 30 % (C=O kept): imaginary translations, refused."""
    from ase.io import write

    from splitting.crystal.read import load_structure

    atoms = load_structure(structures_dir / "co2_Pa-3.cif")
    carbon = atoms.positions[atoms.numbers == 6]
    a = atoms.cell[0, 0]
    pos = atoms.positions.copy()
    for i, p in enumerate(atoms.positions):
        d = p - carbon
        d -= np.round(d / a) * a
        k = int(np.argmin(np.linalg.norm(d, axis=1)))
        pos[i] = carbon[k] * 1.3 + d[k]
    atoms.set_cell(atoms.cell[:] * 1.3, scale_atoms=False)
    atoms.positions = pos
    path = tmp_path / "expanded.cif"
    write(path, atoms)
    line = _one_error_line(*run_cli(["estimate", path, "--cache", cache]))
    assert "unit CO2" in line and "imaginary" in line and "--allow-imaginary" in line
    code, out, _err = run_cli(["estimate", path, "--cache", cache, "--allow-imaginary"])
    assert code == 0 and "imaginary" in out


@pytest.mark.parametrize(
    ("extra", "words"),
    [
        (["--charge", "CO2"], "FORMULA=Q"),
        (["--charge", "CO2=one"], "FORMULA=Q"),
        (["--cutoff", "-3"], "cut-off"),
        (["--cache", "/nonexistent/folder"], "no such folder"),
        (["--charge", "CO2=1"], "add up to"),
    ],
)
def test_bad_options(run_cli, structures_dir, extra, words):
    line = _one_error_line(*run_cli(["estimate", structures_dir / "co2_Pa-3.cif", *extra]))
    assert words in line


def test_tight_binding_failure(monkeypatch):
    """A tight-binding failure names the unit and says what to check."""
    from tblite.interface import Calculator

    from splitting.dynamics.freeunit import free_hessian
    from splitting.errors import InputError

    def fail(self):
        raise RuntimeError("SCF not converged")

    monkeypatch.setattr(Calculator, "singlepoint", fail)
    with pytest.raises(InputError, match="unit N2: the tight-binding calculation did not converge"):
        free_hessian("N2", [7, 7], [[0, 0, 0.55], [0, 0, -0.55]])
