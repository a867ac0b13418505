"""One model estimate per distinct structure: in the process, and on disk with ``--cache``."""

from __future__ import annotations

import json
import shutil

import pytest


@pytest.fixture
def counted(monkeypatch):
    """Count the calls of the estimate itself behind the cache."""
    import importlib

    module = importlib.import_module("splitting.dynamics.estimate")

    calls = []
    real = module.estimate

    def counting(*args, **kwargs):
        calls.append(args[0])
        return real(*args, **kwargs)

    monkeypatch.setattr(module, "estimate", counting)
    return calls


def test_compare_the_same_file_twice_estimates_once(run_cli, structures_dir, tmp_path, counted):
    co2 = structures_dir / "co2_Pa-3.cif"
    code, out, err = run_cli(["compare", co2, co2, "--estimate", "--cache", tmp_path, "--json"])
    assert code == 0, err
    assert len(counted) == 1
    data = json.loads(out)
    assert len(data["estimates"]) == 2 and data["estimates"][0]["lines"] == data["estimates"][1]["lines"]


def test_a_copy_under_another_name_is_the_same_structure(run_cli, structures_dir, tmp_path, counted):
    copy = tmp_path / "copy.cif"
    shutil.copy(structures_dir / "co2_Pa-3.cif", copy)
    code, out, err = run_cli(["compare", structures_dir / "co2_Pa-3.cif", copy, "--estimate", "--json"])
    assert code == 0, err
    assert len(counted) == 1
    assert json.loads(out)["estimates"][1]["source"] == str(copy)


def test_commands_in_one_process_share_the_estimate(run_cli, structures_dir, tmp_path, counted):
    co2 = structures_dir / "co2_Pa-3.cif"
    assert run_cli(["predict", co2, "--estimate"])[0] == 0
    assert run_cli(["report", co2, "--estimate", "-o", tmp_path / "r.html"])[0] == 0
    assert run_cli(["estimate", co2])[0] == 0
    assert len(counted) == 1


def test_cache_folder_keeps_the_estimate_between_runs(run_cli, structures_dir, tmp_path, counted):
    from splitting.dynamics import memo

    co2 = structures_dir / "co2_Pa-3.cif"
    code, first, _ = run_cli(["estimate", co2, "--cache", tmp_path, "--json"])
    assert code == 0 and len(counted) == 1
    assert len(list(tmp_path.glob("estimate-*.json"))) == 1
    memo.clear()  # as a new process would
    code, again, err = run_cli(["estimate", co2, "--cache", tmp_path, "--json", "--progress"])
    assert code == 0 and len(counted) == 1
    assert "estimate read from the cache" in err
    assert json.loads(again) == json.loads(first)


def test_other_options_or_content_are_not_reused(run_cli, structures_dir, tmp_path, counted):
    from splitting.dynamics import memo

    co2 = structures_dir / "co2_Pa-3.cif"
    assert run_cli(["estimate", co2, "--cache", tmp_path])[0] == 0
    assert run_cli(["estimate", co2, "--cache", tmp_path, "--cutoff", "10"])[0] == 0
    assert run_cli(["estimate", co2, "--cache", tmp_path, "--coulomb", "dsf"])[0] == 0
    assert len(counted) == 3
    edited = tmp_path / "edited.cif"
    edited.write_text((structures_dir / "co2_Pa-3.cif").read_text() + "\n# a comment\n")
    memo.clear()
    assert run_cli(["estimate", edited, "--cache", tmp_path])[0] == 0
    assert len(counted) == 4


def test_a_broken_cache_entry_is_computed_again(run_cli, structures_dir, tmp_path, counted):
    from splitting.dynamics import memo

    co2 = structures_dir / "co2_Pa-3.cif"
    assert run_cli(["estimate", co2, "--cache", tmp_path])[0] == 0
    (entry,) = tmp_path.glob("estimate-*.json")
    entry.write_text("{not json")
    memo.clear()
    code, _out, err = run_cli(["estimate", co2, "--cache", tmp_path])
    assert code == 0, err
    assert len(counted) == 2 and json.loads(entry.read_text())["format"] == 1
