"""Peak finding, line-shape fits and synthetic spectra (splitting.spectra.peaks).

All spectra here are synthetic (invented). Line-shape definitions used to check the
synthesis: Lorentzian h / (1 + (2 (x - c) / w)^2) and Gaussian
h exp(-4 ln 2 (x - c)^2 / w^2) with FWHM w (common practice).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from splitting.errors import InputError
from splitting.spectra.measured import Spectrum, read_spectrum
from splitting.spectra.peaks import (
    als_baseline,
    estimate_noise,
    find_peaks,
    synthesize,
)

DATA = Path(__file__).parent / "data" / "spectra"


def random_lines(seed: int, n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """n invented bands between 200 and 3400 cm-1, at least 30 cm-1 apart."""
    rng = np.random.default_rng(seed)
    pos: list[float] = []
    while len(pos) < n:
        c = float(rng.uniform(200.0, 3400.0))
        if all(abs(c - p) > 30.0 for p in pos):
            pos.append(c)
    return np.sort(pos), rng.uniform(0.2, 1.0, n), rng.uniform(3.0, 10.0, n)


def recovered(found: np.ndarray, true: np.ndarray, tol: float) -> float:
    if found.size == 0:
        return 0.0
    return float(np.mean([np.min(np.abs(found - t)) <= tol for t in true]))


# --------------------------------------------------------------------------- synthesize


def test_synthesize_shapes_at_half_width() -> None:
    grid = [996.0, 998.0, 1000.0, 1002.0]
    for shape, half in (("lorentzian", 0.5), ("gaussian", 0.5), ("pseudo-voigt", 0.5)):
        s = synthesize([1000.0], [2.0], [4.0], grid=grid, shape=shape)
        assert s.signal[2] == pytest.approx(2.0)
        assert s.signal[1] == pytest.approx(2.0 * half)  # FWHM 4: half height at +-2
    lor = synthesize([1000.0], [1.0], [4.0], grid=grid).signal[0]
    gau = synthesize([1000.0], [1.0], [4.0], grid=grid, shape="gaussian").signal[0]
    assert lor == pytest.approx(0.2)
    assert gau == pytest.approx(math.exp(-4 * math.log(2)))
    pv = synthesize([1000.0], [1.0], [4.0], grid=grid, shape="pseudo-voigt").signal[0]
    assert pv == pytest.approx(0.5 * (lor + gau))


def test_synthesize_deterministic_and_options() -> None:
    a = synthesize([500.0, 600.0], [1.0, 2.0], 5.0, noise=0.1, seed=7, technique="raman")
    b = synthesize([500.0, 600.0], [1.0, 2.0], 5.0, noise=0.1, seed=7, technique="raman")
    c = synthesize([500.0, 600.0], [1.0, 2.0], 5.0, noise=0.1, seed=8)
    assert a == b
    assert not np.array_equal(a.signal, c.signal)
    assert a.technique == "raman" and a.source == "synthetic"
    assert a.wavenumber_cm1[0] >= 1.0
    assert np.diff(a.wavenumber_cm1).max() <= 0.5 + 1e-12
    flat = synthesize([500.0], [0.0], [5.0], grid=np.arange(400.0, 600.0), baseline=lambda x: x)
    assert flat.signal.tolist() == np.arange(400.0, 600.0).tolist()


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"positions_cm1": [], "intensities": 1.0, "widths_cm1": 1.0}, "non-empty"),
        ({"positions_cm1": [1.0, 2.0], "intensities": [1.0] * 3, "widths_cm1": 1.0}, "match"),
        ({"positions_cm1": [100.0], "intensities": 1.0, "widths_cm1": 0.0}, "> 0"),
        ({"positions_cm1": [100.0], "intensities": 1.0, "widths_cm1": 1.0, "shape": "voigt"}, "shape"),
        ({"positions_cm1": [100.0], "intensities": 1.0, "widths_cm1": 1.0, "noise": -1.0}, "noise"),
        (
            {
                "positions_cm1": [100.0],
                "intensities": 1.0,
                "widths_cm1": 1.0,
                "grid": [90, 100, 110],
                "baseline": [1.0],
            },
            "baseline",
        ),
    ],
)
def test_synthesize_rejects_bad_arguments(kwargs: dict, match: str) -> None:
    with pytest.raises(InputError, match=match):
        synthesize(**kwargs)


# --------------------------------------------------------------------------- baseline, noise


def test_estimate_noise_white_noise() -> None:
    rng = np.random.default_rng(0)
    x = np.linspace(0.0, 10.0, 20000)
    y = np.sin(x) + 5.0 / (1.0 + ((x - 5.0) / 0.2) ** 2) + rng.normal(0.0, 0.05, x.size)
    assert estimate_noise(y) == pytest.approx(0.05, rel=0.05)


def test_als_baseline_follows_background_not_bands() -> None:
    x = np.arange(100.0, 2000.0, 1.0)
    background = 0.5 + 2e-4 * x + 0.1 * np.sin(x / 300.0)
    s = synthesize([400.0, 900.0, 1500.0], [1.0, 2.0, 1.5], [8.0, 5.0, 10.0], grid=x, baseline=background)
    z = als_baseline(s.signal, lam=(250.0 / (2 * math.pi)) ** 4)
    # away from the bands the baseline sits on the background
    far = np.all(np.abs(x[:, None] - np.array([400.0, 900.0, 1500.0])) > 60.0, axis=1)
    assert np.max(np.abs(z - background)[far]) < 0.03
    # under the strongest band it does not rise with it
    assert z[np.argmin(np.abs(x - 900.0))] < background[np.argmin(np.abs(x - 900.0))] + 0.1


def test_als_baseline_rejects_bad_parameters() -> None:
    with pytest.raises(InputError):
        als_baseline([1.0, 2.0, 3.0], lam=0.0)
    with pytest.raises(InputError):
        als_baseline([1.0, 2.0, 3.0], lam=10.0, p=0.7)


# --------------------------------------------------------------------------- find_peaks


def test_find_peaks_simple_noiseless() -> None:
    s = synthesize([500.0, 620.0], [1.0, 0.5], [6.0, 8.0], technique="ir")
    pl = find_peaks(s)
    assert pl.technique == "ir" and pl.source == "synthetic"
    assert pl.positions() == pytest.approx([500.0, 620.0], abs=0.05)
    assert [p.intensity for p in pl] == pytest.approx([1.0, 0.5], rel=0.05)
    assert [p.width_cm1 for p in pl] == pytest.approx([6.0, 8.0], rel=0.1)


@pytest.mark.parametrize("shape", ["lorentzian", "gaussian", "pseudo-voigt"])
def test_find_peaks_fit_recovers_overlapping_bands(shape: str) -> None:
    # two bands 8 cm-1 apart, FWHM 6 and 5 cm-1: they overlap strongly
    s = synthesize([1000.0, 1008.0], [1.0, 0.6], [6.0, 5.0], shape=shape, noise=0.002, seed=3)
    pl = find_peaks(s, fit=shape)
    assert len(pl) == 2
    assert pl.positions() == pytest.approx([1000.0, 1008.0], abs=0.1)
    assert [p.width_cm1 for p in pl] == pytest.approx([6.0, 5.0], abs=0.3)
    assert [p.intensity for p in pl] == pytest.approx([1.0, 0.6], abs=0.03)


def test_find_peaks_threshold_and_empty_result() -> None:
    rng_only = synthesize([1000.0], [0.0], [5.0], noise=0.01, seed=1)
    assert len(find_peaks(rng_only)) == 0
    weak = synthesize([1000.0], [0.03], [6.0], noise=0.01, seed=1)
    assert len(find_peaks(weak, snr=10.0)) == 0
    strong = synthesize([1000.0], [0.2], [6.0], noise=0.01, seed=1)
    assert find_peaks(strong, snr=10.0).positions() == pytest.approx([1000.0], abs=0.5)


def test_find_peaks_min_separation_keeps_higher() -> None:
    s = synthesize([1000.0, 1012.0], [1.0, 0.5], [4.0, 4.0])
    assert len(find_peaks(s)) == 2
    kept = find_peaks(s, min_separation_cm1=20.0)
    assert kept.positions() == pytest.approx([1000.0], abs=0.05)


def test_find_peaks_baseline_none_on_flat_data() -> None:
    s = synthesize([300.0, 340.0], [1.0, 1.0], [4.0, 4.0])
    assert find_peaks(s, baseline="none").positions() == pytest.approx([300.0, 340.0], abs=0.05)


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"snr": 0.0}, "snr"),
        ({"baseline": "poly"}, "baseline"),
        ({"fit": "voigt"}, "shape"),
        ({"min_separation_cm1": -1.0}, "min_separation"),
    ],
)
def test_find_peaks_rejects_bad_options(kwargs: dict, match: str) -> None:
    s = synthesize([500.0], [1.0], [5.0])
    with pytest.raises(InputError, match=match):
        find_peaks(s, **kwargs)


def test_find_peaks_on_jcamp_file() -> None:
    # invented file: bands at 455 and 612 cm-1 (FWHM 6 and 8) on a background of 50
    pl = find_peaks(read_spectrum(DATA / "invented_raman_xydata.jdx"), fit="lorentzian")
    assert pl.technique == "raman"
    assert pl.positions() == pytest.approx([455.0, 612.0], abs=0.05)
    assert [p.width_cm1 for p in pl] == pytest.approx([6.0, 8.0], abs=0.1)


@pytest.mark.parametrize("fit", [None, "lorentzian"])
def test_round_trip_many_lines(fit: str | None) -> None:
    """30 invented lines, FWHM 3-10 cm-1, noise 1 % of the strongest, curved background."""
    pos, height, width = random_lines(seed=11, n=30)
    grid = np.arange(100.0, 3500.0, 0.5)
    s = synthesize(
        pos,
        height,
        width,
        grid=grid,
        noise=0.01,
        seed=11,
        baseline=lambda x: 0.3 + 1e-4 * x + 0.2 * np.sin(x / 700.0),
    )
    found = find_peaks(s, fit=fit).positions()
    assert recovered(found, pos, 1.5) >= 0.95
    assert found.size <= pos.size + 3  # only a few spurious noise detections


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    st.lists(
        st.tuples(
            st.floats(6.0, 12.0),  # gap to the previous band, in units of 12 cm-1
            st.floats(0.1, 1.0),  # height
            st.floats(2.0, 12.0),  # FWHM, cm-1
        ),
        min_size=1,
        max_size=8,
    )
)
def test_noiseless_lorentzians_recovered(bands: list[tuple[float, float, float]]) -> None:
    """Well separated (>= 72 cm-1, >= 6 FWHM) noiseless Lorentzians: every band within 0.5 cm-1."""
    gaps, heights, widths = (np.array(v) for v in zip(*bands, strict=True))
    pos = 150.0 + np.cumsum(gaps * 12.0)
    found = find_peaks(synthesize(pos, heights, widths)).positions()
    assert found.size == pos.size
    assert np.max(np.abs(found - pos)) <= 0.5


def test_find_peaks_needs_spectrum() -> None:
    with pytest.raises(InputError, match="Spectrum"):
        find_peaks([1.0, 2.0, 3.0])  # type: ignore[arg-type]
    tiny = Spectrum([1.0, 2.0, 3.0], [0.0, 1.0, 0.0])
    with pytest.raises(InputError, match="too few points"):
        find_peaks(tiny)
