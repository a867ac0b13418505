"""Messages in the user's terms: broken inputs name the file (and line), never a library's words.

Each case below once passed the text of a library's exception to the user (Python's
conversion errors, the TOML, CIF and JCAMP-DX readers, ase, pyarrow); the fuzz corpus
(tests/fuzz_corpus.py) checks the same on every generated case.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from fuzz_corpus import LIBRARY_PHRASES, UNIT_SPELLINGS

ROOT = Path(__file__).resolve().parents[1]
CALCITE = ROOT / "structures" / "calcite.cif"
H2O = ROOT / "structures" / "molecules" / "h2o.xyz"
RAMAN = ROOT / "tests" / "data" / "spectra" / "invented_peaks_raman.csv"
JDX = ROOT / "tests" / "data" / "spectra" / "invented_raman_xydata.jdx"
CARBONATE = ROOT / "splitting" / "data" / "units" / "carbonate.toml"


def _clean(err: str, name: str) -> str:
    line = err.strip()
    assert err.startswith("error: ") and err.count("\n") == 1, err
    assert name in line, line
    found = [p for p in LIBRARY_PHRASES if p in line]
    assert not found, (found, line)
    assert not UNIT_SPELLINGS.search(line), line
    return line


def _toml(text: str) -> bytes:
    return (CARBONATE.read_text(encoding="utf-8") + text).encode()


_CIF = CALCITE.read_text(encoding="utf-8")
_XYZ = (ROOT / "structures" / "calcite.extxyz").read_text(encoding="utf-8")

#: (name, file name, content, command, words the message must hold)
CASES = [
    ("toml-no-equals", "m.toml", _toml("\nname\n"), "modes", "a key must be followed by '= value'"),
    ("toml-bad-value", "m.toml", _toml("\nx = abc\n"), "modes", "neither a number"),
    ("toml-twice", "m.toml", _toml('\nname = "again"\n'), "modes", "given twice"),
    ("toml-unterminated", "m.toml", _toml('\nx = "abc\n'), "modes", "closing quote"),
    ("toml-nested", "m.toml", _toml("a = " + "[" * 3000 + "]" * 3000 + "\n"), "modes", "nested"),
    ("cif-quote", "x.cif", _CIF.replace("_cell_length_a", "_cell_length_a 'abc\n_x", 1).encode(), "predict", "line 1"),
    ("cif-block-twice", "x.cif", (_CIF + "\n" + _CIF).encode(), "predict", "two data blocks are named"),
    ("cif-tag-twice", "x.cif", (_CIF + "\n_cell_length_a 5\n").encode(), "predict", "is given twice"),
    ("cif-symop", "x.cif", _CIF.replace("-z+1/2", "-z+-1/2", 1).encode(), "predict", "-z+-1/2' cannot be read"),
    ("cif-utf16", "x.cif", _CIF.encode("utf-16"), "predict", "UTF-16"),
    ("vasp-latin1", "x.vasp", b"\xe9" + (ROOT / "structures" / "calcite.vasp").read_bytes(), "predict", "UTF-8"),
    (
        "vasp-number",
        "x.vasp",
        (ROOT / "structures" / "calcite.vasp").read_bytes().replace(b"4.", b"x.", 1),
        "predict",
        "",
    ),
    ("extxyz-extra", "x.extxyz", _XYZ.replace("\nCa ", "\nCa 1.0 ", 1).encode(), "predict", "line 3: 5 values"),
    (
        "extxyz-short",
        "x.extxyz",
        "\n".join([*_XYZ.splitlines()[:4], "O 1.0 2.0", *_XYZ.splitlines()[5:]]).encode(),
        "predict",
        "line 5: 3 values",
    ),
    ("xyz-extra", "x.xyz", H2O.read_bytes().replace(b"-0.520318", b"-0.520318 7", 1), "molecule", "line 4: 5 values"),
    ("vasp-short", "x.vasp", b"x\n1.0\n4 0 0\n0 4 0\n", "predict", "does not follow the POSCAR format"),
    ("peaks-utf16", "p.csv", RAMAN.read_text(encoding="utf-8").encode("utf-16"), "peaks", "UTF-16"),
    ("peaks-latin1", "p.csv", RAMAN.read_bytes().replace(b"invented A", b"invent\xe9 A"), "peaks", "line 4"),
    ("spectrum-utf16", "s.jdx", JDX.read_text(encoding="utf-8").encode("utf-16"), "spectrum", "UTF-16"),
    ("spectrum-binary", "s.jdx", bytes(range(256)) * 4, "spectrum", "binary"),
    ("modes-latin1", "m.toml", b"# \xe9\n" + CARBONATE.read_bytes(), "modes", "not UTF-8"),
]


@pytest.mark.parametrize(("label", "name", "data", "kind", "says"), CASES, ids=[c[0] for c in CASES])
def test_broken_input_named_in_its_own_terms(label, name, data, kind, says, tmp_path: Path, run_cli) -> None:
    path = tmp_path / name
    path.write_bytes(data)
    argv = {
        "predict": ["predict", path],
        "molecule": ["molecule", path],
        "peaks": ["explain", CALCITE, "--peaks", path],
        "spectrum": ["explain", CALCITE, "--spectrum", path],
        "modes": ["explain", CALCITE, "--peaks", RAMAN, "--modes", path],
    }[kind]
    code, out, err = run_cli(argv)
    assert code == 2 and out == "", (label, code, err)
    line = _clean(err, str(path))
    assert says in line, line


def test_jcamp_checks_in_the_files_terms() -> None:
    from splitting._reasons import jcamp_reason

    said = jcamp_reason("X-Check failed. Expected value is 340.0 but 334.0 has been calculated.")
    assert said.startswith("a data line starts at x = 340, but the lines before it lead to x = 334")
    assert "Check failed" not in jcamp_reason("Y-Check failed. Last value of previous line is 3 but first value is 4.")
    assert jcamp_reason("something new") == "the data lines do not agree with the header or with each other"


def test_unknown_library_text_never_passes() -> None:
    from splitting._reasons import reason

    assert (
        reason(AssertionError("boom"), "the file does not follow the format") == "the file does not follow the format"
    )
    assert reason(ValueError("could not convert string to float: '1,5'"), "x") == "'1,5' is not a number"
    assert reason(ValueError("invalid literal for int() with base 10: 'a'"), "x") == "'a' is not a whole number"
    assert reason(ValueError("not enough values to unpack (expected 2, got 1)"), "x").startswith("a line has")


def test_parquet_message(tmp_path: Path) -> None:
    from splitting.batch.store import read_metadata
    from splitting.errors import InputError

    other = tmp_path / "x.parquet"
    other.write_bytes(b"PAR1 not really")
    with pytest.raises(InputError) as caught:
        read_metadata(other)
    assert str(other) in str(caught.value)
    assert not [p for p in LIBRARY_PHRASES if p in str(caught.value)]
