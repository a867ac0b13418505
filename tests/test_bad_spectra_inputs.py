"""Bad measured-spectrum inputs: devices, JCAMP-DX headers and data lines, mode tables, figures.

Each test names the reproducer of the bad-input collection it replays (R06, R07, R17, R18,
R19, R20, R28). Every failure is one line ``error: ...`` and exit status 2 (docs/exit-codes.md).
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parents[1]
CALCITE = ROOT / "structures" / "calcite.cif"

JCAMP_HEAD = """##TITLE=invented test spectrum (not a measurement)
##JCAMP-DX=4.24
##DATA TYPE=RAMAN SPECTRUM
##XUNITS=1/CM
##YUNITS=ARBITRARY UNITS
##XFACTOR=1.0
##YFACTOR=1.0
##FIRSTX=700
##LASTX=660
##NPOINTS={npoints}
##FIRSTY=52
##XYDATA=(X++(Y..Y))
"""
JCAMP_DATA = "700 52 52 52 52 52 52 52 52 53 53\n680 53 53 53 53 54 54 54 54 55 55\n660 56\n##END=\n"


def _one_error_line(code: int, out: str, err: str) -> str:
    assert code == 2, err
    assert out == ""
    assert err.startswith("error: ") and err.count("\n") == 1, err
    assert "internal error" not in err and "Exception" not in err
    return err


def _explain(run_cli, *extra):
    return run_cli(["explain", CALCITE, *extra])


# ---- R06: devices and FIFOs --------------------------------------------------------------


@pytest.mark.parametrize("option", ["--peaks", "--spectrum"])
@pytest.mark.parametrize("device", ["/dev/zero", "/dev/urandom"])
def test_R06_devices_are_refused(option: str, device: str, run_cli) -> None:
    if not Path(device).exists():
        pytest.skip(f"no {device}")
    err = _one_error_line(*_explain(run_cli, option, device))
    assert "not a regular file" in err


@pytest.mark.parametrize(("option", "name"), [("--peaks", "fifo.csv"), ("--spectrum", "fifo.jdx")])
def test_R06_a_fifo_is_refused_without_blocking(option: str, name: str, tmp_path: Path, run_cli) -> None:
    fifo = tmp_path / name
    os.mkfifo(fifo)
    err = _one_error_line(*_explain(run_cli, option, fifo))
    assert "FIFO" in err


def test_R06_the_input_cap_applies_to_spectra(tmp_path: Path, run_cli) -> None:
    big = tmp_path / "big.csv"
    big.write_text("wavenumber,signal\n" + "".join(f"{100 + i * 0.01:.2f},1\n" for i in range(60_000)))
    err = _one_error_line(*_explain(run_cli, "--spectrum", big, "--max-input-mb", "0.5"))
    assert "--max-input-mb" in err


# ---- R07, R18: JCAMP-DX ------------------------------------------------------------------


@pytest.mark.parametrize("npoints", ["300000000", "1000000000000", "1e300", "-5", "lots"])
def test_R07_an_absurd_npoints_is_refused_before_reading(npoints: str, tmp_path: Path, run_cli) -> None:
    f = tmp_path / "npoints.jdx"
    f.write_text(JCAMP_HEAD.format(npoints=npoints) + JCAMP_DATA)
    err = _one_error_line(*_explain(run_cli, "--spectrum", f))
    assert "##NPOINTS" in err


def test_R07_memory_stays_bounded() -> None:
    """The 2 KB file claiming 3e8 points once took 2.4 GB; now it is refused in bounded memory."""
    f = Path("/work/shared/bad-inputs/R07_jcamp_npoints/npoints_3e8.jdx")
    if not f.exists():
        pytest.skip("reproducer folder not present")
    from splitting.errors import InputError
    from splitting.spectra.measured import read_spectrum

    with pytest.raises(InputError, match="NPOINTS"):
        read_spectrum(f)


@pytest.mark.parametrize("garbage", ["680 53 53 # 53\n", "680 53 ]]]] \x7f\n", "680 53 53 53 [ 54\n"])
def test_R18_unknown_characters_in_a_data_line(garbage: str, tmp_path: Path, run_cli) -> None:
    f = tmp_path / "garbage.jdx"
    f.write_text(JCAMP_HEAD.format(npoints=21) + "700 52 52 52 52 52 52 52 52 53 53\n" + garbage + "##END=\n")
    err = _one_error_line(*_explain(run_cli, "--spectrum", f))
    assert str(f) in err


# ---- R17: a spectrum of a million points ---------------------------------------------------


def test_R17_the_baseline_of_a_fine_long_spectrum_is_fitted() -> None:
    """1e6 points (a step of 0.004 cm-1) once made the banded ALS system unsolvable (LinAlgError)."""
    from splitting.spectra.peaks import _baseline

    x = np.linspace(100.0, 4000.0, 1_000_000)
    truth = 0.5 + 1e-4 * x
    y = truth + np.exp(-(((x - 1085.0) / 3.0) ** 2))
    z = _baseline(x, y, "als")
    assert z.shape == y.shape and np.all(np.isfinite(z))
    far = np.abs(x - 1085.0) > 50
    assert np.max(np.abs(z - truth)[far]) < 0.02


def test_R17_a_long_spectrum_finds_its_bands() -> None:
    from splitting.spectra.measured import Spectrum
    from splitting.spectra.peaks import find_peaks

    x = np.linspace(100.0, 2000.0, 300_000)
    y = 0.5 + 1e-4 * x + np.exp(-(((x - 1085.0) / 3.0) ** 2)) + 0.5 * np.exp(-(((x - 712.0) / 2.0) ** 2))
    found = find_peaks(Spectrum(x, y, source="invented"))
    pos = sorted(p.position_cm1 for p in found.peaks)
    assert any(abs(p - 1085.0) < 0.5 for p in pos) and any(abs(p - 712.0) < 0.5 for p in pos)


# ---- R19: a mode table nested too deeply ---------------------------------------------------


def test_R19_deeply_nested_mode_table(tmp_path: Path, run_cli) -> None:
    table = tmp_path / "deep.toml"
    table.write_text("a = " + "[" * 5000 + "]" * 5000 + "\n")
    peaks = ROOT / "tests" / "data" / "spectra" / "invented_peaks_raman.csv"
    err = _one_error_line(*_explain(run_cli, "--peaks", peaks, "--modes", table))
    assert "nested" in err


# ---- R20, R28: figures ---------------------------------------------------------------------


def test_R20_huge_intensities_are_drawn(tmp_path: Path, run_cli) -> None:
    peaks = tmp_path / "huge.csv"
    peaks.write_text("position,intensity\n1085,1e308\n712,1e308\n")
    out = tmp_path / "out.svg"
    code, _, err = _explain(run_cli, "--peaks", peaks, "-o", out)
    assert code == 0, err
    assert out.read_text().lstrip().startswith("<?xml")


def test_R28_a_pdf_figure_prints_nothing_on_stderr(tmp_path: Path) -> None:
    out = tmp_path / "x.pdf"
    proc = subprocess.run(
        [sys.executable, "-m", "splitting", "draw", str(CALCITE), "-o", str(out)], capture_output=True, text=True
    )
    assert proc.returncode == 0, proc.stderr
    assert proc.stderr == ""
    assert out.read_bytes()[:5] == b"%PDF-"


def test_a_bad_jcamp_header_value_is_said_in_plain_words(tmp_path: Path, run_cli) -> None:
    f = tmp_path / "header.jdx"
    f.write_text(JCAMP_HEAD.format(npoints=21).replace("##FIRSTX=700", "##FIRSTX=abc") + JCAMP_DATA)
    err = _one_error_line(*_explain(run_cli, "--spectrum", f))
    assert "operand" not in err and "str'" not in err and "JCAMP-DX" in err
