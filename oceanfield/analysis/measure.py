"""The spectral analyzer: measure a height sequence's spectrum, statistics and wave timing.

Any ocean can be checked — ours, another tool's render, a fluid simulation's surface
cache — as long as it is a sequence of square height frames at a known frame rate over a
known area. The analysis streams: each frame is read once, its 2-D spectrum accumulated
and the low-wavenumber part of its transform kept (complex64) for the frequency analysis,
so 240 frames of 512² never sit in memory as float64.

What is measured
----------------
- the wavenumber spectrum, 2-D and omnidirectional (binned in |k|), averaged over frames;
  frames that do not repeat across their edges (a crop never does) are Hann-windowed and
  the window's energy loss divided out (by mean(w²));
- the frequency–wavenumber spectrum from the 3-D transform over (t, y, x), Hann-windowed
  in time, reduced to the power of each |k| annulus per frequency; from it
  `oceanfield.analysis.timing` measures the dispersion the waves actually obey (g_eff/g: the scale
  the motion implies);
- Hs = 4√m0, Tp (time series and wavenumber peak), Tm01, Tm02, the mean direction of
  travel and the directional spread (Kuik et al. 1988), the significant steepness and,
  for lateral displacement maps, the share of the surface that folds (J < 0);
- against a preset: the energy in half-octave bands around the target's peak.

Conventions
-----------
Array columns are x, rows are y (texel (iy, ix) at (ix, iy)·L/N), directions are
counter-clockwise from +x, the direction waves travel *towards*. A surface
h = Σ ĥ e^{i(k·x − ωt)} holds waves running along +k. numpy's forward transforms use
e^{−i(…)}, so the spatial transform of such a wave is a line at +k whose time transform
peaks at the *negative* numpy frequency −ω: here ω_phys = −2π·fftfreq. Energy at
(k, ω_phys > 0) travels towards k̂ (tested on the output, with plane waves and synthesised
seas).

References
----------
Harris, F. J. (1978). On the use of windows for harmonic analysis with the discrete
Fourier transform. Proc. IEEE 66(1), 51–83 (Hann window, equivalent noise bandwidth 1.5 bins).
Kuik, A. J., van Vledder, G. Ph. & Holthuijsen, L. H. (1988). A method for the routine
analysis of pitch-and-roll buoy wave data. J. Phys. Oceanogr. 18, 1020–1034 (mean
direction, directional spread σ = √(2(1 − r))).
WMO (1998). Guide to Wave Analysis and Forecasting, WMO-No. 702 (Hm0 = 4√m0, moments).

Reading frame files is `oceanfield.io.sequence`'s work; the wave-timing fit is
``timing``'s (its public names stay importable from here); the text verdict and the
``oceanfield analyze`` command live in ``verdict``, the report picture in ``plot``. This
module knows nothing of files or of synthesis.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, field
from typing import Any, Iterable

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..physics.constants import GRAVITY
from ..physics.dispersion import angular_frequency, check_depth, group_velocity
from .timing import (  # DispersionFit, fit_dispersion, measure_dispersion, TIMING_TOLERANCE: re-exported
    MOVING_FLOOR,
    TIMING_TOLERANCE,
    DispersionFit,
    fit_dispersion,
    measure_dispersion,
    timing_notes,
)

__all__ = [
    "MIN_FRAMES",
    "MIN_RESOLUTION",
    "TIMING_TOLERANCE",
    "BandVerdict",
    "DispersionFit",
    "SequenceAnalysis",
    "SequenceAccumulator",
    "analyze_heights",
    "band_comparison",
    "check_positive",
    "directional_moments",
    "fit_dispersion",
    "frequency_spectrum",
    "hann_window",
    "lateral_jacobian",
    "measure_dispersion",
    "seam_ratio",
    "whole_degrees",
]

def whole_degrees(angle: float | None) -> float | None:
    """An angle in radians as whole degrees in [0, 360), or None where it is not a number."""
    if angle is None or not math.isfinite(angle):
        return None
    return float(round(math.degrees(angle)) % 360)


#: Fewest frames analysed: the positive half of a T-point transform has T/2 − 1
#: frequencies, and a peak centroid needs two bins either side of it and room below
#: Nyquist; with fewer than 16 nothing is left to fit. 64 or more resolve a sea well.
MIN_FRAMES = 16
#: Smallest square region analysed, in texels (the synthesiser's own minimum tile).
MIN_RESOLUTION = 16
#: Frames are periodic when the RMS jump across their edges is at most this many times
#: the RMS step between neighbouring texels. For a field that repeats, the seam is just
#: another step (ratio ≈ 1, within about 10 % over the seams of a few 128² frames); for
#: one that does not, the two edges are unrelated and the ratio is 1/√(1 − ρ1), with ρ1
#: the correlation of neighbouring texels: above 1.4 once ρ1 > 0.5, i.e. once a wave spans
#: more than six texels. Rougher fields leak little from their seams, window or not
#: (common practice threshold).
_SEAM_RATIO_PERIODIC = 1.4
#: Frames pooled to decide periodicity before the first is transformed.
_DECIDE_FRAMES = 4
#: Memory for the kept part of each frame's transform (complex64), all frames together.
_CUBE_BYTES = 768 * 2**20
#: Work memory for one block of the time transform.
_BLOCK_BYTES = 48 * 2**20
#: Point time series for the frequency spectrum: at most this many points per side.
_SERIES_POINTS = 64
#: Half-octave band centres around the target's peak, in ωp, from 0.5 to 4.
_BAND_EXPONENTS = (-2, -1, 0, 1, 2, 3, 4)
#: A band is within expectation within ±25 % or three standard errors of its sampling
#: error if larger (see `band_comparison`): seven bands are judged at once and a band's
#: energy is skewed like a χ² of few degrees of freedom, so two would flag a correct sea
#: too often (common practice).
_BAND_TOLERANCE = 0.25
_BAND_ERRORS = 3.0
#: Bands holding less than this share of the target's variance on both sides are negligible.
_NEGLIGIBLE_BAND = 1e-3
#: Hann equivalent noise bandwidth in bins (Harris 1978, Table 1): neighbouring bins of a
#: windowed transform share information, which widens the sampling error by about this
#: factor per windowed dimension in variance.
_HANN_ENBW = 1.5
#: Lattice steps from k = 0 that a windowed spectrum cannot separate from the mean.
_WINDOWED_MIN_INDEX = 2.5
#: Directions in the polar histogram of the report.
_DIRECTION_BINS = 36


# -- results -----------------------------------------------------------------------------


@dataclass(frozen=True)
class BandVerdict:
    """Energy in one frequency band, measured against a target spectrum.

    The band is [omega_low, omega_high) rad/s, measured as the wavenumbers the target's
    dispersion maps it to, [k_low, k_high) rad/m, so that the comparison is one of
    spectral shape alone, independent of the timing (checked separately).
    """

    centre: float  # band centre in units of the target's ωp
    omega_low: float
    omega_high: float
    k_low: float
    k_high: float
    measured: float  # m²
    target: float  # m²
    ratio: float  # measured / target (inf when the target holds nothing)
    tolerance: float  # relative: ok within 1 ± tolerance
    verdict: str  # ok | too much | too little | negligible | not resolved
    partial: bool  # the band reaches beyond the wavenumbers the frames resolve


@dataclass(frozen=True)
class SequenceAnalysis:
    """Everything measured on a height sequence (SI units; angles in radians, the mean
    direction in (−π, π] counter-clockwise from +x, the direction waves travel towards;
    `to_dict` gives it in degrees from 0 to 360)."""

    frames: int
    resolution: int
    size: float
    fps: float
    periodic: bool
    seam_ratio: float
    m0: float
    hs: float
    tp: float
    tp_from_wavenumber: float
    tm01: float
    tm02: float
    mean_direction: float
    directional_spread: float
    significant_steepness: float
    folded_fraction: float | None
    dispersion: DispersionFit
    bands: tuple[BandVerdict, ...] | None
    nyquist_frequency: float
    frequency_resolution: float
    wavenumber_resolution: float
    analysed_wavenumber: float
    # spectra, for reports
    wavenumbers: NDArray[np.float64] = field(repr=False)
    wavenumber_spectrum: NDArray[np.float64] = field(repr=False)
    frequencies: NDArray[np.float64] = field(repr=False)
    frequency_spectrum: NDArray[np.float64] = field(repr=False)
    annulus_power: NDArray[np.float64] = field(repr=False)
    direction_bins: NDArray[np.float64] = field(repr=False)
    direction_energy: NDArray[np.float64] = field(repr=False)
    target_spectrum: NDArray[np.float64] | None = field(default=None, repr=False)
    target_hs: float | None = None
    target_tp: float | None = None
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """Every figure as plain JSON-ready values; angles in degrees (keys say so)."""
        fit = self.dispersion
        data: dict[str, Any] = {
            "frames": self.frames,
            "resolution": self.resolution,
            "size_m": self.size,
            "fps": self.fps,
            "duration_s": self.frames / self.fps,
            "periodic": self.periodic,
            "seam_ratio": self.seam_ratio,
            "m0_m2": self.m0,
            "hs_m": self.hs,
            "tp_s": self.tp,
            "tp_from_wavenumber_s": self.tp_from_wavenumber,
            "tm01_s": self.tm01,
            "tm02_s": self.tm02,
            "towards_deg": math.degrees(self.mean_direction) % 360.0,
            "directional_spread_deg": math.degrees(self.directional_spread),
            "significant_steepness": self.significant_steepness,
            "folded_fraction": self.folded_fraction,
            "nyquist_frequency_radps": self.nyquist_frequency,
            "frequency_resolution_radps": self.frequency_resolution,
            "wavenumber_resolution_radpm": self.wavenumber_resolution,
            "analysed_wavenumber_radpm": self.analysed_wavenumber,
            "dispersion": {
                "g_eff_over_g": fit.g_ratio,
                "g_eff_over_g_error": fit.g_ratio_error,
                "scale_factor": fit.scale_factor,
                "playback_speed": fit.playback_speed,
                "status": fit.status,
                "depth_m": fit.depth,
                "gravity_mps2": fit.gravity,
                "bins_used": fit.bins_used,
                "bins_energetic": fit.bins_energetic,
                "bins_aliased": fit.bins_aliased,
                "bins_too_slow": fit.bins_too_slow,
                "aliased_energy_fraction": fit.aliased_energy_fraction,
                "k_low_radpm": fit.k_low,
                "k_high_radpm": fit.k_high,
                "g_eff_over_g_low_half": fit.g_ratio_low,
                "g_eff_over_g_high_half": fit.g_ratio_high,
            },
            "target_hs_m": self.target_hs,
            "target_tp_s": self.target_tp,
            "bands": None if self.bands is None else [
                {
                    "centre_over_peak": band.centre,
                    "omega_low_radps": band.omega_low,
                    "omega_high_radps": band.omega_high,
                    "k_low_radpm": band.k_low,
                    "k_high_radpm": band.k_high,
                    "measured_m2": band.measured,
                    "target_m2": band.target,
                    "ratio": band.ratio,
                    "tolerance": band.tolerance,
                    "verdict": band.verdict,
                    "partial": band.partial,
                }
                for band in self.bands
            ],
            "wavenumber_spectrum": {
                "k_radpm": self.wavenumbers.tolist(),
                "density_m3": self.wavenumber_spectrum.tolist(),
            },
            "frequency_spectrum": {
                "omega_radps": self.frequencies.tolist(),
                "density_m2s": self.frequency_spectrum.tolist(),
            },
            "notes": list(self.notes),
        }
        return _json_ready(data)


def _json_ready(value: Any) -> Any:
    """NaN and infinities become None (JSON has neither); numpy scalars become Python."""
    if isinstance(value, dict):
        return {key: _json_ready(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [_json_ready(item) for item in value]
    if isinstance(value, (np.floating, float)):
        number = float(value)
        return number if math.isfinite(number) else None
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.bool_):
        return bool(value)
    return value


# -- pure measurements -------------------------------------------------------------------


def hann_window(n: int) -> NDArray[np.float64]:
    """The periodic ("DFT-even") Hann window of n points, w_j = ½ − ½cos(2πj/n) (Harris 1978)."""
    return 0.5 - 0.5 * np.cos(2.0 * np.pi * np.arange(n) / n)


def seam_ratio(heights: ArrayLike) -> float:
    """RMS jump across the edges of frames over the RMS step between neighbouring texels.

    ``heights`` is one frame (n, n) or several (T, n, n), pooled. About 1 for a field that
    repeats across its edges, above 1.4 for a resolved one that does not (see
    `_SEAM_RATIO_PERIODIC`); nan for constant frames.
    """
    h = np.asarray(heights, dtype=np.float64)
    inner = np.concatenate([np.diff(h, axis=-1).ravel(), np.diff(h, axis=-2).ravel()])
    seam = np.concatenate([(h[..., :, 0] - h[..., :, -1]).ravel(), (h[..., 0, :] - h[..., -1, :]).ravel()])
    inner_rms = math.sqrt(float(np.mean(inner**2)))
    if inner_rms == 0.0:
        return math.nan
    return math.sqrt(float(np.mean(seam**2))) / inner_rms


def frequency_spectrum(series: ArrayLike, fps: float) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """One-sided frequency spectrum S(ω) in m²·s/rad of time series, averaged over points.

    Parameters
    ----------
    series : array_like, shape (T, P)
        P time series of height in metres, T ≥ 2 samples at ``fps`` frames per second.
    fps : float
        Frames per second.

    Returns
    -------
    omega : ndarray
        ω_m = 2π m fps / T for m = 1 … T//2, rad/s.
    density : ndarray
        S(ω_m) with Σ S Δω ≈ the series' variance: Hann-windowed periodograms, divided by
        mean(w²) for the window's energy loss (Harris 1978).
    """
    x = np.asarray(series, dtype=np.float64)
    t = x.shape[0]
    w = hann_window(t)
    x = x - (w @ x) / w.sum()  # the window-weighted mean: no leakage from the mean
    spectrum = np.fft.rfft(x * w[:, None], axis=0) / t
    power = np.mean(np.abs(spectrum) ** 2, axis=1) / np.mean(w**2)
    d_omega = 2.0 * math.pi * fps / t
    one_sided = 2.0 * power[1:]
    if t % 2 == 0:
        one_sided[-1] = power[-1]  # the Nyquist bin has no mirror
    omega = d_omega * np.arange(1, t // 2 + 1)
    return omega, one_sided / d_omega


def _peak(x: NDArray[np.float64], y: NDArray[np.float64]) -> float:
    """Abscissa of the maximum of y(x) on a uniform grid, refined by a parabola through
    the three samples around it (common practice); nan if y holds no energy."""
    if y.size == 0 or not np.any(y > 0):
        return math.nan
    i = int(np.argmax(y))
    if 0 < i < y.size - 1:
        below, top, above = y[i - 1], y[i], y[i + 1]
        curvature = below - 2.0 * top + above
        offset = 0.5 * (below - above) / curvature if curvature < 0 else 0.0
        return float(x[i] + offset * (x[i + 1] - x[i]))
    return float(x[i])


def directional_moments(directions: ArrayLike, energy: ArrayLike) -> tuple[float, float]:
    """Mean direction and directional spread of energy at directions (radians).

    a1 + i b1 = Σ E e^{iθ} / Σ E; mean direction atan2(b1, a1), spread
    σ = √(2(1 − √(a1² + b1²))) (Kuik et al. 1988).
    """
    theta = np.asarray(directions, dtype=np.float64)
    e = np.asarray(energy, dtype=np.float64)
    total = float(e.sum())
    if not total > 0:
        return math.nan, math.nan
    a1 = float(np.sum(e * np.cos(theta))) / total
    b1 = float(np.sum(e * np.sin(theta))) / total
    resultant = min(math.hypot(a1, b1), 1.0)
    return math.atan2(b1, a1), math.sqrt(2.0 * (1.0 - resultant))


def lateral_jacobian(
    displacement_x: ArrayLike, displacement_y: ArrayLike, spacing: float, *, periodic: bool
) -> NDArray[np.float64]:
    """Jacobian determinant of the lateral map (x, y) → (x + Dx, y + Dy), dimensionless.

    J = (1 + ∂Dx/∂x)(1 + ∂Dy/∂y) − (∂Dx/∂y)(∂Dy/∂x); J < 0 where the surface folds.
    Derivatives are spectral for periodic frames, second-order central differences
    otherwise. ``spacing`` is the texel size in metres, displacements in metres.
    """
    dx = np.asarray(displacement_x, dtype=np.float64)
    dy = np.asarray(displacement_y, dtype=np.float64)
    if periodic:
        n_rows, n_cols = dx.shape
        ky = 2.0 * np.pi * np.fft.fftfreq(n_rows, d=spacing)[:, None]
        kx = 2.0 * np.pi * np.fft.rfftfreq(n_cols, d=spacing)[None, :]
        if n_rows % 2 == 0:
            ky[n_rows // 2] = 0.0  # the unpaired Nyquist row has no odd derivative
        if n_cols % 2 == 0:
            kx[:, -1] = 0.0
        fx, fy = np.fft.rfft2(dx), np.fft.rfft2(dy)
        shape = dx.shape
        dxdx = np.fft.irfft2(1j * kx * fx, s=shape)
        dxdy = np.fft.irfft2(1j * ky * fx, s=shape)
        dydx = np.fft.irfft2(1j * kx * fy, s=shape)
        dydy = np.fft.irfft2(1j * ky * fy, s=shape)
    else:
        dxdy, dxdx = np.gradient(dx, spacing)
        dydy, dydx = np.gradient(dy, spacing)
    return (1.0 + dxdx) * (1.0 + dydy) - dxdy * dydx


def _target_omnidirectional(target, k: NDArray[np.float64]) -> NDArray[np.float64]:
    """A target sea's omnidirectional wavenumber spectrum E(k) = S(ω(k))·dω/dk in m³/rad
    (so that ∫E dk = m0); 0 at k = 0."""
    kk = np.where(k > 0, k, 1.0)
    density = target.frequency_spectrum(target.angular_frequency(kk)) * target.group_velocity(kk)
    return np.where(k > 0, density, 0.0)


def _target_isotropic_power(target, k: NDArray[np.float64], dk: float) -> NDArray[np.float64]:
    """Variance a target sea puts on lattice points at |k| (m²), spread evenly over
    direction: E(k)·Δk²/(2πk)."""
    kk = np.where(k > 0, k, 1.0)
    return np.where(k > 0, _target_omnidirectional(target, k) * dk * dk / (2.0 * math.pi * kk), 0.0)


def band_comparison(
    power: ArrayLike,
    wavenumber: ArrayLike,
    weight: ArrayLike,
    dk: float,
    target,
    *,
    k_max: float | None = None,
    windowed: bool = False,
) -> tuple[BandVerdict, ...]:
    """Energy per half-octave band around the target's peak, measured against the target.

    Parameters
    ----------
    power : array_like
        Measured variance on each lattice point, m² (any shape; flattened).
    wavenumber : array_like
        |k| of each point, rad/m.
    weight : array_like
        How many lattice points each stands for (2 for a point of a half-plane whose
        mirror −k is left out, 1 otherwise).
    dk : float
        Lattice spacing 2π/L, rad/m.
    target : SeaState
        The sea it should be.
    k_max : float, optional
        Largest |k| compared, rad/m: the radius of the full annuli, π n / L (the corners
        of the lattice beyond it hold only part of each annulus, and a synthesiser may
        leave them empty). Default: every point.
    windowed : bool
        Whether the measurement was windowed (widens the sampling error by the Hann
        equivalent noise bandwidth, 1.5 bins per dimension, and leaves out |k| below
        2.5 Δk, which the window mixes with the mean).

    Returns
    -------
    tuple of BandVerdict
        Bands centred at 0.5, 0.71, 1, 1.41, 2, 2.83 and 4 ωp, each half an octave wide.

    Notes
    -----
    The target on each lattice point is the omnidirectional target spread evenly over
    direction (E(k)Δk²/2πk), summed over the same points as the measurement, so the
    tile's radial sampling is the same on both sides, whatever the sea's direction.

    A random sea's band energy varies from one realisation to the next. On a lattice each
    wave pair (k, −k) carries two independent complex Gaussian amplitudes, so its power P
    (averaged over time) is a sum of two exponential variables of mean P̄/2: Var P = P̄²/2
    and E P² = 3P̄²/2. The band sum B = Σ wP therefore has Var B = Σ w²P̄²/2 ≈ Σ w²P²/3,
    estimated from the measured powers, so that a sea concentrated in few directions (few
    lattice points) gets the wider tolerance it needs; a windowed measurement shares
    information between neighbouring bins and widens it by the Hann equivalent noise
    bandwidth (1.5 bins per dimension, Harris 1978). A band is "ok" within
    ±max(25 %, 3 standard errors); time averaging of a sea whose amplitudes evolve only
    narrows the true error, so the tolerance errs on the side of "ok".
    """
    p, k, w = (
        np.ravel(a)
        for a in np.broadcast_arrays(*(np.asarray(v, dtype=np.float64) for v in (power, wavenumber, weight)))
    )
    if k_max is None:
        k_max = float(k.max())
    # A window spreads each wavenumber over ±2 lattice steps (the Hann main lobe): the
    # first two annuli of a windowed measurement hold the mean's and the longest waves'
    # leakage, not their own energy.
    k_min = _WINDOWED_MIN_INDEX * dk if windowed else 0.0
    compared = (k <= k_max * (1.0 + 1e-12)) & (k >= k_min)
    p, k, w = p[compared], k[compared], w[compared]
    expected = _target_isotropic_power(target, k, dk)
    total_target = target.moment(0)
    peak = target.peak_frequency()
    verdicts = []
    for exponent in _BAND_EXPONENTS:
        centre = 2.0 ** (exponent / 2.0)
        w_low, w_high = peak * centre * 2.0 ** -0.25, peak * centre * 2.0 ** 0.25
        k_low, k_high = (float(v) for v in target.wavenumber(np.array([w_low, w_high])))
        inside = (k >= k_low) & (k < k_high)
        measured = float(np.sum(w[inside] * p[inside]))
        expect = float(np.sum(w[inside] * expected[inside]))
        if not inside.any() or k_low > k_max:
            verdicts.append(BandVerdict(centre, w_low, w_high, k_low, k_high, measured, expect,
                                        math.nan, math.nan, "not resolved", True))
            continue
        # Sampling error from the measured powers (see Notes): Var ≈ Σ w²P²/3.
        spread = math.sqrt(float(np.sum((w[inside] * p[inside]) ** 2)) / 3.0)
        if windowed:
            spread *= _HANN_ENBW  # variance × ENBW² over two windowed dimensions
        relative_error = spread / measured if measured > 0 else math.inf
        tolerance = max(_BAND_TOLERANCE, _BAND_ERRORS * relative_error)
        ratio = measured / expect if expect > 0 else (math.inf if measured > 0 else math.nan)
        if expect < _NEGLIGIBLE_BAND * total_target and measured < _NEGLIGIBLE_BAND * total_target:
            verdict = "negligible"
        elif ratio > 1.0 + tolerance:
            verdict = "too much"
        elif ratio < 1.0 - min(tolerance, 0.9):
            verdict = "too little"
        else:
            verdict = "ok"
        partial = k_high > k_max or k_low < max(dk, k_min)
        verdicts.append(BandVerdict(centre, w_low, w_high, k_low, k_high, measured, expect,
                                    ratio, tolerance, verdict, partial))
    return tuple(verdicts)


# -- the streaming accumulator -----------------------------------------------------------


class SequenceAccumulator:
    """Accumulates a height sequence frame by frame; :meth:`finish` measures it.

    Each :meth:`add` transforms one frame (windowed unless periodic), adds its power to
    the 2-D spectrum, keeps the low-wavenumber part of its transform for the 3-D
    analysis and samples a grid of points for the frequency spectrum. Memory: about
    ``frame_count × (2K)(K+1) × 8`` bytes for the kept transforms, with K the largest
    wavenumber index kept (all of the lattice when that fits in ``max_cube_bytes``).

    Parameters
    ----------
    frame_count : int
        Frames that will be added (≥ `MIN_FRAMES`).
    resolution : int
        Texels per side n of every frame (≥ 16).
    size : float
        Side of the area a frame covers, metres.
    fps : float
        Frames per second.
    periodic : bool or None
        Whether frames repeat across their edges; None decides from the first frame
        (`seam_ratio` of the first 4 frames ≤ 1.4). Non-periodic frames are Hann-windowed.
    max_cube_bytes : int
        Memory for the kept transforms.
    fft_workers : int or None
        Threads for the transforms (None: all cores).

    Examples
    --------
    >>> acc = SequenceAccumulator(64, 128, 200.0, 24.0)      # doctest: +SKIP
    >>> for frame in frames: acc.add(frame)                   # doctest: +SKIP
    >>> result = acc.finish(depth=5.0)                        # doctest: +SKIP
    """

    def __init__(
        self,
        frame_count: int,
        resolution: int,
        size: float,
        fps: float,
        *,
        periodic: bool | None = None,
        max_cube_bytes: int = _CUBE_BYTES,
        fft_workers: int | None = None,
    ) -> None:
        if isinstance(frame_count, bool) or not isinstance(frame_count, (int, np.integer)) or frame_count < MIN_FRAMES:
            raise ValueError(
                f"frames: {frame_count!r} frames is too few; the frequency analysis needs at least "
                f"{MIN_FRAMES} (64 or more resolve a sea well)"
            )
        if isinstance(resolution, bool) or not isinstance(resolution, (int, np.integer)) or resolution < MIN_RESOLUTION:
            raise ValueError(
                f"resolution: {resolution!r} is not allowed; allowed: an integer >= {MIN_RESOLUTION} texels"
            )
        check_positive("tile size", size, "metres")
        check_positive("fps", fps, "frames per second")
        self.frame_count = int(frame_count)
        self.resolution = n = int(resolution)
        self.size = float(size)
        self.fps = float(fps)
        self.periodic = periodic
        self.fft_workers = fft_workers if fft_workers is not None else (os.cpu_count() or 1)
        self.seam_ratio = math.nan
        # Kept wavenumber indices: |ny| ≤ K rows, 0 ≤ nx ≤ K columns of the half plane.
        half = n // 2
        per_index = 2.0 * self.frame_count * 8.0
        keep = int(min(half, max(8, math.isqrt(int(max_cube_bytes / per_index)))))
        rows = np.fft.fftfreq(n, d=1.0 / n).astype(np.int64)
        self._rows = np.flatnonzero(np.abs(rows) <= keep)
        self._cols = keep + 1
        self.kept_index = keep
        self._cube = np.empty((self.frame_count, self._rows.size, self._cols), dtype=np.complex64)
        self._power = np.zeros((n, n // 2 + 1), dtype=np.float64)
        self._stride = max(1, -(-n // _SERIES_POINTS))
        points = len(range(0, n, self._stride))
        self._series = np.empty((self.frame_count, points * points), dtype=np.float32)
        self._means = np.empty(self.frame_count)
        self._variances = np.empty(self.frame_count)
        self._folded: list[float] = []
        self._window: NDArray[np.float32] | None = None
        self._pending: list = []
        self._decided = False
        self._count = 0

    # -- per frame ---------------------------------------------------------------------
    def add(self, height: ArrayLike, lateral: tuple[ArrayLike, ArrayLike] | None = None) -> None:
        """Add the next frame: height in metres, (n, n); optionally the lateral
        displacement (Dx, Dy) in metres along x (columns) and y (rows), for folding.

        The first few frames are held until periodicity is decided (`seam_ratio` pooled
        over 4 frames), then every frame is transformed as it arrives.
        """
        received = self._count + len(self._pending)
        if received >= self.frame_count:
            raise ValueError(f"frames: more than the {self.frame_count} frames announced")
        n = self.resolution
        h = np.array(height, dtype=np.float32)
        if h.shape != (n, n):
            raise ValueError(f"frame {received}: shape {h.shape}; expected ({n}, {n}) like the first")
        if not np.all(np.isfinite(h)):
            raise ValueError(f"frame {received}: holds NaN or infinite heights")
        if self._decided:
            self._add(h, lateral)
            return
        # Pool the first few frames to decide whether the frames repeat across their edges.
        self._pending.append((h, None if lateral is None else (np.array(lateral[0]), np.array(lateral[1]))))
        if len(self._pending) == min(_DECIDE_FRAMES, self.frame_count):
            self._decide()

    def _decide(self) -> None:
        n = self.resolution
        self.seam_ratio = seam_ratio(np.stack([h for h, _ in self._pending]))
        if self.periodic is None:
            self.periodic = bool(self.seam_ratio <= _SEAM_RATIO_PERIODIC)
        if not self.periodic:
            line = hann_window(n)
            self._window = np.outer(line, line).astype(np.float32)
        self._decided = True
        pending, self._pending = self._pending, []
        for h, lateral in pending:
            self._add(h, lateral)

    def _add(self, h: NDArray[np.float32], lateral) -> None:
        import scipy.fft

        n = self.resolution
        mean = float(np.mean(h, dtype=np.float64))
        self._means[self._count] = mean
        self._variances[self._count] = float(np.mean((h - mean) ** 2, dtype=np.float64))
        if self._window is None:
            x = h - np.float32(mean)
        else:
            w = self._window
            weighted_mean = float(np.sum(h * w, dtype=np.float64) / np.sum(w, dtype=np.float64))
            x = (h - np.float32(weighted_mean)) * w
        spectrum = scipy.fft.rfft2(x, workers=self.fft_workers)
        spectrum /= np.float32(n * n)
        self._power += spectrum.real.astype(np.float64) ** 2 + spectrum.imag.astype(np.float64) ** 2
        self._cube[self._count] = spectrum[self._rows, : self._cols]
        self._series[self._count] = h[:: self._stride, :: self._stride].ravel()
        if lateral is not None:
            jac = lateral_jacobian(lateral[0], lateral[1], self.size / n, periodic=bool(self.periodic))
            self._folded.append(float(np.mean(jac < 0.0)))
        self._count += 1

    # -- the measurement ---------------------------------------------------------------
    def finish(self, *, depth: float = np.inf, gravity: float = GRAVITY, target=None) -> SequenceAnalysis:
        """Measure the sequence.

        Parameters
        ----------
        depth : float
            Water depth in metres for the dispersion relation (inf = deep).
        gravity : float
            Declared gravity, m/s².
        target : SeaState, optional
            A sea to compare the spectrum with, band by band.
        """
        if self._count != self.frame_count:
            raise ValueError(f"frames: {self._count} added of the {self.frame_count} announced")
        depth = check_depth(depth)
        n, t = self.resolution, self.frame_count
        dk = 2.0 * math.pi / self.size
        notes: list[str] = []

        # Variance over all frames about the grand mean (per-frame means may differ in a
        # crop, and that difference is wave energy too).
        m0 = float(np.mean(self._variances) + np.var(self._means))
        hs = 4.0 * math.sqrt(m0)

        # Wavenumber spectrum on the half plane, window loss divided out.
        window_power = 1.0 if self._window is None else float(np.mean(self._window.astype(np.float64) ** 2))
        power = self._power / (t * window_power)
        ny = np.fft.fftfreq(n, d=1.0 / n)[:, None]
        nx = np.arange(n // 2 + 1)[None, :]
        radius = np.hypot(nx, ny)
        weight = np.where((nx == 0) | ((n % 2 == 0) & (nx == n // 2)), 1.0, 2.0)
        annulus = np.rint(radius).astype(np.int64)
        n_annuli = n // 2 + 1
        inside = annulus < n_annuli
        omni = np.bincount(annulus[inside], weights=(weight * power)[inside], minlength=n_annuli)
        k_bins = np.arange(n_annuli) * dk
        density = omni / dk
        # Tp from the wavenumber peak: S(ω) = E(k)/c_g at the annuli, peak in k, then ω(k).
        c_g = group_velocity(np.where(k_bins > 0, k_bins, dk), depth, gravity=gravity)
        first = 1 if self._window is None else math.ceil(_WINDOWED_MIN_INDEX)  # past the mean's leakage
        k_peak = _peak(k_bins[first:], density[first:] / c_g[first:])
        tp_k = 2.0 * math.pi / float(angular_frequency(k_peak, depth, gravity=gravity)) if k_peak > 0 else math.nan

        # Frequency spectrum of point time series.
        omega_t, s_omega = frequency_spectrum(self._series, self.fps)
        d_omega = 2.0 * math.pi * self.fps / t
        still = not float(np.sum(s_omega) * d_omega) > MOVING_FLOOR * m0
        w_peak = math.nan if still else _peak(omega_t, s_omega)
        tp = 2.0 * math.pi / w_peak if w_peak > 0 else math.nan
        moments = [float(np.sum(omega_t**order * s_omega) * d_omega) for order in (0, 1, 2)]
        tm01 = 2.0 * math.pi * moments[0] / moments[1] if moments[1] > 0 and not still else math.nan
        tm02 = 2.0 * math.pi * math.sqrt(moments[0] / moments[2]) if moments[2] > 0 and not still else math.nan
        if still:
            notes.append("the frames do not change over time: there are no moving waves to time")

        # Frequency–wavenumber spectrum of the kept part of the lattice.
        nyquist = math.pi * self.fps
        cube = self._omega_k(dk)
        fit = measure_dispersion(
            cube["annulus_power"], cube["k_mean"], cube["omega"], nyquist=nyquist, depth=depth, gravity=gravity,
            variance=m0,
        )
        duration = f"{t / self.fps:.3g} s"
        mean_direction, spread, direction_energy, direction_notes = _directions(
            cube, fit, self.kept_index, still, duration
        )
        notes += direction_notes

        steepness = 2.0 * math.pi * hs / (gravity * tp * tp) if tp > 0 else math.nan
        folded = float(np.mean(self._folded)) if self._folded else None

        bands = None
        target_spectrum = None
        target_hs = target_tp = None
        if target is not None:
            target_stats = target.statistics()
            target_hs, target_tp = target_stats.hs, target_stats.tp
            bands = band_comparison(
                power, radius * dk, weight, dk, target, k_max=n // 2 * dk, windowed=self._window is not None
            )
            target_spectrum = _target_omnidirectional(target, k_bins)

        notes += timing_notes(fit, w_peak, nyquist, self.fps, t)
        if self.kept_index < n // 2:
            notes.append(
                f"the frequency analysis keeps wavenumbers up to {self.kept_index * dk:.3g} rad/m "
                f"(of {n // 2 * dk:.3g}) to bound memory"
            )

        return SequenceAnalysis(
            frames=t,
            resolution=n,
            size=self.size,
            fps=self.fps,
            periodic=bool(self.periodic),
            seam_ratio=self.seam_ratio,
            m0=m0,
            hs=hs,
            tp=tp,
            tp_from_wavenumber=tp_k,
            tm01=tm01,
            tm02=tm02,
            mean_direction=mean_direction,
            directional_spread=spread,
            significant_steepness=steepness,
            folded_fraction=folded,
            dispersion=fit,
            bands=bands,
            nyquist_frequency=nyquist,
            frequency_resolution=d_omega,
            wavenumber_resolution=dk,
            analysed_wavenumber=self.kept_index * dk,
            wavenumbers=k_bins[1:],
            wavenumber_spectrum=density[1:],
            frequencies=omega_t,
            frequency_spectrum=s_omega,
            annulus_power=cube["annulus_power"],
            direction_bins=0.5 * (_direction_edges()[1:] + _direction_edges()[:-1]),
            direction_energy=direction_energy,
            target_spectrum=None if target_spectrum is None else target_spectrum[1:],
            target_hs=target_hs,
            target_tp=target_tp,
            notes=tuple(notes),
        )

    def _omega_k(self, dk: float) -> dict[str, NDArray]:
        """Time transform of the kept lattice, block by block, reduced to what is measured:
        per annulus and positive frequency the power; per lattice point the power running
        towards +k̂ and towards −k̂."""
        import scipy.fft
        import scipy.sparse

        t, n = self.frame_count, self.resolution
        rows = np.fft.fftfreq(n, d=1.0 / n)[self._rows]
        cols = np.arange(self._cols)
        ny, nx = np.meshgrid(rows, cols, indexing="ij")
        radius = np.hypot(nx, ny)
        # Each half-plane point stands for itself and its mirror −k (kept as its
        # negative frequencies); the self-mirrored columns nx = 0 (and n/2) hold both.
        half_weight = np.where((nx == 0) | ((n % 2 == 0) & (nx == n // 2)), 0.5, 1.0)
        point_annulus = np.rint(radius).astype(np.int64)
        n_annuli = self.kept_index + 1
        n_freq = (t - 1) // 2  # positive frequencies below Nyquist
        positive = t - np.arange(1, n_freq + 1)  # numpy index of ω_phys = +m Δω
        negative = np.arange(1, n_freq + 1)  # numpy index of ω_phys = −m Δω
        w_t = hann_window(t).astype(np.float32)
        w_power = float(np.mean(w_t.astype(np.float64) ** 2))
        annulus_power = np.zeros((n_annuli, n_freq))
        forward = np.empty(radius.shape)
        backward = np.empty(radius.shape)
        per_row = t * self._cols * 8 * 3
        block = max(1, _BLOCK_BYTES // per_row)
        for start in range(0, rows.size, block):
            stop = min(start + block, rows.size)
            chunk = self._cube[:, start:stop, :]
            mean = np.tensordot(w_t, chunk, axes=(0, 0)) / w_t.sum()
            chunk = (chunk - mean[None]) * w_t[:, None, None]
            spectrum = scipy.fft.fft(chunk, axis=0, workers=self.fft_workers, overwrite_x=True)
            spectrum /= np.float32(t)
            power = (spectrum.real**2 + spectrum.imag**2).astype(np.float64) / w_power
            fwd = power[positive].reshape(n_freq, -1)
            bwd = power[negative].reshape(n_freq, -1)
            hw = half_weight[start:stop].ravel()
            forward[start:stop] = (fwd.sum(axis=0) * hw).reshape(stop - start, -1)
            backward[start:stop] = (bwd.sum(axis=0) * hw).reshape(stop - start, -1)
            bins = point_annulus[start:stop].ravel()
            within = bins < n_annuli
            onehot = scipy.sparse.csr_matrix(
                (hw[within], (bins[within], np.flatnonzero(within))), shape=(n_annuli, bins.size)
            )
            annulus_power += onehot @ (fwd + bwd).T
        total = forward + backward
        within = point_annulus < n_annuli
        sums = np.bincount(point_annulus[within], weights=total[within], minlength=n_annuli)
        k_sums = np.bincount(point_annulus[within], weights=(total * radius)[within], minlength=n_annuli)
        k_mean = np.where(sums > 0, k_sums / np.where(sums > 0, sums, 1.0), np.arange(n_annuli)) * dk
        return {
            "annulus_power": annulus_power,
            "k_mean": k_mean,
            "omega": 2.0 * math.pi * self.fps / t * np.arange(1, n_freq + 1),
            "point_annulus": point_annulus,
            "theta": np.arctan2(ny, nx),
            "forward": forward,
            "backward": backward,
        }


def _direction_edges() -> NDArray[np.float64]:
    """Edges of the direction bins of the polar histogram, radians."""
    return np.linspace(-math.pi, math.pi, _DIRECTION_BINS + 1)


def _directions(
    cube: dict[str, NDArray], fit: DispersionFit, kept_index: int, still: bool, duration: str
) -> tuple[float, float, NDArray[np.float64], list[str]]:
    """Mean direction of travel, spread, energy per direction bin, and notes.

    Only annuli below the first aliased one count (above it waves can appear in the
    wrong half of the spectrum), and only those whose frequency is resolved: a wave
    within 3 bins of ω = 0 leaks into the opposite half through the window and would
    read as running both ways.
    """
    notes: list[str] = []
    aliased = np.flatnonzero(fit.aliased)
    cut = int(aliased.min()) - 1 if aliased.size else kept_index
    annulus = cube["point_annulus"]
    total = cube["forward"] + cube["backward"]
    below_cut = (annulus >= 1) & (annulus <= cut)
    keep = below_cut & fit.resolved[np.minimum(annulus, fit.resolved.size - 1)]
    all_energy = float(np.sum(total[below_cut]))
    kept_energy = float(np.sum(total[keep]))
    if not still and not kept_energy > MOVING_FLOOR * all_energy:
        keep = below_cut
        notes.append(
            f"the waves are too slow for a {duration} sequence to tell which way they run: the directional "
            f"spread reads wider than it is"
        )
    elif not still and kept_energy < 0.5 * all_energy:
        notes.append(
            f"most of the energy is in waves too slow for a {duration} sequence to tell which way they run; "
            f"the direction comes from the {kept_energy / all_energy:.0%} that are resolved"
        )
    theta = np.concatenate([cube["theta"][keep], cube["theta"][keep] + math.pi])
    energy = np.concatenate([cube["forward"][keep], cube["backward"][keep]])
    if still:  # round-off has no direction
        energy = np.zeros_like(energy)
    mean, spread = directional_moments(theta, energy)
    histogram = np.histogram(np.angle(np.exp(1j * theta)), bins=_direction_edges(), weights=energy)[0]
    return mean, spread, histogram, notes


def analyze_heights(
    frames: ArrayLike | Iterable[ArrayLike],
    size: float,
    fps: float,
    *,
    depth: float = np.inf,
    gravity: float = GRAVITY,
    target=None,
    periodic: bool | None = None,
    lateral: Iterable[tuple[ArrayLike, ArrayLike]] | None = None,
    max_cube_bytes: int = _CUBE_BYTES,
) -> SequenceAnalysis:
    """Measure a height sequence held in memory (or any sequence of frames).

    Parameters
    ----------
    frames : array_like, shape (T, n, n), or a sized sequence of (n, n) arrays
        Height in metres, rows along y, columns along x.
    size : float
        Side of the area a frame covers, metres.
    fps : float
        Frames per second.
    depth, gravity, target
        As in :meth:`SequenceAccumulator.finish`.
    periodic : bool or None
        Whether the frames repeat across their edges (None: detect).
    lateral : sequence of (Dx, Dy), optional
        Lateral displacement of each frame in metres, for the folded fraction.

    Examples
    --------
    >>> import numpy as np
    >>> x = np.arange(64) * 100.0 / 64
    >>> k = 2 * np.pi * 4 / 100.0; w = np.sqrt(9.80665 * k)
    >>> frames = [np.cos(k * x[None, :] - w * i / 10.0) * np.ones((64, 1)) for i in range(64)]
    >>> result = analyze_heights(frames, 100.0, 10.0)
    >>> round(result.hs, 2), round(float(np.degrees(result.mean_direction)))
    (2.83, 0)
    """
    sequence = frames if hasattr(frames, "__len__") else list(frames)
    count = len(sequence)  # type: ignore[arg-type]
    if count < MIN_FRAMES:
        raise ValueError(
            f"frames: {count} frames is too few; the frequency analysis needs at least {MIN_FRAMES} "
            f"(64 or more resolve a sea well)"
        )
    first = np.asarray(sequence[0])  # type: ignore[index]
    if first.ndim != 2 or first.shape[0] != first.shape[1]:
        raise ValueError(f"frames: frame shape {first.shape}; expected square (n, n) frames")
    accumulator = SequenceAccumulator(
        count, first.shape[0], size, fps, periodic=periodic, max_cube_bytes=max_cube_bytes
    )
    laterals = list(lateral) if lateral is not None else None
    if laterals is not None and len(laterals) != count:
        raise ValueError(f"lateral: {len(laterals)} frames for {count} height frames; expected one each")
    for index in range(count):
        accumulator.add(sequence[index], None if laterals is None else laterals[index])  # type: ignore[index]
    return accumulator.finish(depth=depth, gravity=gravity, target=target)


def check_positive(name: str, value: object, unit: str) -> float:
    """``value`` as a float when it is a finite number above 0, else ValueError naming
    ``name`` (a parameter or command-line option), the value and ``unit``."""
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise ValueError(f"{name}: {value!r} is not a number; allowed: a finite number > 0 {unit}")
    number = float(value)
    if not (math.isfinite(number) and number > 0):
        raise ValueError(f"{name}: {value!r} is not allowed; allowed: a finite number > 0 {unit}")
    return number
