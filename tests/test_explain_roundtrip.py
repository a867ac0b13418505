"""Round trip: prediction -> synthetic spectrum on disk -> read -> peaks -> explanation.

The synthetic spectrum is invented: the Raman-active factor-group components of every
band of ordered C60 (Pa-3) are placed 5 cm-1 apart about the bundled free wavenumbers,
with random heights, widths of 2-3.5 cm-1 and white noise, plus five lattice lines.
Then bad files are passed through the explain entry point: each must raise InputError
with a clear message and leave no figure behind.
"""

from __future__ import annotations

import numpy as np
import pytest

from splitting.crystal.predict import predict
from splitting.errors import InputError
from splitting.plot.explain import explain_files
from splitting.spectra.assign import explain
from splitting.spectra.catalogue import find_table
from splitting.spectra.measured import read_spectrum
from splitting.spectra.peaks import find_peaks, synthesize

SPACING_CM1 = 5.0


@pytest.fixture(scope="module")
def pa3(structures_dir):
    return predict(structures_dir / "c60_ordered_Pa-3.cif")


def _truth(prediction) -> list[tuple[float, str]]:
    unit = prediction.unit("C60")
    factor = {c.free: c.factor for c in unit.correlation}
    truth = []
    for mode in find_table("C60").modes:
        if not mode.raman:
            continue
        n = sum(k for lab, k in factor[mode.species] if prediction.species_by_label(lab).raman)
        truth += [(mode.wavenumber_cm1 + (k - (n - 1) / 2) * SPACING_CM1, mode.name) for k in range(n)]
    librations = sum(s.librational for s in prediction.species if s.raman)
    truth += [(20.0 + 10.0 * k, "lattice") for k in range(librations)]
    return truth


def _write_two_columns(path, spectrum) -> None:
    lines = ["# invented synthetic Raman spectrum of ordered C60", "# technique: raman"]
    lines += [f"{x:.4f} {y:.6f}" for x, y in zip(spectrum.wavenumber_cm1, spectrum.signal, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def test_c60_raman_round_trip(pa3, tmp_path):
    truth = _truth(pa3)
    assert len(truth) == 2 * 2 + 8 * 8 + 5  # 2Ag -> Ag + Tg; 8Hg -> Ag + 2Eg + 5Tg; Ag + Eg + 3Tg librations
    rng = np.random.default_rng(11)
    positions = np.array([x for x, _ in truth])
    spectrum = synthesize(
        positions,
        rng.uniform(0.3, 1.0, positions.size),
        rng.uniform(2.0, 3.5, positions.size),
        noise=0.01,
        seed=5,
        technique="raman",
    )
    path = tmp_path / "c60_synthetic.txt"
    _write_two_columns(path, spectrum)
    measured = read_spectrum(path)
    assert measured.technique == "raman"
    peaks = find_peaks(measured)
    explanation = explain(pa3, peaks)
    right = 0
    for x, band in truth:
        near = [line for line in explanation.lines if abs(line.peak.position_cm1 - x) < 1.5]
        if near and near[0].candidates and near[0].candidates[0].band == band:
            right += 1
    assert right >= 0.95 * len(truth)
    # band counts recovered: every Raman band shows its predicted number of components
    (comparison,) = explanation.comparisons
    assert comparison.mismatch <= 2


def test_explain_files_round_trip_with_figure(structures_dir, tmp_path):
    peaks = tmp_path / "calcite_peaks.csv"
    peaks.write_text(
        "# invented\n# technique: raman\nposition,intensity\n1086,100\n712,10\n1436,8\n156,20\n", encoding="utf-8"
    )
    figure = tmp_path / "explained.svg"
    result = explain_files(structures_dir / "calcite.cif", peaks, figure=figure)
    assert figure.read_text(encoding="utf-8").lstrip().startswith("<?xml")
    assert [line.candidates[0].kind for line in result.lines] == [
        "lattice",
        "fundamental",
        "fundamental",
        "fundamental",
    ]


BAD_PEAKS = {
    "empty.csv": ("", "empty"),
    "text.csv": ("position,intensity\n1086,100\nabc,3\n", "not a number"),
    "duplicate.csv": ("1086,100\n712,10\n1086,5\n", "repeats"),
    "wavelength_um.csv": ("wavelength (um),intensity\n9.2,1\n14.0,2\n", "micrometres"),
}
BAD_SPECTRA = {
    "unsorted.txt": ("100 1\n102 2\n101 3\n103 1\n", "monotonic"),
    "empty.txt": ("# nothing\n", "no data rows"),
    "text.txt": ("100 1\n101 x\n102 3\n", "not a number"),
    "microns.txt": ("8.0 0.1\n9.0 0.2\n10.0 0.1\n11.0 0.0\n", "wavelength"),
}


@pytest.mark.parametrize("name", sorted(BAD_PEAKS))
def test_bad_peak_files(structures_dir, tmp_path, name):
    text, message = BAD_PEAKS[name]
    bad = tmp_path / name
    bad.write_text(text, encoding="utf-8")
    figure = tmp_path / "never.png"
    with pytest.raises(InputError, match=message) as info:
        explain_files(structures_dir / "calcite.cif", bad, figure=figure)
    assert str(bad) in str(info.value) and "\n" not in str(info.value)
    assert not figure.exists() and [p.name for p in tmp_path.iterdir()] == [name]


@pytest.mark.parametrize("name", sorted(BAD_SPECTRA))
def test_bad_spectrum_files(structures_dir, tmp_path, name):
    text, message = BAD_SPECTRA[name]
    bad = tmp_path / name
    bad.write_text(text, encoding="utf-8")
    peaks = tmp_path / "peaks.csv"
    peaks.write_text("1086,100\n712,10\n", encoding="utf-8")
    figure = tmp_path / "never.png"
    with pytest.raises(InputError, match=message):
        explain_files(structures_dir / "calcite.cif", peaks, spectrum=bad, figure=figure)
    assert not figure.exists()


def test_unsorted_peak_list_is_sorted(structures_dir, tmp_path):
    peaks = tmp_path / "unsorted.csv"
    peaks.write_text("1436,8\n712,10\n1086,100\n", encoding="utf-8")
    result = explain_files(structures_dir / "calcite.cif", peaks, technique="raman")
    assert [line.peak.position_cm1 for line in result.lines] == [712.0, 1086.0, 1436.0]


def test_other_bad_arguments(structures_dir, tmp_path):
    peaks = tmp_path / "peaks.csv"
    peaks.write_text("# technique: ir\n1086,100\n", encoding="utf-8")
    with pytest.raises(InputError, match="technique"):
        explain_files(structures_dir / "calcite.cif", peaks, technique="raman")
    with pytest.raises(InputError, match="does not exist"):
        explain_files(structures_dir / "calcite.cif", peaks, figure=tmp_path / "no" / "fig.png")
    with pytest.raises(InputError, match="no such file"):
        explain_files(structures_dir / "calcite.cif", tmp_path / "missing.csv")
    with pytest.raises(InputError, match="peak list or a spectrum"):
        explain_files(structures_dir / "calcite.cif")
    with pytest.raises(InputError, match="figure format"):
        explain_files(structures_dir / "calcite.cif", peaks, figure=tmp_path / "fig.txt")
    assert not (tmp_path / "fig.txt").exists()
