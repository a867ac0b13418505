"""``splitting predict`` on bad input: one clear line on standard error, nothing else.

The promise (splitting/cli/, project rules): exit status not 0, exactly one line on
standard error starting with ``error:``, no traceback, nothing on standard output, and for
problems with a file the message names the file.  The same holds with ``--json``.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Sequence
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
STRUCTURES = ROOT / "structures"
BAD = STRUCTURES / "bad"

Runner = Callable[[Sequence[str]], tuple[int, str, str]]

WATER_XYZ = """3
water, no cell
O 0.000 0.000 0.117
H 0.000 0.757 -0.469
H 0.000 -0.757 -0.469
"""

#: P1 cell with two C atoms 0.1 A apart (invented)
OVERLAP_CIF = """data_overlap
_cell_length_a 5.0
_cell_length_b 5.0
_cell_length_c 5.0
_cell_angle_alpha 90
_cell_angle_beta 90
_cell_angle_gamma 90
_space_group_IT_number 1
_space_group_name_H-M_alt 'P 1'
loop_
_space_group_symop_operation_xyz
'x,y,z'
loop_
_atom_site_label
_atom_site_type_symbol
_atom_site_fract_x
_atom_site_fract_y
_atom_site_fract_z
C1 C 0.10 0.10 0.10
C2 C 0.12 0.10 0.10
O1 O 0.50 0.50 0.50
"""

#: POSCAR (VASP 5, Cartesian) with two Na atoms 0.1 A apart (invented)
OVERLAP_POSCAR = """overlapping atoms (invented)
1.0
4.0 0.0 0.0
0.0 4.0 0.0
0.0 0.0 4.0
Na Cl
2 1
Cartesian
0.0 0.0 0.0
0.1 0.0 0.0
2.0 2.0 2.0
"""

#: the two atoms touch only through the periodic boundary: 0.02 + 0.01 of 5 A = 0.15 A apart
OVERLAP_ACROSS_BOUNDARY_POSCAR = """overlap across the cell boundary (invented)
1.0
5.0 0.0 0.0
0.0 5.0 0.0
0.0 0.0 5.0
K Br
2 1
Direct
0.01 0.5 0.5
0.98 0.5 0.5
0.5 0.0 0.0
"""


def assert_one_error_line(code: int, out: str, err: str, *, names: str | None = None) -> str:
    """The CLI error promise; returns the message."""
    assert code != 0
    assert out == ""
    assert "Traceback" not in err
    lines = err.splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("error: "), err
    # a handled error, not the catch-all for bugs (exit 70, "internal error")
    assert "internal error" not in lines[0] and code != 70, err
    if names is not None:
        assert names in lines[0], err
    return lines[0]


def _write(tmp_path: Path, name: str, text: str) -> Path:
    path = tmp_path / name
    path.write_text(text)
    return path


@pytest.fixture
def bad_files(tmp_path: Path) -> dict[str, Path]:
    """Every kind of bad structure file, bundled or written here."""
    return {
        "malformed cif": BAD / "malformed.cif",
        "partial occupancy": BAD / "partial_occupancy_no_model.cif",
        "disordered C60": STRUCTURES / "c60_fcc_Fm-3m_disordered.cif",
        "disordered NH4Cl": STRUCTURES / "nh4cl_disordered_Pm-3m.cif",
        "overlap cif": _write(tmp_path, "overlap.cif", OVERLAP_CIF),
        "overlap poscar": _write(tmp_path, "POSCAR", OVERLAP_POSCAR),
        "overlap across boundary": _write(tmp_path, "boundary.vasp", OVERLAP_ACROSS_BOUNDARY_POSCAR),
        "xyz molecule": _write(tmp_path, "water.xyz", WATER_XYZ),
        "cif without cell": BAD / "molecule_no_cell.cif",
        "bundled free molecule": STRUCTURES / "molecules" / "c60.xyz",
        "overlapping xyz": BAD / "overlapping.xyz",
        "single atom": BAD / "single_atom.xyz",
        "empty": BAD / "empty.xyz",
        "missing": tmp_path / "does_not_exist.cif",
        "folder": STRUCTURES,
        "not a structure": _write(tmp_path, "notes.txt", "these are notes, not atoms\n"),
        "binary junk": tmp_path / "junk.cif",
    }


KINDS = [
    "malformed cif",
    "partial occupancy",
    "disordered C60",
    "disordered NH4Cl",
    "overlap cif",
    "overlap poscar",
    "overlap across boundary",
    "xyz molecule",
    "cif without cell",
    "bundled free molecule",
    "overlapping xyz",
    "single atom",
    "empty",
    "missing",
    "folder",
    "not a structure",
    "binary junk",
]


@pytest.mark.parametrize("json_flag", [False, True], ids=["text", "json"])
@pytest.mark.parametrize("kind", KINDS)
def test_bad_file(kind: str, json_flag: bool, bad_files: dict[str, Path], run_cli: Runner) -> None:
    path = bad_files[kind]
    if kind == "binary junk":
        path.write_bytes(bytes(range(256)) * 4)
    argv = ["predict", str(path)] + (["--json"] if json_flag else [])
    code, out, err = run_cli(argv)
    # the message names the file (its name; the folder by its path)
    assert_one_error_line(code, out, err, names=path.name)


@pytest.mark.parametrize(
    "kind, words",
    [
        ("partial occupancy", "partial occupancy"),
        ("disordered C60", "partial occupancy"),
        ("overlap cif", "overlap"),
        ("overlap poscar", "overlap"),
        ("overlap across boundary", "overlap"),
        ("xyz molecule", "periodic cell"),
        ("cif without cell", "periodic cell"),
        ("missing", "no such file"),
        ("folder", "folder"),
        ("empty", "empty"),
        ("malformed cif", "not a readable CIF (line 7"),
    ],
)
def test_bad_file_says_what_is_wrong(kind: str, words: str, bad_files: dict[str, Path], run_cli: Runner) -> None:
    message = assert_one_error_line(*run_cli(["predict", bad_files[kind]]))
    assert words in message


def test_overlap_message_gives_the_distance(bad_files: dict[str, Path], run_cli: Runner) -> None:
    message = assert_one_error_line(*run_cli(["predict", bad_files["overlap poscar"]]))
    assert "0.100" in message  # the two Na atoms are 0.1 A apart (as written above)
    message = assert_one_error_line(*run_cli(["predict", bad_files["overlap across boundary"]]))
    assert "0.150" in message  # 0.03 x 5 A through the boundary


@pytest.mark.parametrize(
    "options",
    [
        ["--tolerance", "-1"],
        ["--tolerance", "0"],
        ["--unit-tolerance", "0"],
        ["--bond-scale", "-0.5"],
        ["--bond", "C-O"],
        ["--bond", "C-O=abc"],
        ["--bond", "CO=1.2"],
        ["--free-group", "CO3"],
        ["--free-group", "CO3=Xyz"],
        ["--free-group", "CO3=Oh"],  # not a subgroup of what the shape of CO3 allows
        ["--units", "SO4"],
    ],
    ids=lambda o: " ".join(o),
)
def test_bad_options(options: list[str], run_cli: Runner) -> None:
    assert_one_error_line(*run_cli(["predict", STRUCTURES / "calcite.cif", *options]))


def test_argparse_errors_keep_stdout_empty(run_cli: Runner) -> None:
    code, out, err = run_cli(["predict"])  # no file: argparse usage error
    assert code == 2 and out == ""
    assert "error:" in err and "Traceback" not in err


@pytest.mark.parametrize("kind", ["partial occupancy", "disordered C60", "overlap cif"])
def test_hints_name_options_that_exist(kind: str, bad_files: dict[str, Path], run_cli: Runner) -> None:
    """Every option a message suggests (``--something``) is an option of ``splitting predict``."""
    message = assert_one_error_line(*run_cli(["predict", bad_files[kind]]))
    code, help_text, _ = run_cli(["predict", "--help"])
    assert code == 0
    for option in re.findall(r"--[a-z][a-z-]*", message):
        assert option in help_text, option


def test_partial_occupancy_without_model_also_fails_when_declared_disordered(
    bad_files: dict[str, Path], run_cli: Runner
) -> None:
    # Cl at occupancy 0.5 with nothing completing it: no orientation to pick (invented file)
    message = assert_one_error_line(*run_cli(["predict", bad_files["partial occupancy"], "--disordered"]))
    assert "partial_occupancy_no_model.cif" in message
