"""The command line's contract: one error line, one table of exit codes, numbers checked on entry.

Reproducers R23 (standard output on /dev/full), R31 (usage errors, ``group -43m``) and R33
(``molecule --tolerance inf``) of the bad-input collection are named in the tests below.
"""

from __future__ import annotations

import re
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from splitting import errors
from splitting.cli import build_parser

ROOT = Path(__file__).resolve().parents[1]
CALCITE = ROOT / "structures" / "calcite.cif"
H2O = ROOT / "structures" / "molecules" / "h2o.xyz"


def _commands() -> dict:
    sub = next(a for a in build_parser()._actions if a.dest == "command")
    return dict(sub.choices)


def _one_error_line(code: int, out: str, err: str, expected: int = 2) -> str:
    assert code == expected, err
    assert out == ""
    assert err.startswith("error: ") and err.count("\n") == 1, err
    assert "Traceback" not in err and "usage:" not in err
    return err


# ---- the table ------------------------------------------------------------------------


def test_exit_code_page_matches_the_table() -> None:
    text = (ROOT / "docs" / "exit-codes.md").read_text(encoding="utf-8")
    rows = dict(re.findall(r"^\| (\d+) \| ([^|]+?) \|", text, flags=re.M))
    assert {int(k): v for k, v in rows.items()} == errors.EXIT_CODES


def test_every_error_class_has_a_code_of_the_table() -> None:
    classes = [errors.SplittingError, *errors.SplittingError.__subclasses__(), errors.BookkeepingError]
    assert {c.exit_code for c in classes} <= set(errors.EXIT_CODES)


@pytest.mark.parametrize("command", sorted(_commands()))
def test_every_command_keeps_to_the_table(command: str, run_cli, tmp_path: Path) -> None:
    """Each command: --help is 0; an unknown option and a missing file are bad input (2), one line."""
    code, out, _ = run_cli([command, "--help"])
    assert code == 0 and out.startswith("usage:")
    _one_error_line(*run_cli([command, "--no-such-option"]))
    special = {"group": ["D4h", "--to", "Xyz"], "demo": ["--out", str(CALCITE)]}
    argv = [command, *special.get(command, ["/nonexistent/structure.cif"])]
    if command in ("draw", "report"):
        argv += ["-o", str(tmp_path / ("out.svg" if command == "draw" else "out.html"))]
    if command == "screen":
        argv += ["-o", str(tmp_path / "out")]
    if command == "explain":
        argv += ["--peaks", "/nonexistent/peaks.csv"]
    code, out, err = run_cli(argv)
    expected = 6 if command == "demo" else 2  # demo --out names an existing file: an output problem
    _one_error_line(code, out, err, expected)
    assert not any(tmp_path.iterdir())


def test_an_unknown_subgroup_is_bad_input_not_no_answer(run_cli) -> None:
    """``group D4h --to C3v`` used to exit 3 while every other unknown name exited 2."""
    for to in ("C3v", "Xyz"):
        err = _one_error_line(*run_cli(["group", "D4h", "--to", to]))
        assert to in err


# ---- R31: usage errors --------------------------------------------------------------------


def test_R31_usage_errors_are_one_line(run_cli) -> None:
    err = _one_error_line(*run_cli(["predict", "--tolerance", "abc", "x.cif"]))
    assert "--tolerance" in err and "'abc' is not a number" in err
    err = _one_error_line(*run_cli(["group"]))
    assert "symbol" in err
    err = _one_error_line(*run_cli(["frobnicate"]))
    assert "frobnicate" in err


@pytest.mark.parametrize(("symbol", "name"), [("-43m", "Td"), ("-3m", "D3d"), ("-6m2", "D3h"), ("-1", "Ci")])
def test_R31_group_takes_symbols_starting_with_a_minus(symbol: str, name: str, run_cli) -> None:
    code, out, err = run_cli(["group", symbol])
    assert code == 0, err
    assert out.startswith(f"Point group {name}")
    code, out, err = run_cli(["group", "--json", symbol])
    assert code == 0, err


# ---- R33 and every numeric option ---------------------------------------------------------

BAD_NUMBERS = ["nan", "inf", "-inf", "-1", "0", "1e6", "abc", ""]

NUMERIC = [
    (["predict", CALCITE], "--tolerance", BAD_NUMBERS),
    (["predict", CALCITE], "--unit-tolerance", BAD_NUMBERS),
    (["predict", CALCITE], "--bond-scale", BAD_NUMBERS),
    (["predict", CALCITE], "--max-atoms", ["0", "-5", "1.5", "1e300", "nan", "abc"]),
    (["predict", CALCITE], "--max-input-mb", ["0", "-1", "inf", "nan", "1e300"]),
    (["molecule", H2O], "--tolerance", BAD_NUMBERS),
    (["explain", CALCITE, "--peaks", CALCITE], "--window", BAD_NUMBERS),
    (["lower", CALCITE], "--max-index", ["1", "1e12", "2.5", "nan"]),
    (["estimate", CALCITE], "--cutoff", BAD_NUMBERS),
    (["estimate", CALCITE, "--spectra", "x.json"], "--width", BAD_NUMBERS),
    (["screen", CALCITE, "-o", "/nonexistent/out"], "--workers", ["0", "-1", "1e6", "1.5"]),
    (["screen", CALCITE, "-o", "/nonexistent/out"], "--timeout", ["-1", "inf", "nan"]),
    (["screen", CALCITE, "-o", "/nonexistent/out"], "--memory", ["-1", "1e300", "0.5"]),
    (["screen", CALCITE, "-o", "/nonexistent/out"], "--part-size", ["0", "1e9"]),
]


@pytest.mark.parametrize(
    ("argv", "option", "value"),
    [(argv, opt, v) for argv, opt, values in NUMERIC for v in values],
    ids=[f"{argv[0]}{opt}={v}" for argv, opt, values in NUMERIC for v in values],
)
def test_numeric_options_are_range_checked(argv, option: str, value: str, run_cli) -> None:
    err = _one_error_line(*run_cli([*argv, f"{option}={value}"]))
    assert option in err and ("out of range" in err or "not a" in err)


@pytest.mark.parametrize("value", ["inf", "1e6"])
def test_R33_molecule_refuses_an_absurd_tolerance(value: str, run_cli, structures_dir: Path) -> None:
    for name in ("c60.xyz", "h2o.xyz"):
        err = _one_error_line(*run_cli(["molecule", structures_dir / "molecules" / name, "--tolerance", value]))
        assert "out of range" in err


def test_R33_the_library_refuses_an_absurd_tolerance_too() -> None:
    from splitting.errors import InputError
    from splitting.molecule.symmetry import find_symmetry

    for tol in (float("inf"), float("nan"), 1e6, 0.0, -1.0):
        with pytest.raises(InputError, match="out of range"):
            find_symmetry([8, 1, 1], [[0, 0, 0.12], [0, 0.76, -0.47], [0, -0.76, -0.47]], tolerance=tol)


# ---- --version, python -m, standard output ------------------------------------------------


def test_version(run_cli) -> None:
    import splitting

    code, out, _ = run_cli(["--version"])
    assert code == 0 and out == f"splitting {splitting.__version__}\n"
    proc = subprocess.run([sys.executable, "-m", "splitting", "--version"], capture_output=True, text=True)
    assert proc.returncode == 0 and proc.stdout.startswith("splitting ")


@pytest.mark.skipif(not Path("/dev/full").exists(), reason="needs /dev/full")
def test_R23_standard_output_on_dev_full(tmp_path: Path) -> None:
    """stdout that cannot be written: one line, exit 6; a figure written before stays whole."""
    cmd = [sys.executable, "-m", "splitting"]
    with open("/dev/full", "w") as full:
        proc = subprocess.run([*cmd, "predict", str(CALCITE)], stdout=full, stderr=subprocess.PIPE, text=True)
        assert proc.returncode == 6
        assert proc.stderr.startswith("error: ") and proc.stderr.count("\n") == 1, proc.stderr
        assert "standard output" in proc.stderr
        figure = tmp_path / "kept.svg"
        proc = subprocess.run(
            [*cmd, "draw", str(CALCITE), "-o", str(figure)], stdout=full, stderr=subprocess.PIPE, text=True
        )
    assert proc.returncode == 6 and proc.stderr.count("\n") == 1, proc.stderr
    assert ET.parse(figure).getroot().tag.endswith("svg")


def test_a_pipe_closed_early_is_not_an_error() -> None:
    with subprocess.Popen(
        [sys.executable, "-m", "splitting", "group", "Oh"], stdout=subprocess.PIPE, stderr=subprocess.PIPE
    ) as proc:
        proc.stdout.read(5)
        proc.stdout.close()
        err = proc.stderr.read().decode()
        assert proc.wait() == 0 and err == ""


class _FailingStream:
    def __init__(self, exc: OSError):
        self.exc = exc

    def write(self, text: str) -> int:
        raise self.exc

    def flush(self) -> None:
        raise self.exc


@pytest.mark.parametrize(
    ("exc", "code"),
    [(BrokenPipeError(32, "Broken pipe"), 0), (OSError(28, "No space left on device"), 6), (OSError(5, "EIO"), 6)],
)
def test_failing_standard_output_in_process(exc: OSError, code: int, monkeypatch, capsys) -> None:
    from splitting.cli import main

    monkeypatch.setattr(sys, "stdout", _FailingStream(exc))
    assert main(["group", "Oh"]) == code
    err = capsys.readouterr().err
    assert err == "" if code == 0 else err.startswith("error: cannot write to standard output") and err.count("\n") == 1


@pytest.mark.parametrize(
    ("argv", "says"),
    [
        (
            ["predict", "--foo", str(CALCITE)],
            "error: predict: unrecognized arguments: --foo (see 'splitting predict --help')",
        ),
        (["group", "D4h", "extra"], "error: group: unrecognized arguments: extra (see 'splitting group --help')"),
        (["predict", "--tolerance", "abc", "x.cif"], "error: predict: --tolerance: 'abc' is not a number"),
        (["group"], "error: group: the following arguments are required: symbol (see 'splitting group --help')"),
        (["frobnicate"], "error: COMMAND: invalid choice: 'frobnicate'"),
    ],
)
def test_R31_usage_errors_name_the_command_and_where_help_is(argv, says: str, run_cli) -> None:
    err = _one_error_line(*run_cli(argv))
    assert err.startswith(says), err
    assert err.rstrip().endswith("--help')"), err


def test_usage_errors_give_lengths_in_angstrom(run_cli) -> None:
    err = _one_error_line(*run_cli(["predict", str(CALCITE), "--tolerance", "9"]))
    assert "at most 0.5 Å" in err and " A " not in err
    err = _one_error_line(*run_cli(["estimate", str(CALCITE), "--cutoff", "0"]))
    assert "Å (the lattice-sum cut-off)" in err


@pytest.mark.skipif(not Path("/dev/full").exists(), reason="needs /dev/full")
@pytest.mark.parametrize("argv", [["--version"], ["--help"], ["predict", "--help"]])
def test_R23_version_and_help_on_dev_full(argv: list[str]) -> None:
    """--version and --help print before any command runs: a full stdout is still one line, exit 6."""
    with open("/dev/full", "w") as full:
        proc = subprocess.run(
            [sys.executable, "-m", "splitting", *argv], stdout=full, stderr=subprocess.PIPE, text=True
        )
    assert proc.returncode == 6, proc.stderr
    assert proc.stderr == "error: cannot write to standard output: no space left on the device\n"


@pytest.mark.parametrize(
    "argv", [["--version"], ["--help"], ["predict", "--help"], ["group", "Oh"], ["predict", str(CALCITE)]]
)
def test_closed_standard_output_is_one_line(argv: list[str]) -> None:
    proc = subprocess.run(
        ["sh", "-c", 'exec "$@" >&-', "sh", sys.executable, "-m", "splitting", *argv],
        stderr=subprocess.PIPE,
        text=True,
    )
    assert proc.returncode == 6, proc.stderr
    assert proc.stderr.startswith("error: cannot write to standard output") and proc.stderr.count("\n") == 1


@pytest.mark.parametrize(
    "argv",
    [["molecule", H2O, "--tolerance", "1e-300"], ["predict", CALCITE, "--unit-tolerance", "1e-300"]],
    ids=["molecule", "predict"],
)
def test_a_tolerance_below_the_coordinates_precision_is_one_line(argv, run_cli) -> None:
    """Found by the fuzz corpus: no trial rotation left at 1e-300 Å was an internal error."""
    err = _one_error_line(*run_cli(argv), expected=3)
    assert "not even the identity" in err and "1e-300 Å" in err
