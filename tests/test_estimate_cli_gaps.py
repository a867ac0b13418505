"""Every command with ``--estimate`` takes the model's choices, and its errors name options it has."""

from __future__ import annotations

import json

import numpy as np
import pytest


@pytest.fixture(scope="module")
def expanded_co2(tmp_path_factory, structures_dir):
    """CO2 with the molecule centres moved apart by 30 % (C=O kept): imaginary translations."""
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
    path = tmp_path_factory.mktemp("expanded") / "expanded.cif"
    write(path, atoms)
    return path


@pytest.fixture(scope="module")
def cache(tmp_path_factory):
    return tmp_path_factory.mktemp("gaps-cache")


def _one_error_line(code: int, out: str, err: str) -> str:
    assert code != 0 and out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: ") and "Traceback" not in err, err
    return lines[0]


def test_predict_imaginary_names_options_predict_has(run_cli, expanded_co2, cache):
    line = _one_error_line(*run_cli(["predict", expanded_co2, "--estimate", "--cache", cache]))
    assert "unit CO2" in line and "--allow-imaginary" in line
    code, out, err = run_cli(["predict", expanded_co2, "--estimate", "--cache", cache, "--allow-imaginary", "--json"])
    assert code == 0, err
    assert any(line["wavenumber_cm1"] < 0 for line in json.loads(out)["estimate"]["lines"])


@pytest.mark.parametrize("command", ["predict", "explain", "report", "draw"])
def test_model_choices_without_estimate_are_refused(run_cli, structures_dir, tmp_path, command):
    co2 = structures_dir / "co2_Pa-3.cif"
    tail = {
        "explain": ["--peaks", tmp_path / "p.csv"],
        "report": ["-o", tmp_path / "r.html"],
        "draw": ["--kind", "lines", "-o", tmp_path / "d.svg"],
    }.get(command, [])
    line = _one_error_line(*run_cli([command, co2, *tail, "--potential", "gavezzotti"]))
    assert "--potential" in line and "--estimate" in line


def test_model_choices_reach_the_estimate(run_cli, structures_dir, cache):
    co2 = structures_dir / "co2_Pa-3.cif"
    code, out, err = run_cli(
        ["predict", co2, "--estimate", "--cache", cache, "--coulomb", "dsf", "--cutoff", "10", "--json", "--progress"]
    )
    assert code == 0, err
    est = json.loads(out)["estimate"]
    assert "damped shifted-force" in est["model"] and est["cutoff_angstrom"] == 10
    assert err.startswith("... ")


def test_compare_progress(run_cli, structures_dir, cache):
    co2 = structures_dir / "co2_Pa-3.cif"
    code, _out, err = run_cli(["compare", co2, co2, "--estimate", "--cache", cache, "--progress"])
    assert code == 0 and "... " in err


def test_element_not_covered_says_what_to_do(run_cli, structures_dir, cache):
    line = _one_error_line(*run_cli(["predict", structures_dir / "nh4cl_ordered_P-43m.cif", "--estimate"]))
    assert "unit Cl" in line and "element Cl" in line and "without --estimate" in line


@pytest.mark.parametrize("command", ["estimate", "predict"])
def test_tight_binding_failure_from_the_command_line(run_cli, structures_dir, tmp_path, monkeypatch, command):
    """No cache: the free-unit calculation runs and fails; one line naming the unit and what to check."""
    from tblite.interface import Calculator

    def fail(self):
        raise RuntimeError("SCF not converged")

    monkeypatch.setattr(Calculator, "singlepoint", fail)
    argv = [command, structures_dir / "co2_Pa-3.cif", "--cache", tmp_path]
    line = _one_error_line(*run_cli(argv if command == "estimate" else [*argv, "--estimate"]))
    assert "unit CO2" in line and "did not converge" in line and "charge" in line


def test_charges_that_do_not_add_up_name_the_units(run_cli, structures_dir, cache):
    argv = ["estimate", structures_dir / "co2_Pa-3.cif", "--cache", cache, "--charge", "CO2=1"]
    line = _one_error_line(*run_cli(argv))
    assert "CO2 +1 (x4)" in line and "--charge FORMULA=Q" in line


def test_lattice_only_text_leaves_out_every_internal_line(run_cli, structures_dir, cache):
    code, out, err = run_cli(["estimate", structures_dir / "co2_Pa-3.cif", "--cache", cache, "--lattice-only"])
    assert code == 0, err
    assert "librational (CO2)" in out and "nu2" not in out and "band splitting" not in out


def test_lattice_only_with_json_is_refused(run_cli, structures_dir):
    line = _one_error_line(*run_cli(["estimate", structures_dir / "co2_Pa-3.cif", "--lattice-only", "--json"]))
    assert "--lattice-only" in line
