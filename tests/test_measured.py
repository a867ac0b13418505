"""Readers of measured peak lists and spectra (splitting.spectra.measured).

All data files used here are invented for the tests (each says so in its header);
the wavelength-to-wavenumber relation (wavenumber/cm-1 = 1e4 / (wavelength/um)
= 1e7 / (wavelength/nm)) is the definition of the wavenumber (common practice).
"""

from __future__ import annotations

import dataclasses
import json
from pathlib import Path

import numpy as np
import pytest

from splitting.errors import InputError
from splitting.spectra.measured import (
    Peak,
    PeakList,
    Spectrum,
    normalise_technique,
    read_peaks,
    read_spectrum,
)

DATA = Path(__file__).parent / "data" / "spectra"


def write(tmp_path: Path, name: str, text: str) -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


# --------------------------------------------------------------------------- dataclasses


def test_peak_list_sorts_and_serialises() -> None:
    pl = PeakList((Peak(1600.0, 1.0, 5.0, "zz"), Peak(800.0, 2.0)), technique="Raman")
    assert pl.technique == "raman"
    assert pl.positions().tolist() == [800.0, 1600.0]
    assert len(pl) == 2
    d = pl.to_dict()
    assert json.loads(json.dumps(d)) == d
    assert d["peaks"][0] == {
        "position_cm1": 800.0,
        "intensity": 2.0,
        "width_cm1": None,
        "polarisation": None,
    }
    with pytest.raises(dataclasses.FrozenInstanceError):
        pl.technique = "ir"  # type: ignore[misc]


def test_spectrum_is_read_only_and_copied() -> None:
    x = np.array([1.0, 2.0, 3.0])
    s = Spectrum(x, [0.0, 1.0, 0.0])
    x[0] = 99.0
    assert s.wavenumber_cm1[0] == 1.0
    with pytest.raises(ValueError):
        s.signal[0] = 5.0
    assert s == Spectrum([1.0, 2.0, 3.0], [0.0, 1.0, 0.0])
    d = s.to_dict()
    assert json.loads(json.dumps(d)) == d


@pytest.mark.parametrize(
    ("x", "y", "match"),
    [
        ([3.0, 2.0, 1.0], [0, 0, 0], "ascending"),
        ([1.0, 2.0], [0, 0], "at least 3"),
        ([1.0, 2.0, 3.0], [0, 0], "must match"),
        ([0.0, 2.0, 3.0], [0, 0, 0], "> 0"),
        ([1.0, 2.0, 3.0], [0, np.nan, 0], "finite"),
    ],
)
def test_spectrum_rejects_bad_arrays(x: list, y: list, match: str) -> None:
    with pytest.raises(InputError, match=match):
        Spectrum(x, y)


def test_technique_names() -> None:
    assert normalise_technique("FTIR") == "ir"
    with pytest.raises(InputError, match="unknown technique"):
        normalise_technique("neutron")


# --------------------------------------------------------------------------- peak lists


def test_read_peaks_csv_with_header_and_comment_technique() -> None:
    pl = read_peaks(DATA / "invented_peaks_raman.csv")
    assert pl.technique == "raman"
    assert pl.positions().tolist() == [156.3, 712.0, 1085.5, 1436.0]
    low = pl.peaks[0]
    assert (low.intensity, low.width_cm1, low.polarisation) == (12.5, 3.0, None)
    mid = pl.peaks[1]
    assert (mid.width_cm1, mid.polarisation) == (None, "xy")
    assert pl.source is not None and pl.source.endswith("invented_peaks_raman.csv")


def test_read_peaks_semicolon_decimal_comma_without_header() -> None:
    pl = read_peaks(DATA / "invented_peaks_semicolon.csv", technique="ir")
    assert pl.technique == "ir"
    assert [(p.position_cm1, p.intensity, p.width_cm1) for p in pl] == [
        (712.0, 35.0, None),
        (1085.5, 100.0, 4.2),
    ]


def test_read_peaks_tab_header_hwhm_doubled() -> None:
    pl = read_peaks(DATA / "invented_peaks_tab.tsv")
    assert pl.technique is None
    assert [(p.position_cm1, p.width_cm1) for p in pl] == [(1600.0, 5.0), (3050.0, 10.0)]


def test_read_peaks_conflicting_technique(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="says technique 'raman'"):
        read_peaks(DATA / "invented_peaks_raman.csv", technique="ir")


def test_read_peaks_micrometres_converted(tmp_path: Path) -> None:
    path = write(tmp_path, "um.csv", "10.0,1.0,0.02\n4.0,0.5\n")
    pl = read_peaks(path, units="um")
    assert pl.positions() == pytest.approx([1000.0, 2500.0])
    # FWHM 0.02 um at 10 um: 1e4/9.99 - 1e4/10.01 cm-1
    assert pl.peaks[0].width_cm1 == pytest.approx(1e4 / 9.99 - 1e4 / 10.01)


def test_read_peaks_low_wavenumber_lattice_modes_accepted(tmp_path: Path) -> None:
    path = write(tmp_path, "lattice.csv", "# lattice modes\n18,1\n45,2\n96,3\n180,1\n")
    assert len(read_peaks(path)) == 4


@pytest.mark.parametrize(
    ("text", "match"),
    [
        ("", "file is empty"),
        ("# only a comment\n", "no data rows"),
        ("position,intensity\n", "no data rows"),
        ("100,1\n200,abc\n", r"line 2: intensity \(column 2\) is not a number: 'abc'"),
        ("100,1\nfoo,2\n", r"line 2: position \(column 1\) is not a number"),
        ("100,1\n200\n", "line 2: 1 column"),
        (",,\n100,1\n", "line 1: 0 column"),
        ("100,1\nnan,2\n", r"line 2: position \(column 1\) is NaN"),
        ("100,1\n200,NaN\n", "line 2: intensity .* is NaN"),
        ("300,1\n100,1\n300,2\n", "line 3: position 300 repeats line 1"),
        ("100,1\n-5,1\n", "line 2: position must be > 0"),
        ("100,1\n0,1\n", "line 2: position must be > 0"),
        ("100,1,0\n", "line 1: width must be > 0"),
        ("100,1,inf\n", "infinite"),
        ("position,fwhm\n100,2\n", "line 1: the header row .* has no intensity column"),
        ("wavenumber,frequency,intensity\n1,2,3\n", "two columns give the position"),
        ("2.5,1\n10.0,1\n", "look like wavelength in micrometres; pass units='um'"),
        ("wavelength (nm),intensity\n500,1\n", "line 1: column .* nanometres; pass units='nm'"),
        ("wavelength,intensity\n5,1\n300,1\n", "holds wavelengths"),
    ],
)
def test_read_peaks_bad_files(tmp_path: Path, text: str, match: str) -> None:
    path = write(tmp_path, "bad.csv", text)
    with pytest.raises(InputError, match=match) as info:
        read_peaks(path)
    message = str(info.value)
    assert "\n" not in message
    assert "bad.csv" in message


def test_read_peaks_missing_file(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="no such file"):
        read_peaks(tmp_path / "absent.csv")


def test_read_peaks_bad_units_and_technique(tmp_path: Path) -> None:
    path = write(tmp_path, "ok.csv", "100,1\n")
    with pytest.raises(InputError, match="units must be"):
        read_peaks(path, units="angstrom")
    with pytest.raises(InputError, match="unknown technique"):
        read_peaks(path, technique="uv")
    bad = write(tmp_path, "tech.csv", "# technique: sonar\n100,1\n")
    with pytest.raises(InputError, match=r"tech\.csv, line 1: unknown technique"):
        read_peaks(bad)


# --------------------------------------------------------------------------- text spectra


def test_read_spectrum_csv_descending_reversed() -> None:
    s = read_spectrum(DATA / "invented_spectrum.csv")
    assert s.technique == "ir"
    assert s.wavenumber_cm1[0] == 990.0 and s.wavenumber_cm1[-1] == 1010.0
    assert s.signal[int(np.argmax(s.signal))] == 1.0
    assert s.wavenumber_cm1[int(np.argmax(s.signal))] == 1000.0


def test_read_spectrum_whitespace_and_extra_columns(tmp_path: Path) -> None:
    path = write(tmp_path, "s.txt", "100 1 9\n101 2 9  # trailing comment\n102 3 9\n")
    s = read_spectrum(path, technique="raman")
    assert s.signal.tolist() == [1.0, 2.0, 3.0]
    assert s.technique == "raman"


@pytest.mark.parametrize(
    ("units", "x", "expected"),
    [("um", [10.0, 5.0, 2.5], [1000.0, 2000.0, 4000.0]), ("nm", [1000.0, 800.0, 500.0], [1e4, 12500.0, 2e4])],
)
def test_read_spectrum_wavelength_units(tmp_path: Path, units: str, x: list[float], expected: list[float]) -> None:
    text = "".join(f"{v},{i}\n" for i, v in enumerate(x))
    s = read_spectrum(write(tmp_path, "w.csv", text), units=units)
    assert s.wavenumber_cm1 == pytest.approx(expected)
    # ascending wavenumber: the signal order is reversed with the axis
    assert s.signal.tolist() == [0.0, 1.0, 2.0]


def test_read_spectrum_low_wavenumber_raman_accepted(tmp_path: Path) -> None:
    x = np.arange(10.0, 200.0, 0.5)
    text = "".join(f"{v},{1.0}\n" for v in x)
    s = read_spectrum(write(tmp_path, "lattice.csv", text))
    assert s.wavenumber_cm1[0] == 10.0


def test_read_spectrum_nm_range_accepted_without_hint(tmp_path: Path) -> None:
    # 200-1100 cm-1 is an ordinary region in cm-1: no name hint, no refusal
    text = "".join(f"{v},{1.0}\n" for v in range(200, 1100, 10))
    assert len(read_spectrum(write(tmp_path, "fingerprint.csv", text))) == 90


@pytest.mark.parametrize(
    ("name", "text", "match"),
    [
        ("e.csv", "   \n\n", "file is empty"),
        ("c.csv", "x,y\n", "no data rows"),
        ("t.csv", "100,1\n101,x\n102,1\n", r"line 2: signal \(column 2\) is not a number"),
        ("o.csv", "100,1\n101\n102,1\n", "line 2: 1 column.*need 2"),
        ("n.csv", "100,1\n101,nan\n102,1\n", "line 2: signal .* is NaN"),
        ("z.csv", "0,1\n1,1\n2,1\n", "line 1: x must be > 0"),
        ("g.csv", "-1,1\n1,1\n2,1\n", "line 1: x must be > 0"),
        ("d.csv", "100,1\n101,1\n101,1\n", "line 3: x = 101 repeats"),
        ("m.csv", "100,1\n102,1\n101,1\n", "line 3: x = 101 breaks the monotonic order"),
        ("s.csv", "100,1\n101,1\n", "at least 3"),
        ("u.csv", "0.5,1\n1.0,1\n20.0,1\n", "micrometres; pass units='um'"),
        ("data_nm.csv", "300,1\n500,1\n900,1\n", "nanometres; pass units='nm'"),
        ("h.csv", "lambda (um),I\n2,1\n3,1\n4,1\n", "line 1: column .* micrometres"),
    ],
)
def test_read_spectrum_bad_files(tmp_path: Path, name: str, text: str, match: str) -> None:
    path = write(tmp_path, name, text)
    with pytest.raises(InputError, match=match) as info:
        read_spectrum(path)
    assert "\n" not in str(info.value)
    assert name in str(info.value)


def test_read_spectrum_missing_file(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="no such file"):
        read_spectrum(tmp_path / "absent.txt")
    with pytest.raises(InputError, match="no such file"):
        read_spectrum(tmp_path / "absent.jdx")


# --------------------------------------------------------------------------- JCAMP-DX


def test_jcamp_xydata_raman_descending() -> None:
    s = read_spectrum(DATA / "invented_raman_xydata.jdx")
    assert s.technique == "raman"
    assert len(s) == 201
    assert s.wavenumber_cm1[0] == 300.0 and s.wavenumber_cm1[-1] == 700.0
    # invented bands at 612 cm-1 (height 800 over a background of 50) and 455 cm-1
    assert s.wavenumber_cm1[int(np.argmax(s.signal))] == 612.0
    assert s.signal.max() == 850.0


def test_jcamp_xypoints_micrometres_converted() -> None:
    s = read_spectrum(DATA / "invented_ir_xypoints.jdx")
    assert s.technique == "ir"
    assert s.wavenumber_cm1[0] == pytest.approx(1e4 / 12.0)
    assert s.wavenumber_cm1[-1] == pytest.approx(1e4 / 7.0)
    assert np.all(np.diff(s.wavenumber_cm1) > 0)
    assert s.wavenumber_cm1[int(np.argmax(s.signal))] == pytest.approx(1000.0)


def _jcamp(xunits: str, data_type: str = "INFRARED SPECTRUM", body: str | None = None) -> str:
    if body is None:
        body = "##XYPOINTS=(XY..XY)\n500, 1.0; 600, 2.0; 700, 1.5\n"
    return (
        "##TITLE=invented\n##JCAMP-DX=4.24\n"
        f"##DATA TYPE={data_type}\n##XUNITS={xunits}\n##YUNITS=ABSORBANCE\n"
        "##FIRSTX=500\n##LASTX=700\n##NPOINTS=3\n" + body + "##END=\n"
    )


def test_jcamp_nanometres(tmp_path: Path) -> None:
    s = read_spectrum(write(tmp_path, "a.dx", _jcamp("NANOMETERS")))
    assert s.wavenumber_cm1 == pytest.approx([1e7 / 700, 1e7 / 600, 1e7 / 500])
    assert s.signal.tolist() == [1.5, 2.0, 1.0]


def test_jcamp_technique_conflict_and_absent(tmp_path: Path) -> None:
    path = write(tmp_path, "a.jdx", _jcamp("1/CM"))
    with pytest.raises(InputError, match="says technique 'ir'"):
        read_spectrum(path, technique="raman")
    other = write(tmp_path, "b.jcamp", _jcamp("1/CM", data_type="UV/VIS SPECTRUM"))
    assert read_spectrum(other).technique is None
    assert read_spectrum(other, technique="raman").technique == "raman"


@pytest.mark.parametrize(
    ("text", "match"),
    [
        (_jcamp("HZ"), "XUNITS=HZ cannot be converted"),
        (_jcamp("1/CM", body="##XYPOINTS=(XY..XY)\n"), "no ##XYDATA or ##XYPOINTS"),
        (
            _jcamp("1/CM", body="##XYPOINTS=(XY..XY)\n500, 1; 600, 2; 550, 1\n"),
            "not strictly monotonic",
        ),
        (
            _jcamp("1/CM", body="##XYPOINTS=(XY..XY)\n-5, 1; 600, 2; 700, 1\n"),
            "must be > 0",
        ),
        (
            # NPOINTS says 3 but 4 values follow: the jcamp package reports it
            _jcamp("1/CM", body="##XYDATA=(X++(Y..Y))\n500 1 2 3 4\n"),
            "fail their checks: the data give 3 x values but 4 y values",
        ),
        (
            # FIRSTX 500, LASTX 700, NPOINTS 3: step 100, so the second line
            # (after two values) must start at x = 700, not 900
            _jcamp("1/CM", body="##XYDATA=(X++(Y..Y))\n500 1 2\n900 3\n"),
            "a data line starts at x = 900, but the lines before it lead to x = 700",
        ),
        ("", "file is empty"),
        ("##TITLE=x\n##DATA TYPE=LINK\n##BLOCKS=0\n##END=\n", "compound"),
    ],
)
def test_jcamp_bad_files(tmp_path: Path, text: str, match: str) -> None:
    with pytest.raises(InputError, match=match) as info:
        read_spectrum(write(tmp_path, "bad.jdx", text))
    assert "bad.jdx" in str(info.value)
