"""Finding bands in a spectrum, fitting their line shapes, and making test spectra.

The steps of :func:`find_peaks`:

1. **Baseline** by asymmetric least squares (ALS): a Whittaker smoother whose
   weights are ``p`` for points above the current baseline and ``1 - p`` below,
   iterated (P. H. C. Eilers and H. F. M. Boelens, "Baseline correction with
   asymmetric least squares smoothing", Leiden University Medical Centre report,
   2005; citation and the parameter ranges quoted below from memory). The
   stiffness ``lam`` is set from the grid so that the baseline does not follow
   features narrower than about :data:`BASELINE_SCALE_CM1` (see
   :func:`als_baseline`). ALS sits under the noise; the residual is shifted so that
   its baseline points have zero median.
2. **Noise** from the data with the DER_SNR estimator (F. Stoehr et al., "DER_SNR:
   A simple & general spectroscopic signal-to-noise measurement algorithm",
   ASP Conf. Ser. 394, 505 (2008), from memory):
   ``sigma = 1.482602 / sqrt(6) * median(|2 y[i] - y[i-2] - y[i+2]|)``,
   the median absolute deviation (factor 1.4826 for a normal distribution) of a
   second difference, which ignores smooth signal and is robust to the bands.
   For nearly noiseless data it is floored at :data:`NOISE_FLOOR_ALS` (with a
   baseline) or :data:`NOISE_FLOOR_NONE` (without) times the strongest band, so
   that rounding ripples and baseline overshoots are not reported as bands.
3. **Detection** with :func:`scipy.signal.find_peaks`: a band must stand
   ``snr * sigma`` above the baseline *and* have a prominence of ``snr * sigma``.
4. **Position**: vertex of the parabola through the top three points; **width**:
   full width at half height above the baseline from :func:`scipy.signal.peak_widths`
   (linear interpolation between grid points).
5. Optional **line-shape fit** of each band together with its overlapping
   neighbours (:func:`scipy.optimize.curve_fit`), which refines position, height and
   FWHM.

Bands are maxima: convert transmittance to absorbance before looking for bands.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Callable, Sequence
from typing import Any

import numpy as np
from scipy import linalg, optimize, signal

from ..errors import InputError
from .measured import Peak, PeakList, Spectrum

__all__ = [
    "ALS_P",
    "BASELINE_SCALE_CM1",
    "NOISE_FLOOR_ALS",
    "NOISE_FLOOR_NONE",
    "SHAPES",
    "als_baseline",
    "estimate_noise",
    "find_peaks",
    "synthesize",
]

#: Length scale (cm-1) below which the automatic ALS baseline does not bend.
#: Wider than the bands of molecular solids (a few to some tens of cm-1), narrower
#: than fluorescence or scattering backgrounds (common practice).
BASELINE_SCALE_CM1 = 250.0

#: Line shapes understood by :func:`synthesize` and the fit of :func:`find_peaks`.
SHAPES = ("lorentzian", "gaussian", "pseudo-voigt")

#: Smallest noise level assumed, as a fraction of the largest |signal - baseline|,
#: with the ALS baseline and without one (matters only for nearly noiseless data).
NOISE_FLOOR_ALS = 2.5e-4
NOISE_FLOOR_NONE = 1e-6

#: Asymmetry weight of the ALS baseline (Eilers & Boelens suggest 0.001-0.1, from memory).
ALS_P = 0.01

_FOUR_LN2 = 4.0 * math.log(2.0)


# --------------------------------------------------------------------------- line shapes


def _lorentzian(x: np.ndarray, center: float, height: float, fwhm: float) -> np.ndarray:
    return height / (1.0 + ((x - center) / (0.5 * fwhm)) ** 2)


def _gaussian(x: np.ndarray, center: float, height: float, fwhm: float) -> np.ndarray:
    return height * np.exp(-_FOUR_LN2 * ((x - center) / fwhm) ** 2)


def _pseudo_voigt(x: np.ndarray, center: float, height: float, fwhm: float, eta: float = 0.5) -> np.ndarray:
    # Linear mix of a Lorentzian and a Gaussian of the same FWHM and height
    # (common practice); eta = 1 is pure Lorentzian.
    return eta * _lorentzian(x, center, height, fwhm) + (1.0 - eta) * _gaussian(x, center, height, fwhm)


def _check_shape(shape: str) -> str:
    if shape not in SHAPES:
        raise InputError(f"unknown line shape {shape!r}; use one of {', '.join(SHAPES)}")
    return shape


def _profile(x: np.ndarray, center: float, height: float, fwhm: float, shape: str) -> np.ndarray:
    if shape == "lorentzian":
        return _lorentzian(x, center, height, fwhm)
    if shape == "gaussian":
        return _gaussian(x, center, height, fwhm)
    return _pseudo_voigt(x, center, height, fwhm)


# --------------------------------------------------------------------------- baseline, noise


def _second_difference_gram(n: int) -> np.ndarray:
    """Upper banded form (3, n) of D'D for the second-difference matrix D."""
    diag = np.zeros(n)
    off1 = np.zeros(n)  # off1[j] is entry (j-1, j)
    off2 = np.zeros(n)  # off2[j] is entry (j-2, j)
    coeff = (1.0, -2.0, 1.0)
    for a in range(3):
        diag[a : n - 2 + a] += coeff[a] ** 2
    for a in range(2):
        off1[a + 1 : n - 2 + a + 1] += coeff[a] * coeff[a + 1]
    off2[2:] += coeff[0] * coeff[2]
    return np.vstack([off2, off1, diag])


def als_baseline(
    signal_values: np.ndarray | Sequence[float],
    *,
    lam: float,
    p: float = ALS_P,
    iterations: int = 10,
) -> np.ndarray:
    """Asymmetric least squares baseline (Eilers & Boelens 2005).

    Minimises ``sum w_i (y_i - z_i)^2 + lam * sum (second difference of z)^2``
    with ``w_i = p`` where ``y_i > z_i`` and ``1 - p`` elsewhere, re-weighting
    ``iterations`` times. The smoother passes features longer than about
    ``2 * pi * lam**0.25`` points and flattens shorter ones.

    Parameters
    ----------
    signal_values : array_like, shape (n,)
        The signal (bands are maxima).
    lam : float
        Stiffness (> 0); Eilers & Boelens use 1e2-1e9 (from memory).
    p : float
        Asymmetry, 0 < p < 0.5.
    iterations : int
        Number of re-weightings.

    Returns
    -------
    ndarray, shape (n,)
        The baseline.

    Examples
    --------
    >>> import numpy as np
    >>> x = np.linspace(0, 1, 200)
    >>> z = als_baseline(0.5 + x + np.exp(-((x - 0.5) / 0.01) ** 2), lam=1e5)
    >>> bool(abs(z[100] - 1.0) < 0.05)
    True
    """
    y = np.asarray(signal_values, dtype=float)
    n = y.size
    if n < 3:
        raise InputError(f"ALS baseline needs at least 3 points, got {n}")
    if not lam > 0:
        raise InputError(f"ALS stiffness lam must be > 0, got {lam}")
    if not 0 < p < 0.5:
        raise InputError(f"ALS asymmetry p must be between 0 and 0.5, got {p}")
    penalty = lam * _second_difference_gram(n)
    w = np.ones(n)
    z = y.copy()
    for _ in range(max(1, int(iterations))):
        ab = penalty.copy()
        ab[2] += w
        z = linalg.solveh_banded(ab, w * y, check_finite=False)
        w_new = np.where(y > z, p, 1.0 - p)
        if np.array_equal(w_new, w):
            break
        w = w_new
    return z


def _auto_lambda(x: np.ndarray) -> float:
    step = float(np.median(np.diff(x)))
    points = BASELINE_SCALE_CM1 / step
    return max((points / (2.0 * math.pi)) ** 4, 1.0)


def estimate_noise(signal_values: np.ndarray | Sequence[float]) -> float:
    """Standard deviation of white noise in a signal, by DER_SNR.

    ``sigma = 1.482602 / sqrt(6) * median(|2 y[i] - y[i-2] - y[i+2]|)``
    (Stoehr et al., ASP Conf. Ser. 394, 505 (2008), from memory). The second
    difference removes signal that is smooth over five points; the median makes
    the estimate robust to bands; 1.482602 turns a median absolute value into a
    normal standard deviation and ``sqrt(6)`` is the norm of the (1, -2, 1)
    stencil.

    Examples
    --------
    >>> import numpy as np
    >>> rng = np.random.default_rng(1)
    >>> s = estimate_noise(np.sin(np.linspace(0, 3, 5000)) + rng.normal(0, 0.1, 5000))
    >>> bool(0.09 < s < 0.11)
    True
    """
    y = np.asarray(signal_values, dtype=float)
    if y.size < 5:
        raise InputError(f"noise estimate needs at least 5 points, got {y.size}")
    d = 2.0 * y[2:-2] - y[:-4] - y[4:]
    return float(1.482602 / math.sqrt(6.0) * np.median(np.abs(d)))


#: most points per BASELINE_SCALE_CM1 the ALS fit works on; a finer spectrum is averaged in bins
#: first (the stiffness grows as the fourth power of this number, and beyond ~1e8 the banded
#: system is too ill-conditioned to solve in double precision)
BASELINE_POINTS_PER_SCALE = 500


def _baseline(x: np.ndarray, y: np.ndarray, mode: str) -> np.ndarray:
    if mode == "none":
        return np.zeros_like(y)
    step = abs(float(np.median(np.diff(x))))
    k = math.ceil(min(BASELINE_SCALE_CM1 / max(step, 1e-12) / BASELINE_POINTS_PER_SCALE, 1e9))
    if k > 1 and y.size // k >= 3:
        # a baseline is smooth over BASELINE_SCALE_CM1: fit it on bin means, interpolate back
        m = y.size // k
        xb = x[: m * k].reshape(m, k).mean(axis=1)
        yb = y[: m * k].reshape(m, k).mean(axis=1)
        centres = np.arange(m) * k + (k - 1) / 2.0
        z = np.interp(np.arange(y.size), centres, als_baseline(yb, lam=_auto_lambda(xb)))
    else:
        z = als_baseline(y, lam=_auto_lambda(x))
    r = y - z
    # ALS rides under the noise: shift it so that points near the baseline have a
    # residual median of zero (points within 3 sigma of the lower part of r).
    sigma = estimate_noise(r)
    centre = float(np.median(r))
    near = r[r < centre + 3.0 * sigma]
    if near.size:
        z = z + float(np.median(near))
    return z


# --------------------------------------------------------------------------- detection


def _parabolic_vertex(x: np.ndarray, y: np.ndarray, idx: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Vertex (position, height) of the parabola through points idx-1, idx, idx+1."""
    u0 = x[idx - 1] - x[idx]
    u2 = x[idx + 1] - x[idx]
    d0 = y[idx - 1] - y[idx]
    d2 = y[idx + 1] - y[idx]
    det = u0 * u2 * (u0 - u2)
    a = (d0 * u2 - d2 * u0) / det
    b = (d2 * u0 * u0 - d0 * u2 * u2) / det
    ok = a < 0
    safe_a = np.where(ok, a, -1.0)
    shift = np.where(ok, -b / (2.0 * safe_a), 0.0)
    shift = np.clip(shift, u0, u2)
    height = np.where(ok, y[idx] - b * b / (4.0 * safe_a), y[idx])
    return x[idx] + shift, height


def find_peaks(
    spectrum: Spectrum,
    *,
    snr: float = 4.0,
    baseline: str = "auto",
    fit: str | None = None,
    min_separation_cm1: float | None = None,
) -> PeakList:
    """Find the bands of a spectrum.

    See the module docstring for the method (ALS baseline, DER_SNR noise,
    prominence detection, parabolic top, optional line-shape fit).

    Parameters
    ----------
    spectrum : Spectrum
        Bands are maxima of ``spectrum.signal``.
    snr : float
        A band must rise ``snr`` noise standard deviations above the baseline and
        have a prominence of as much.
    baseline : {"auto", "als", "none"}
        ``"auto"``/``"als"``: ALS baseline with stiffness set from the grid;
        ``"none"``: the signal is already baseline-corrected.
    fit : {None, "lorentzian", "gaussian", "pseudo-voigt"}
        Line shape fitted to each band with its overlapping neighbours; refines
        position, intensity (height) and FWHM. A band whose fit fails keeps its
        unfitted values.
    min_separation_cm1 : float or None
        Of two bands closer than this, only the higher is kept.

    Returns
    -------
    PeakList
        Position (cm-1), intensity (height above the baseline), width (FWHM,
        cm-1); technique and source of the spectrum.

    Examples
    --------
    >>> s = synthesize([500.0, 620.0], [1.0, 0.5], [6.0, 8.0], noise=0.005)
    >>> find_peaks(s).positions().round(1).tolist()
    [500.0, 620.0]
    """
    if not isinstance(spectrum, Spectrum):
        raise InputError(f"find_peaks needs a Spectrum, got {type(spectrum).__name__}")
    if not (isinstance(snr, (int, float)) and snr > 0 and math.isfinite(snr)):
        raise InputError(f"snr must be a positive number, got {snr!r}")
    if baseline not in ("auto", "als", "none"):
        raise InputError(f"baseline must be 'auto', 'als' or 'none', got {baseline!r}")
    if fit is not None:
        _check_shape(fit)
    if min_separation_cm1 is not None and not min_separation_cm1 >= 0:
        raise InputError(f"min_separation_cm1 must be >= 0, got {min_separation_cm1!r}")

    x = spectrum.wavenumber_cm1
    y = spectrum.signal
    if x.size < 5:
        raise InputError(f"{spectrum.source or 'spectrum'}: too few points ({x.size}) to find bands")
    r = y - _baseline(x, y, baseline)
    noise = estimate_noise(r)
    # A noiseless (synthetic) spectrum has sigma ~ 0: keep a floor so that rounding
    # ripples and the small overshoots of the stiff ALS baseline next to strong bands
    # (up to ~5e-4 of the strongest band in noiseless tests) are not taken for bands.
    floor = NOISE_FLOOR_NONE if baseline == "none" else NOISE_FLOOR_ALS
    noise = max(noise, floor * float(np.max(np.abs(r))), np.finfo(float).tiny)
    threshold = snr * noise

    idx, props = signal.find_peaks(r, height=threshold, prominence=threshold)
    if idx.size == 0:
        return PeakList((), technique=spectrum.technique, source=spectrum.source)
    pos, top = _parabolic_vertex(x, r, idx)
    heights = r[idx]
    widths_pts = signal.peak_widths(
        r, idx, rel_height=0.5, prominence_data=(heights, props["left_bases"], props["right_bases"])
    )
    grid = np.arange(x.size, dtype=float)
    fwhm = np.interp(widths_pts[3], grid, x) - np.interp(widths_pts[2], grid, x)

    keep = np.ones(idx.size, dtype=bool)
    if min_separation_cm1:
        order = np.argsort(-top)
        kept: list[int] = []
        for k in order:
            if all(abs(pos[k] - pos[j]) >= min_separation_cm1 for j in kept):
                kept.append(int(k))
        keep[:] = False
        keep[kept] = True
    pos, top, fwhm = pos[keep], top[keep], fwhm[keep]

    if fit is not None:
        pos, top, fwhm = _fit_all(x, r, pos, top, fwhm, fit)

    peaks = tuple(
        Peak(float(p), float(h), float(w) if w > 0 else None, None) for p, h, w in zip(pos, top, fwhm, strict=True)
    )
    return PeakList(peaks, technique=spectrum.technique, source=spectrum.source)


# --------------------------------------------------------------------------- fitting


def _fit_all(
    x: np.ndarray, r: np.ndarray, pos: np.ndarray, top: np.ndarray, fwhm: np.ndarray, shape: str
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    step = float(np.median(np.diff(x)))
    w0 = np.maximum(fwhm, 3.0 * step)
    new_pos, new_top, new_w = pos.copy(), top.copy(), fwhm.copy()
    for i in range(pos.size):
        reach = 2.5 * w0[i]
        group = np.nonzero(np.abs(pos - pos[i]) < reach + 2.0 * w0)[0]
        lo = min(pos[i] - reach, float(np.min(pos[group] - 1.5 * w0[group])))
        hi = max(pos[i] + reach, float(np.max(pos[group] + 1.5 * w0[group])))
        mask = (x >= lo) & (x <= hi)
        result = _fit_group(x[mask], r[mask], pos[group], top[group], w0[group], shape, step)
        if result is None:
            continue
        k = int(np.nonzero(group == i)[0][0])
        c, h, w = result[k]
        new_pos[i], new_top[i], new_w[i] = c, h, w
    return new_pos, new_top, new_w


def _fit_group(
    xs: np.ndarray,
    ys: np.ndarray,
    pos: np.ndarray,
    top: np.ndarray,
    width: np.ndarray,
    shape: str,
    step: float,
) -> list[tuple[float, float, float]] | None:
    """Fit a sum of bands plus a constant; None when the fit does not converge."""
    per = 4 if shape == "pseudo-voigt" else 3
    m = pos.size
    if xs.size <= per * m + 1:
        return None
    p0: list[float] = []
    lower: list[float] = []
    upper: list[float] = []
    for c, h, w in zip(pos, top, width, strict=True):
        dc = max(w, 2.0 * step)
        h0 = max(float(h), 1e-300)
        p0 += [c, h0, w]
        lower += [c - dc, 0.0, max(0.5 * step, 0.2 * w)]
        upper += [c + dc, max(4.0 * h0, 1e-300 * 2), 5.0 * w]
        if shape == "pseudo-voigt":
            p0.append(0.5)
            lower.append(0.0)
            upper.append(1.0)
    span = float(np.ptp(ys)) or 1.0
    p0.append(0.0)
    lower.append(-span)
    upper.append(span)

    def model(xv: np.ndarray, *params: float) -> np.ndarray:
        out = np.full_like(xv, params[-1])
        for j in range(m):
            c, h, w = params[per * j : per * j + 3]
            if shape == "pseudo-voigt":
                out += _pseudo_voigt(xv, c, h, w, params[per * j + 3])
            elif shape == "lorentzian":
                out += _lorentzian(xv, c, h, w)
            else:
                out += _gaussian(xv, c, h, w)
        return out

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", optimize.OptimizeWarning)
            popt, _ = optimize.curve_fit(model, xs, ys, p0=p0, bounds=(lower, upper), max_nfev=400 * (per * m + 1))
    except (RuntimeError, ValueError):
        return None
    if not np.all(np.isfinite(popt)):
        return None
    return [(float(popt[per * j]), float(popt[per * j + 1]), float(popt[per * j + 2])) for j in range(m)]


# --------------------------------------------------------------------------- synthesis


def synthesize(
    positions_cm1: Sequence[float] | np.ndarray,
    intensities: Sequence[float] | np.ndarray | float,
    widths_cm1: Sequence[float] | np.ndarray | float,
    *,
    grid: Sequence[float] | np.ndarray | None = None,
    noise: float = 0.0,
    baseline: Callable[[np.ndarray], Any] | Sequence[float] | np.ndarray | None = None,
    seed: int = 0,
    shape: str = "lorentzian",
    technique: str | None = None,
) -> Spectrum:
    """Make a synthetic spectrum: a sum of bands, a baseline and white noise.

    Parameters
    ----------
    positions_cm1 : array_like
        Band centres, cm-1 (> 0).
    intensities : array_like or float
        Band heights (peak values), arbitrary units; a scalar applies to all.
    widths_cm1 : array_like or float
        Full widths at half maximum, cm-1 (> 0); a scalar applies to all.
    grid : array_like or None
        Wavenumbers (cm-1, ascending, > 0). ``None``: from ``min(position) - 10 *
        max(width)`` (at least 1 cm-1) to ``max(position) + 10 * max(width)`` in
        steps of ``min(0.5, min(width) / 6)`` cm-1.
    noise : float
        Standard deviation of added Gaussian white noise (signal units).
    baseline : callable, array_like or None
        Added background: a function of the wavenumber array, or values on the grid.
    seed : int
        Seed of the noise generator; the result is deterministic for a seed.
    shape : {"lorentzian", "gaussian", "pseudo-voigt"}
        Band shape (pseudo-Voigt: equal mix of the two at the same FWHM).
    technique : {"ir", "raman"} or None
        Technique recorded in the result.

    Returns
    -------
    Spectrum
        ``source`` is ``"synthetic"``.

    Examples
    --------
    >>> s = synthesize([1000.0], [2.0], [4.0], grid=[998.0, 1000.0, 1002.0])
    >>> s.signal.tolist()
    [1.0, 2.0, 1.0]
    """
    _check_shape(shape)
    pos = np.atleast_1d(np.asarray(positions_cm1, dtype=float))
    if pos.ndim != 1 or pos.size == 0:
        raise InputError("synthesize: positions_cm1 must be a non-empty 1-D list")
    try:
        inten = np.broadcast_to(np.asarray(intensities, dtype=float), pos.shape)
        wid = np.broadcast_to(np.asarray(widths_cm1, dtype=float), pos.shape)
    except ValueError:
        raise InputError("synthesize: intensities and widths_cm1 must be scalars or match positions_cm1") from None
    for name, arr in (("positions_cm1", pos), ("intensities", inten), ("widths_cm1", wid)):
        if not np.all(np.isfinite(arr)):
            raise InputError(f"synthesize: {name} must be finite")
    if np.any(pos <= 0) or np.any(wid <= 0):
        raise InputError("synthesize: positions_cm1 and widths_cm1 must be > 0")
    if not (noise >= 0 and math.isfinite(noise)):
        raise InputError(f"synthesize: noise must be >= 0, got {noise!r}")
    if grid is None:
        step = min(0.5, float(wid.min()) / 6.0)
        lo = max(1.0, float(pos.min() - 10.0 * wid.max()))
        hi = float(pos.max() + 10.0 * wid.max())
        x = lo + step * np.arange(math.floor((hi - lo) / step) + 1)
    else:
        x = np.asarray(grid, dtype=float)
    y = np.zeros_like(x)
    for c, h, w in zip(pos, inten, wid, strict=True):
        y += _profile(x, float(c), float(h), float(w), shape)
    if baseline is not None:
        b = baseline(x) if callable(baseline) else baseline
        b = np.asarray(b, dtype=float)
        if b.shape != x.shape:
            raise InputError(f"synthesize: baseline has shape {b.shape}, the grid has {x.shape}")
        y = y + b
    if noise > 0:
        y = y + np.random.default_rng(seed).normal(0.0, noise, x.size)
    return Spectrum(x, y, technique=technique, source="synthetic")
