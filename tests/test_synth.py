"""Tests for oceanfield.surface.synth: the synthesised surface, checked on its output.

Every check here renders frames and measures them — variance, height distribution, wave
speed, seams, loops, normals, velocity, bits — against linear wave theory and the
conventions of DESIGN.md, not against the formulas inside the synthesiser. Statistical
checks use a fixed set of seeds (so they are deterministic) and state their error model.
"""

from __future__ import annotations

import functools
import math
import re

import numpy as np
import pytest
from scipy import stats

import oceanfield.surface.synth as synth
from oceanfield.surface import _kernels
from oceanfield.surface.amplitudes import cell_variance
from oceanfield import Ocean, SeaState, Tile, height_period, wind_sea
from oceanfield.physics.dispersion import angular_frequency, phase_velocity, wavenumber

# -- shared tolerances of this file, each with its reason ---------------------------------

#: float32 holds a value to 2⁻²⁴ ≈ 6e-8 of itself; after an FFT of up to 256² points and a
#: few operations the fields carry errors of some ulps of their largest value. 1e-5 of
#: the field's scale leaves a wide margin and still catches any real mismatch.
FLOAT32_FIELD = 1e-5

#: Number of standard errors a sampled statistic may sit from its expectation: a fixed
#: seed set makes each test deterministic, and 4σ keeps a correct synthesiser passing
#: whichever seeds are chosen (two-sided probability 6e-5).
SIGMAS = 4.0

#: Issue target for measured wave speeds and for Hs against the sea's own Hs (relative).
SPEED = 0.03
HS = 0.05

#: Mean angle between spectral and finite-difference normals, in degrees (issue target).
NORMAL_ANGLE_DEG = 0.5


# -- helpers -------------------------------------------------------------------------------


def _sea(hs=2.0, tp=8.0, *, spread_deg=30.0, depth=np.inf, **options) -> SeaState:
    component = height_period(hs, tp, spread=math.radians(spread_deg), depth=depth, **options)
    return SeaState((component,), depth=depth)


def _as64(array) -> np.ndarray:
    return np.asarray(array, dtype=np.float64)


def _lattice_psi(sea: SeaState, tile: Tile) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """∫ Ψ over each lattice cell on the carried lattice (the expected variance per wave
    index, DESIGN.md "Amplitudes"), kx and ky."""
    ny, nx = tile.wave_indices()
    ky, kx = tile.wavenumbers()
    carried = tile.carried(ny, nx)
    psi = np.where(carried, cell_variance(sea, tile.dk, ny, nx), 0.0)
    return psi, np.broadcast_to(kx, psi.shape), np.broadcast_to(ky, psi.shape)


def _single_wave(ocean: Ocean, nx: int, ny: int, amplitude: float, phase: float) -> None:
    """Replace the ocean's amplitudes by one wave: h = amplitude·cos(k·x − ωt + phase).

    With ĥ(k,t) = h0(k)e^{−iωt} + conj h0(−k) e^{+iωt} and h0(−k) = 0, a single h0(k) of
    A/2·e^{iφ} gives h = A cos(k·x − ωt + φ) (DESIGN.md, "Time").
    """
    n = ocean.tile.resolution
    h0 = np.zeros((n, n), np.complex64)
    h0[ny % n, nx % n] = 0.5 * amplitude * np.exp(1j * phase)
    ocean._h0 = h0


def _wave_phase(field: np.ndarray, tile: Tile, kx: float, ky: float) -> tuple[float, float]:
    """Amplitude A and phase φ0 of field ≈ A cos(k·x − φ0), by projection on the lattice
    wave (exact for a lattice wavenumber: the sampled cosines are orthogonal)."""
    y, x = tile.positions()
    arg = kx * x + ky * y
    a = 2.0 * np.mean(_as64(field) * np.cos(arg))
    b = 2.0 * np.mean(_as64(field) * np.sin(arg))
    return math.hypot(a, b), math.atan2(b, a)


def _peak(correlation: np.ndarray) -> np.ndarray:
    """Location (dy, dx) in texels of a periodic array's maximum, to sub-texel precision
    by a parabola through the maximum and its two neighbours along each axis."""
    n = correlation.shape[0]
    top = np.unravel_index(int(np.argmax(correlation)), correlation.shape)
    location = []
    for axis in (0, 1):
        before, after = list(top), list(top)
        before[axis] = (top[axis] - 1) % n
        after[axis] = (top[axis] + 1) % n
        a, b, c = correlation[tuple(before)], correlation[top], correlation[tuple(after)]
        offset = 0.5 * (a - c) / (a - 2.0 * b + c)
        position = top[axis] + offset
        location.append(position - n if position > n / 2 else position)
    return np.array(location)


# -- single-wave conventions (DESIGN.md) ---------------------------------------------------


@pytest.mark.parametrize("depth", [np.inf, 5.0])
@pytest.mark.parametrize(("nx", "ny"), [(3, 0), (2, 1), (-1, 4), (0, -3)])
def test_single_wave_travels_along_k_at_the_phase_speed(nx, ny, depth):
    """One wave h = A cos(k·x − ωt + φ): its crest moves by c·Δt along +k̂ (DESIGN.md,
    "waves travel along +k"), with c = ω/k from linear dispersion, deep and 5 m deep
    (Stewart 2008, eq. 16.6; USACE CEM II-1). Measured from the crest's position in the
    rendered height, with Δt giving a shift of a fifth of a wavelength."""
    tile = Tile(120.0, 64)
    ocean = Ocean(_sea(depth=depth), tile, seed=1, lateral_factor=0.0, bound_waves=False)  # linear waves
    _single_wave(ocean, nx, ny, amplitude=0.4, phase=0.7)
    kx, ky = nx * tile.dk, ny * tile.dk
    k = math.hypot(kx, ky)
    c = float(phase_velocity(k, depth))
    dt = 0.2 * (2 * math.pi / k) / c
    amplitude0, phase0 = _wave_phase(ocean.frame(10.0).height, tile, kx, ky)
    amplitude1, phase1 = _wave_phase(ocean.frame(10.0 + dt).height, tile, kx, ky)
    assert amplitude0 == pytest.approx(0.4, rel=FLOAT32_FIELD)
    assert amplitude1 == pytest.approx(0.4, rel=FLOAT32_FIELD)
    # A crest sits where k·x = φ0; a positive change of φ0 moves it forward along +k̂.
    advance = math.remainder(phase1 - phase0, 2 * math.pi) / k
    assert advance > 0, "the wave runs against its wavenumber"
    assert advance == pytest.approx(c * dt, rel=FLOAT32_FIELD)
    # And the whole field is that cosine, not just its projection.
    y, x = tile.positions()
    expected = 0.4 * np.cos(kx * x + ky * y - phase0)
    np.testing.assert_allclose(ocean.frame(10.0).height, expected, rtol=0, atol=FLOAT32_FIELD * 0.4)


@pytest.mark.parametrize(("nx", "ny"), [(4, 0), (3, -2)])
@pytest.mark.parametrize("lateral", [0.5, 1.0, 2.0])
def test_single_wave_lateral_offset_points_toward_crests(nx, ny, lateral):
    """For h = A cos φ the lateral offset is −λ A sin φ k̂ (DESIGN.md, "Lateral
    displacement"; the Gerstner wave's horizontal motion, Tessendorf 2001): a point just behind a crest (φ < 0)
    moves forward, one just ahead moves back — both toward the crest. The Jacobian is
    1 − λkA cos φ: the crest is compressed to 1 − λkA, the trough stretched to 1 + λkA
    (Gerstner; Tessendorf 2001)."""
    tile = Tile(100.0, 64)
    ocean = Ocean(_sea(), tile, seed=2, lateral_factor=lateral)
    amplitude = 0.3
    _single_wave(ocean, nx, ny, amplitude=amplitude, phase=-0.4)
    fields = ocean.frame(1.3)
    kx, ky = nx * tile.dk, ny * tile.dk
    k = math.hypot(kx, ky)
    _, phase0 = _wave_phase(fields.height, tile, kx, ky)
    y, x = tile.positions()
    phi = kx * x + ky * y - phase0  # h = A cos φ
    scale = FLOAT32_FIELD * lateral * amplitude
    np.testing.assert_allclose(fields.displacement_x, -lateral * amplitude * np.sin(phi) * kx / k, rtol=0, atol=scale)
    np.testing.assert_allclose(fields.displacement_y, -lateral * amplitude * np.sin(phi) * ky / k, rtol=0, atol=scale)
    along = (_as64(fields.displacement_x) * kx + _as64(fields.displacement_y) * ky) / k
    behind = np.sin(phi) < -0.1  # just behind a crest in the direction of travel
    ahead = np.sin(phi) > 0.1
    assert np.all(along[behind] > 0) and np.all(along[ahead] < 0)
    # Horizontal stretch of the surface: 1 − λkA at crests, 1 + λkA at troughs.
    stretch = 1.0 - lateral * k * amplitude * np.cos(phi)
    np.testing.assert_allclose(fields.jacobian, stretch, rtol=0, atol=FLOAT32_FIELD * (1 + lateral * k * amplitude))


def test_single_wave_crest_stretch_from_positions():
    """The spacing of displaced texels at a crest, measured from the positions x + Dx
    themselves (central difference), is 1 − λkA times the rest spacing, to the
    difference's truncation (kΔx)²/6 (Tessendorf 2001, Gerstner wave)."""
    tile = Tile(64.0, 64)
    ocean = Ocean(_sea(), tile, seed=0, lateral_factor=1.2)
    amplitude, n_wave = 0.5, 2
    _single_wave(ocean, n_wave, 0, amplitude=amplitude, phase=0.0)
    fields = ocean.frame(0.0)
    k = n_wave * tile.dk
    x = tile.positions()[1][0]
    position = x + _as64(fields.displacement_x[5])
    crest = int(np.argmax(_as64(fields.height[5])))
    assert crest == 0  # the crest of phase 0 at t = 0 sits on texel 0
    spacing = (position[1] - (position[-1] - tile.size)) / (2 * tile.spacing)
    expected = 1 - 1.2 * k * amplitude
    truncation = 1.2 * k * amplitude * (k * tile.spacing) ** 2 / 6
    assert spacing == pytest.approx(expected, abs=truncation + FLOAT32_FIELD)
    trough = int(np.argmin(_as64(fields.height[5])))
    spacing = (position[trough + 1] - position[trough - 1]) / (2 * tile.spacing)
    assert spacing == pytest.approx(1 + 1.2 * k * amplitude, abs=truncation + FLOAT32_FIELD)


# -- wave speed and direction of a narrow-band sea ----------------------------------------


@pytest.mark.parametrize("depth", [np.inf, 5.0])
@pytest.mark.parametrize("direction_deg", [0.0, 60.0])
def test_narrow_band_sea_moves_at_the_phase_speed(depth, direction_deg):
    """The peak of the cross-correlation of frames t and t + Δt moves by c·Δt along the
    sea's mean direction, c the phase speed at the spectral peak from linear dispersion
    (Stewart 2008, eq. 16.6), deep and 5 m deep, within 3 % (issue target).

    The sea is narrow-band: JONSWAP γ = 10, 5° spread, and a cut-off exp(−k²l²) with
    l = 0.2 L_p that removes the high-frequency tail (left in, the tail pulls the
    correlation peak toward slower, shorter-wave speeds, measured −3 to −7 %). Δt moves
    the crests 0.4 L_p: ~10 texels, under half a wavelength so the peak cannot alias. The
    correlation ridge runs along the crests, so only the along-direction shift is
    defined; it is averaged over three seeds.
    """
    tp = 6.0
    peak_wavelength = 2 * math.pi / float(wavenumber(2 * math.pi / tp, depth))
    sea = _sea(1.0, tp, spread_deg=5.0, depth=depth, gamma=10.0,
               direction=math.radians(direction_deg), cutoff_length=0.2 * peak_wavelength)
    statistics = sea.statistics()
    k_peak = 2 * math.pi / statistics.peak_wavelength
    c = float(phase_velocity(k_peak, depth))
    tile = Tile(10 * peak_wavelength, 256)
    dt = 0.4 * statistics.peak_wavelength / c
    heading = np.array([math.sin(math.radians(direction_deg)), math.cos(math.radians(direction_deg))])  # (y, x)
    speeds = []
    for seed in range(3):
        ocean = Ocean(sea, tile, seed=seed, lateral_factor=0.0)
        first = np.fft.fft2(_as64(ocean.frame(2.0).height))
        second = np.fft.fft2(_as64(ocean.frame(2.0 + dt).height))
        correlation = np.fft.ifft2(np.conj(first) * second).real
        shift = _peak(correlation) * tile.spacing
        speeds.append(float(shift @ heading) / dt)
    speed = float(np.mean(speeds))
    assert speed == pytest.approx(c, rel=SPEED), f"measured {speed:.4f} m/s, phase speed {c:.4f} m/s"


# -- energy ----------------------------------------------------------------------------------


def test_mean_field_variance_equals_lattice_variance():
    """Parseval: E[spatial variance of h] = Σ Ψ Δk² over the lattice (DESIGN.md,
    "Spectrum to lattice"; Tessendorf 2001, Var h = 2ΣP_h).

    Error model: one seed's variance is a sum of independent exponential terms, one per
    ±k pair, so its relative std is sqrt(2/ν) with ν = 2(Σe)²/Σe² degrees of freedom
    (e = the pairs' expected variances). The ensemble mean of 60 seeds must sit within
    4 standard errors, the standard error taken from the ensemble's own spread; and that
    spread must itself agree with sqrt(2/ν) (it would not if amplitudes were, say,
    random-phase with fixed magnitude), within 4 standard errors of a sample std.
    """
    sea = _sea()
    tile = Tile(8 * sea.statistics().peak_wavelength, 64)
    variances = []
    for seed in range(60):
        ocean = Ocean(sea, tile, seed=seed, lateral_factor=0.0, wave_heights="random")
        variances.append(_as64(ocean.frame(3.0).height).var())
    variances = np.array(variances)
    expected = ocean.lattice_variance
    error = variances.std(ddof=1) / math.sqrt(variances.size)
    assert abs(variances.mean() - expected) <= SIGMAS * error, (variances.mean() / expected, error / expected)

    psi, _, _ = _lattice_psi(sea, tile)
    assert psi.sum() == pytest.approx(expected, rel=1e-12)
    # Pair ±k contributes 2|ĥ(k)|², exponential with mean e = Ψ(k)Δk² + Ψ(−k)Δk²; summing
    # e over every index counts each pair twice, so Σ_pairs e = ½Σ e and Σ_pairs e² = ½Σ e².
    e = psi + np.roll(psi[::-1, ::-1], 1, axis=(0, 1))
    predicted_rel_std = math.sqrt(0.5 * (e**2).sum()) / (0.5 * e.sum())  # = sqrt(2/ν)
    measured_rel_std = variances.std(ddof=1) / expected
    # Relative std of a sample std from n values of a near-Gaussian quantity: 1/sqrt(2(n−1)).
    assert measured_rel_std == pytest.approx(
        predicted_rel_std, rel=SIGMAS / math.sqrt(2 * (variances.size - 1))
    )


def test_significant_wave_height_matches_the_sea_state():
    """4·std(h) averaged over seeds equals the sea's Hs within 5 % (WMO-No. 702 and
    CEM II-1-147: Hm0 = 4√m0), on a tile spanning the spectrum: 8 peak wavelengths
    across (the peak's energy sits well inside the lattice) and a resolution whose
    Nyquist wavenumber keeps ≥ 98 % of m0 (checked with the sea's band variance)."""
    hs = 2.0
    sea = _sea(hs, 8.0)
    statistics = sea.statistics()
    tile = Tile(8 * statistics.peak_wavelength, 128)
    captured = sea.band_variance(0.0, tile.nyquist) / statistics.m0
    assert captured >= 0.98
    assert sea.band_variance(0.0, tile.dk) / statistics.m0 < 1e-6  # nothing below the lattice
    heights = [
        4 * _as64(Ocean(sea, tile, seed=seed, lateral_factor=0.0).frame(0.0).height).std()
        for seed in range(20)
    ]
    assert np.mean(heights) == pytest.approx(hs, rel=HS)


# -- height distribution ------------------------------------------------------------------


def test_height_without_lateral_displacement_is_gaussian():
    """Linear random-phase elevation is Gaussian with variance m0 and zero skewness
    (Longuet-Higgins 1952, J. Mar. Res. 11; 1963, JFM 17).

    Each texel is a sum of Gaussian amplitudes, hence exactly N(0, Σ Ψ Δk²) over seeds;
    texels of one frame are correlated, so the sample takes every 16th texel each way
    (one peak wavelength apart, where the measured correlation is below 0.06) from 40
    seeds: 2560 values. KS test against N(0, lattice variance), D'Agostino–Pearson
    normality test, and |skewness| < 4·sqrt(6/n), |excess kurtosis| < 4·sqrt(24/n) (the
    large-sample standard errors of a Gaussian sample's moments).
    """
    sea = _sea(2.0, 8.0, spectrum="pierson_moskowitz", spread_deg=40.0)
    tile = Tile(8 * sea.statistics().peak_wavelength, 128)
    samples = []
    for seed in range(40):
        ocean = Ocean(sea, tile, seed=seed, lateral_factor=0.0)
        height = _as64(ocean.frame(0.0).height)
        samples.append(height[::16, ::16].ravel() / math.sqrt(ocean.lattice_variance))
    sample = np.concatenate(samples)
    n = sample.size
    assert stats.kstest(sample, "norm").pvalue > 0.01
    assert stats.normaltest(sample).pvalue > 0.01
    assert abs(stats.skew(sample)) < SIGMAS * math.sqrt(6 / n)
    assert abs(stats.kurtosis(sample)) < SIGMAS * math.sqrt(24 / n)


def _resampled_rows(fields, tile: Tile) -> np.ndarray:
    """The displaced surface h(x + Dx) resampled, row by row, onto the regular grid."""
    x = tile.positions()[1][0]
    height = _as64(fields.height)
    position = x[None, :] + _as64(fields.displacement_x)
    return np.array([np.interp(x, position[row], height[row], period=tile.size) for row in range(height.shape[0])])


def test_lateral_displacement_sharpens_crests_and_flattens_troughs():
    """With lateral displacement the surface, sampled at the displaced positions, spends
    less horizontal length above still-water level than below: crests narrow, troughs
    widen (Gerstner; Tessendorf 2001). Long-crested sea along x, resampled row by row.

    Expected value (derived from linear theory): resampling is the change of variables
    X = x + Dx, so the share of X with h > 0 is mean(J_xx·[h > 0]); h and J_xx − 1 are
    jointly Gaussian with covariance −λ Σ (kx²/k) Ψ Δk², giving a drop of
    λ Σ(kx²/k)ΨΔk² / (σ√(2π)) from ½. Measured paired against the same seed without
    displacement; linear interpolation onto the grid loses some of the shortest waves'
    share (4–6 % at 32 texels a peak wavelength), so the tolerance is 15 %.

    The Jacobian is smallest at crests: corr(J, h) < −0.7, and J < 1 on average at local
    maxima of h, > 1 at minima.

    Skewness does *not* grow: to second order in steepness this first-order Lagrangian
    surface is h ≈ η − kη̂² (η̂ the Hilbert transform), whose skewness vanishes because η
    and η̂ are independent (derived; Srokosz & Longuet-Higgins 1986, JFM 164, from
    memory) — unlike second-order Stokes waves, skewness 3kσ (Longuet-Higgins 1963).
    The change must stay far below 3kσ.
    """
    sea = _sea(2.0, 7.0, spread_deg=5.0)
    tile = Tile(8 * sea.statistics().peak_wavelength, 256)
    psi, kx, ky = _lattice_psi(sea, tile)
    k = np.hypot(kx, ky)
    sigma = math.sqrt(psi.sum())
    m_kx = float((psi * kx**2 / np.where(k > 0, k, 1.0)).sum())
    m_k = float((psi * k).sum())
    lateral = 1.0
    predicted_drop = lateral * m_kx / (sigma * math.sqrt(2 * math.pi))
    drops, skew_changes, correlations = [], [], []
    jacobian_crests, jacobian_troughs = [], []
    for seed in range(12):
        fields = Ocean(sea, tile, seed=seed, lateral_factor=lateral).frame(0.0)
        height = _as64(fields.height)
        jacobian = _as64(fields.jacobian)
        assert jacobian.min() > 0, "the sea folds; the resampling needs a one-to-one map"
        resampled = _resampled_rows(fields, tile)
        drops.append((height > 0).mean() - (resampled > 0).mean())
        skew_changes.append(stats.skew(resampled.ravel()) - stats.skew(height.ravel()))
        correlations.append(np.corrcoef(jacobian.ravel(), height.ravel())[0, 1])
        maxima = (height > np.roll(height, 1, 1)) & (height > np.roll(height, -1, 1))
        minima = (height < np.roll(height, 1, 1)) & (height < np.roll(height, -1, 1))
        jacobian_crests.append(jacobian[maxima & (height > 0)].mean())
        jacobian_troughs.append(jacobian[minima & (height < 0)].mean())
    assert all(drop > 0 for drop in drops)
    assert np.mean(drops) == pytest.approx(predicted_drop, rel=0.15)
    assert np.mean(correlations) < -0.7
    assert np.mean(jacobian_crests) < 1.0 < np.mean(jacobian_troughs)
    stokes_skewness = 3 * (m_k / sigma**2) * sigma
    assert abs(np.mean(skew_changes)) < 0.25 * stokes_skewness


# -- seams and loops -------------------------------------------------------------------------


def _steps(field: np.ndarray, axis: int) -> np.ndarray:
    """Steps to the next texel along ``axis``, wrapping: the last one crosses the seam."""
    return np.roll(field, -1, axis=axis) - field


def _seam_ratio(fields_list, axis: int) -> tuple[float, float]:
    """std of the seam's steps / std of the interior steps, and the spread of the same
    ratio over the interior lines (its sampling scatter)."""
    steps = np.stack([_steps(f, axis) for f in fields_list])  # (seeds, N, N)
    lines = np.moveaxis(steps, 1 + axis, 0).reshape(steps.shape[1 + axis], -1)  # one line per step position
    per_line = lines.std(axis=1)
    interior = per_line[:-1]
    ratios = interior / interior.mean()
    return per_line[-1] / interior.mean(), ratios.std(ddof=1)


@pytest.mark.parametrize("name", ["height", "displacement_x", "displacement_y"])
@pytest.mark.parametrize("axis", [0, 1])
def test_tile_seam_is_indistinguishable_from_the_interior(name, axis):
    """The step across the seam (last column → first, last row → first) has the same
    distribution as steps between interior neighbours: std ratio within 4× the scatter
    of that ratio among interior lines and within 5 %, and a KS two-sample test p > 0.01.
    The same statistic on a non-periodic crop of the field fails by far (the test can
    fail). The seam is a property of the lattice, not of how amplitudes are drawn: the
    plain Gaussian draw keeps the seeds' fields independent normal samples, as the KS
    test's 1 % false-alarm rate assumes."""
    sea = _sea(2.0, 8.0)
    tile = Tile(400.0, 128)
    fields_list = [
        _as64(getattr(Ocean(sea, tile, seed=seed, wave_heights="random").frame(4.0), name)) for seed in range(40)
    ]
    ratio, scatter = _seam_ratio(fields_list, axis)
    assert abs(ratio - 1) <= min(SIGMAS * scatter, 0.05), (ratio, scatter)
    # KS on decorrelated samples: every 16th step along a line (crests are long, so
    # neighbours along a line are strongly correlated), the seam against interior lines
    # 16 apart.
    steps = np.stack([_steps(f, axis) for f in fields_list])
    lines = np.moveaxis(steps, 1 + axis, 1)[:, :, ::16]  # (seed, step position, along)
    seam = lines[:, -1].ravel()
    interior = lines[:, 15:-1:16].ravel()
    assert stats.ks_2samp(seam, interior).pvalue > 0.01
    cropped = [f[:96, :96] for f in fields_list]
    ratio_cropped, scatter_cropped = _seam_ratio(cropped, axis)
    assert abs(ratio_cropped - 1) > 10 * scatter_cropped


def test_displacement_at_wraps_across_the_seams():
    """Sampling the surface at x and at x + L, y − 2L gives the same point."""
    ocean = Ocean(_sea(), Tile(150.0, 64), seed=4)
    x = np.array([0.0, 3.3, 75.0, 149.9])
    y = np.array([1.0, 140.2, 0.0, 60.0])
    here = ocean.displacement_at(x, y, 2.5)
    there = ocean.displacement_at(x + 150.0, y - 300.0, 2.5)
    np.testing.assert_allclose(there, here, rtol=0, atol=1e-9)


@pytest.mark.parametrize("period", [20.0, 37.5])
def test_loop_repeats_after_its_period(period):
    """With a loop period T, frame(t + T) = frame(t) and frame(t + 7T) = frame(t) to
    float32 precision (DESIGN.md, "Looping"), for every field."""
    ocean = Ocean(_sea(), Tile(300.0, 64), seed=5, lateral_factor=1.0, loop_period=period)
    for t in (0.0, 3.3, period - 0.01):
        first = ocean.frame(t)
        for later in (t + period, t + 7 * period):
            again = ocean.frame(later)
            for name in ("height", "displacement_x", "displacement_y", "jacobian", "normal", "foam"):
                a, b = _as64(getattr(first, name)), _as64(getattr(again, name))
                scale = max(np.abs(a).max(), 1.0 if name in ("jacobian", "normal", "foam") else 0.0)
                assert np.abs(a - b).max() <= FLOAT32_FIELD * scale, (name, t, later)
    # Without a loop period the same two frames differ (the check can fail).
    free = Ocean(_sea(), Tile(300.0, 64), seed=5)
    assert np.abs(_as64(free.frame(3.3).height) - _as64(free.frame(3.3 + period).height)).max() > 0.01


@pytest.mark.parametrize("period", [20.0, 37.5])
def test_loop_info_reports_the_largest_frequency_shift(period):
    """Quantised frequencies are whole multiples of 2π/T; loop_info's largest shift is
    the largest change of ω over the waves that carry energy, and at most half a step
    (π/T) since ω is rounded to the nearest multiple."""
    sea = _sea()
    tile = Tile(300.0, 64)
    ocean = Ocean(sea, tile, seed=5, loop_period=period)
    step = 2 * math.pi / period
    quantised = ocean.frequencies
    multiples = quantised / step
    np.testing.assert_allclose(multiples, np.round(multiples), rtol=0, atol=1e-9)
    ky, kx = tile.wavenumbers()
    exact = angular_frequency(np.hypot(kx, ky))
    live = np.abs(ocean.amplitudes) > 0
    shift = np.abs(quantised - exact)[live]
    info = ocean.loop_info
    assert info.period == period
    assert info.largest_shift == pytest.approx(shift.max(), rel=1e-12)
    assert info.largest_shift <= math.pi / period
    assert info.largest_relative_shift == pytest.approx((shift / exact[live]).max(), rel=1e-12)
    assert Ocean(sea, tile, seed=5).loop_info is None


# -- resolution independence -----------------------------------------------------------------


def test_preview_and_final_share_their_long_waves():
    """A 64² and a 256² render of one tile and seed draw the same amplitude for every
    wave index they share (DESIGN.md, "Amplitudes"), exactly; and the 256² fields,
    low-passed to those indices and transformed back at 64², reproduce the 64² fields to
    float32 precision. The 64² lattice carries |n| ≤ 32 within its circle and neither its
    Nyquist row nor column, so exactly those coefficients are kept."""
    sea = _sea()
    small_tile = Tile(400.0, 64)
    # Linear fields: a 64² lattice holds too few wave indices for the bound waves of the
    # 256² one's parents (tests/test_bound.py checks resolutions that can).
    small = Ocean(sea, small_tile, seed=11, bound_waves=False)
    large = Ocean(sea, Tile(400.0, 256), seed=11, bound_waves=False)
    ny, nx = small_tile.wave_indices()
    shared = np.broadcast_to(small_tile.carried(ny, nx), (64, 64))
    rows, columns = np.ix_(ny.ravel() % 256, nx.ravel() % 256)
    assert np.array_equal(small.amplitudes[shared], large.amplitudes[rows, columns][shared])
    assert np.count_nonzero(small.amplitudes[shared]) > 0.9 * shared.sum()
    small_fields, large_fields = small.frame(2.0), large.frame(2.0)
    for name in ("height", "displacement_x", "displacement_y"):
        coefficients = np.fft.fft2(_as64(getattr(large_fields, name)), norm="forward")
        kept = np.zeros((64, 64), complex)
        kept[shared] = coefficients[rows, columns][shared]
        low_passed = np.fft.ifft2(kept, norm="forward").real
        reference = _as64(getattr(small_fields, name))
        np.testing.assert_allclose(low_passed, reference, rtol=0, atol=FLOAT32_FIELD * np.abs(reference).max())


# -- normals ---------------------------------------------------------------------------------


def _central_difference(array: np.ndarray, axis: int, spacing: float) -> np.ndarray:
    """∂/∂(axis) by central differences on the periodic grid."""
    return (np.roll(array, -1, axis) - np.roll(array, 1, axis)) / (2 * spacing)


def _finite_difference_normals(fields, spacing: float) -> np.ndarray:
    """Unit normals (∂P/∂x × ∂P/∂y) of the displaced surface P = (x + Dx, y + Dy, h),
    by central differences on the periodic grid."""
    h, dx, dy = (_as64(a) for a in (fields.height, fields.displacement_x, fields.displacement_y))

    def d(a, axis):
        return _central_difference(a, axis, spacing)

    along_x = np.stack([1 + d(dx, 1), d(dy, 1), d(h, 1)], axis=-1)
    along_y = np.stack([d(dx, 0), 1 + d(dy, 0), d(h, 0)], axis=-1)
    normal = np.cross(along_x, along_y)
    return normal / np.linalg.norm(normal, axis=-1, keepdims=True)


def _angle_deg(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    return np.degrees(np.arccos(np.clip((a * b).sum(axis=-1), -1.0, 1.0)))


def _steep_smooth_frame(cutoff_fraction: float, lateral: float):
    """A frame of a steep sea (Hs 4 m, Tp 7 s) on a 256² tile four peak wavelengths
    across, its short waves damped by a cut-off of ``cutoff_fraction`` L_p so that central
    differences (error (kΔx)²/6 of a slope) resolve it."""
    tp = 7.0
    peak_wavelength = 2 * math.pi / float(wavenumber(2 * math.pi / tp))
    sea = _sea(4.0, tp, cutoff_length=cutoff_fraction * peak_wavelength)
    tile = Tile(4 * peak_wavelength, 256)
    return Ocean(sea, tile, seed=3, lateral_factor=lateral).frame(1.0), tile


def test_normals_match_finite_differences_of_the_displaced_surface():
    """Spectral normals against finite differences of P(x) = (x + Dx, y + Dy, h) at 256²
    on a steep but smooth sea (normals tilted 5° on average; λ = 2, so the Jacobian drops
    to ~0.3 without folding; cut-off 0.05 L_p): mean angle below 0.5° (issue target),
    unit length to 1e-5 (float32), pointing up where the surface does not fold. The
    normals of the undisplaced grid (x, y, h) differ from them by far more."""
    fields, tile = _steep_smooth_frame(0.05, lateral=2.0)
    normal = _as64(fields.normal)
    assert fields.normal.shape == (256, 256, 3)
    np.testing.assert_allclose(np.linalg.norm(normal, axis=-1), 1.0, rtol=0, atol=1e-5)
    assert fields.jacobian.min() > 0
    angle = _angle_deg(normal, _finite_difference_normals(fields, tile.spacing))
    assert angle.mean() < NORMAL_ANGLE_DEG, angle.mean()
    assert np.all(normal[..., 2] > 0)
    # They are the displaced surface's normals, not the undisplaced grid's: the normal of
    # (x, y, h) alone is measurably different on the same frame.
    height = _as64(fields.height)
    slope_x = _central_difference(height, 1, tile.spacing)
    slope_y = _central_difference(height, 0, tile.spacing)
    undisplaced = np.stack([-slope_x, -slope_y, np.ones_like(slope_x)], axis=-1)
    undisplaced /= np.linalg.norm(undisplaced, axis=-1, keepdims=True)
    assert _angle_deg(normal, undisplaced).mean() > 5 * angle.mean()


def test_normals_on_a_folding_surface():
    """With a lateral factor high enough to fold (J < 0 somewhere), the normal's z
    component has the Jacobian's sign everywhere; the finite-difference normal agrees in
    sign wherever |J| > 0.2 (away from the fold lines, where differences straddle it);
    and away from the folds (J > 0.3) the mean angle stays below 0.5°."""
    fields, tile = _steep_smooth_frame(0.03, lateral=4.0)
    jacobian = _as64(fields.jacobian)
    normal = _as64(fields.normal)
    assert (jacobian < 0).mean() > 1e-3, "the case meant to fold does not"
    np.testing.assert_allclose(np.linalg.norm(normal, axis=-1), 1.0, rtol=0, atol=1e-5)
    np.testing.assert_array_equal(np.sign(fields.normal[..., 2]), np.sign(fields.jacobian))
    reference = _finite_difference_normals(fields, tile.spacing)
    clear = np.abs(jacobian) > 0.2
    np.testing.assert_array_equal(np.sign(reference[..., 2])[clear], np.sign(jacobian)[clear])
    unfolded = jacobian > 0.3
    assert _angle_deg(normal, reference)[unfolded].mean() < NORMAL_ANGLE_DEG


# -- foam ---------------------------------------------------------------------------------------


def test_foam_ramps_with_the_jacobian():
    """Foam is 0 above the fold threshold, 1 once J is ``foam_ramp`` below it, linear in
    between (the documented meaning of fold_threshold and foam_ramp)."""
    ocean = Ocean(_sea(4.0, 7.0), Tile(200.0, 128), seed=8, lateral_factor=3.0,
                  fold_threshold=0.4, foam_ramp=0.25)
    fields = ocean.frame(0.5)
    jacobian, foam = _as64(fields.jacobian), _as64(fields.foam)
    assert (jacobian < 0.15).any() and (jacobian > 0.4).any()
    expected = np.clip((0.4 - jacobian) / 0.25, 0.0, 1.0)
    np.testing.assert_allclose(foam, expected, rtol=0, atol=1e-5)


# -- velocity -----------------------------------------------------------------------------------


def test_velocity_is_the_time_derivative_of_the_displaced_point():
    """velocity = d/dt (x + Dx, y + Dy, h) at a fixed rest position, against central
    differences in time with Δt = 0.01 s: truncation (ωΔt)²/6 ≤ 2e-4 at the Nyquist
    frequency of this tile (3.1 rad/s) and float32 roundoff ε·max|field|/Δt ≈ 1e-5 m/s,
    so 1e-3 of each component's std bounds both with room."""
    ocean = Ocean(_sea(), Tile(400.0, 128), seed=2, lateral_factor=1.5, velocity=True)
    t, dt = 3.0, 0.01
    velocity = _as64(ocean.frame(t).velocity)
    after, before = ocean.frame(t + dt), ocean.frame(t - dt)
    assert ocean.frame(t + dt).velocity.shape == (128, 128, 3)
    for axis, name in enumerate(("displacement_x", "displacement_y", "height")):
        difference = (_as64(getattr(after, name)) - _as64(getattr(before, name))) / (2 * dt)
        scale = velocity[..., axis].std()
        assert scale > 0
        np.testing.assert_allclose(velocity[..., axis], difference, rtol=0, atol=1e-3 * scale)
    assert Ocean(_sea(), Tile(400.0, 64), seed=2).frame(t).velocity is None


# -- determinism --------------------------------------------------------------------------------


_ALL_FIELDS = ("height", "displacement_x", "displacement_y", "jacobian", "normal", "foam")


def _assert_same_bits(a, b) -> None:
    for name in _ALL_FIELDS:
        assert np.array_equal(getattr(a, name), getattr(b, name)), name


def test_same_inputs_give_the_same_bits():
    sea = _sea()
    first = Ocean(sea, Tile(200.0, 64), seed=9).frame(1.25)
    second = Ocean(_sea(), Tile(200.0, 64), seed=9).frame(1.25)
    _assert_same_bits(first, second)
    other_seed = Ocean(sea, Tile(200.0, 64), seed=10).frame(1.25)
    assert not np.array_equal(first.height, other_seed.height)


def test_a_frame_alone_equals_the_same_frame_in_a_sequence():
    """Frames are pure functions of time (DESIGN.md): frame 37 rendered alone by a fresh
    Ocean has the bits of frame 37 of a 0–100 loop at 24 fps reusing one buffer."""
    sea = _sea()
    tile = Tile(200.0, 64)
    sequence = Ocean(sea, tile, seed=12, lateral_factor=1.3, loop_period=12.0)
    buffer = sequence.new_buffer()
    kept = None
    for frame in range(101):
        fields = sequence.frame(frame / 24, buffer=buffer)
        if frame == 37:
            kept = {name: getattr(fields, name).copy() for name in _ALL_FIELDS}
    alone = Ocean(sea, tile, seed=12, lateral_factor=1.3, loop_period=12.0).frame(37 / 24)
    for name in _ALL_FIELDS:
        assert np.array_equal(kept[name], getattr(alone, name)), name


def test_fft_threads_do_not_change_the_bits():
    sea = _sea()
    tile = Tile(200.0, 128)
    one = Ocean(sea, tile, seed=3, fft_workers=1, velocity=True).frame(2.0)
    two = Ocean(sea, tile, seed=3, fft_workers=2, velocity=True).frame(2.0)
    _assert_same_bits(one, two)
    assert np.array_equal(one.velocity, two.velocity)


def test_the_amplitudes_are_the_same_bits_built_on_any_number_of_threads(monkeypatch):
    """The build spreads blocks of lattice rows over ``fft_workers`` threads and sums their
    per-ring variances in block order: h0, the variances and the foam threshold must not
    depend on the thread count (512²: four blocks, three threads at a time, the memory
    rule that keeps small lattices on one thread lifted)."""
    monkeypatch.setattr(synth, "_EXTRA_BUILD_BYTES_PER_TEXEL", 1000)
    sea = _sea()
    tile = Tile(200.0, 512)
    one = Ocean(sea, tile, seed=5, fft_workers=1, bound_waves=True)
    three = Ocean(sea, tile, seed=5, fft_workers=3, bound_waves=True)  # threshold beside bound waves
    assert synth._build_threads(3, 512, 256 * 256 + 1) == 3
    assert np.array_equal(one._h0, three._h0)
    assert (one.lattice_variance, one.realised_variance, one.fold_threshold) == (
        three.lattice_variance, three.realised_variance, three.fold_threshold)
    assert one.bound.parents > 100
    assert np.array_equal(one.bound.sum_kernel, three.bound.sum_kernel)
    assert one.bound.mean_offset == three.bound.mean_offset


def test_blocks_in_flight_keep_the_builds_memory_down():
    """Blocks in flight stay within the build's memory budget (at 16384² one at a time) and
    never raise a small lattice's build above its first frame (one at a time at 1024²;
    ``_BLOCK_BYTES_PER_TEXEL`` and the allowance are measured figures, see synth)."""
    assert synth._build_threads(64, 16384, 8192 * 8192 + 1) == 1
    assert synth._build_threads(64, 1024, 512 * 512 + 1) == 1
    assert synth._build_threads(4, 2048, 1024 * 1024 + 1) == 2
    assert synth._build_threads(1, 4096, 2048 * 2048 + 1) == 1


def test_a_1024_build_peaks_below_its_first_frame():
    """tracemalloc peak of building a 1024² ocean on two threads, per texel, against the first
    frame's (the benchmark's 48 bytes a texel budget covers both)."""
    import tracemalloc

    sea = _sea()
    Ocean(sea, Tile(200.0, 32), seed=1, fft_workers=2).frame(0.5)  # kernels loaded first
    n = 1024
    tracemalloc.start()
    try:
        ocean = Ocean(sea, Tile(200.0, n), seed=1, fft_workers=2, bound_waves=False)
        _, build_peak = tracemalloc.get_traced_memory()
        tracemalloc.reset_peak()
        ocean.frame(1.0)
        _, frame_peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert build_peak < frame_peak
    assert frame_peak / n**2 < 48.0


def test_reused_buffer_gives_the_same_bits_as_a_fresh_one():
    ocean = Ocean(_sea(), Tile(200.0, 64), seed=6)
    buffer = ocean.new_buffer()
    ocean.frame(9.0, buffer=buffer)  # leave another frame's data in it
    reused = ocean.frame(1.0, buffer=buffer)
    assert np.shares_memory(reused.height, buffer)
    _assert_same_bits(reused, ocean.frame(1.0))


def test_fields_are_float32_views_into_one_buffer():
    ocean = Ocean(_sea(), Tile(100.0, 32), seed=1)
    buffer = ocean.new_buffer()
    fields = ocean.frame(0.0, buffer=buffer)
    for name in _ALL_FIELDS:
        array = getattr(fields, name)
        assert array.dtype == np.float32
        assert np.shares_memory(array, buffer), name
    assert fields.time == 0.0 and fields.resolution == 32


def test_displacement_at_reproduces_the_maps_at_texels():
    """At texel positions the cubic B-spline interpolant passes through the samples."""
    tile = Tile(100.0, 32)
    ocean = Ocean(_sea(), tile, seed=1)
    fields = ocean.frame(0.7)
    y, x = tile.positions()
    x, y = np.broadcast_arrays(x, y)
    sampled = ocean.displacement_at(x, y, 0.7)
    for axis, name in enumerate(("displacement_x", "displacement_y", "height")):
        reference = _as64(getattr(fields, name))
        np.testing.assert_allclose(sampled[..., axis], reference, rtol=0, atol=FLOAT32_FIELD * np.abs(reference).max())


# -- bad input -----------------------------------------------------------------------------------


@functools.cache
def _small_sea() -> SeaState:
    return SeaState((height_period(1.0, 6.0),))


@pytest.mark.parametrize(
    ("options", "pattern"),
    [
        ({"seed": -1}, r"seed: -1 is not allowed; allowed: an integer from 0 to 2\*\*63 - 1"),
        ({"seed": 2**63}, r"seed: 9223372036854775808 is not allowed; allowed: an integer"),
        ({"seed": 1.5}, r"seed: 1\.5 is not allowed; allowed: an integer"),
        ({"seed": True}, r"seed: True is not allowed; allowed: an integer"),
        ({"seed": "3"}, r"seed: '3' is not allowed; allowed: an integer"),
        ({"lateral_factor": -0.5}, r"lateral_factor: -0\.5 is not allowed; allowed: a finite number >= 0"),
        ({"lateral_factor": math.nan}, r"lateral_factor: nan is not allowed; allowed: a finite number >= 0"),
        ({"lateral_factor": math.inf}, r"lateral_factor: inf is not allowed; allowed: a finite number >= 0"),
        ({"lateral_factor": True}, r"lateral_factor: True is not a number; allowed: a finite number >= 0"),
        ({"lateral_factor": "1"}, r"lateral_factor: '1' is not a number; allowed: a finite number >= 0"),
        ({"loop_period": 0.0}, r"loop_period: 0\.0 is not allowed; allowed: a finite number > 0"),
        ({"loop_period": -4.0}, r"loop_period: -4\.0 is not allowed; allowed: a finite number > 0"),
        ({"loop_period": math.inf}, r"loop_period: inf is not allowed; allowed: a finite number > 0"),
        ({"loop_period": math.nan}, r"loop_period: nan is not allowed; allowed: a finite number > 0"),
        ({"foam_ramp": 0.0}, r"foam_ramp: 0\.0 is not allowed; allowed: a finite number > 0"),
        ({"fold_threshold": math.nan}, r"fold_threshold: nan is not allowed; allowed: a finite number"),
        ({"fft_workers": 0}, r"fft_workers: 0 is not allowed; allowed: an integer >= 1 or None"),
        ({"fft_workers": True}, r"fft_workers: True is not allowed; allowed: an integer >= 1 or None"),
    ],
)
def test_bad_ocean_options(options, pattern):
    with pytest.raises(ValueError, match=pattern):
        Ocean(_small_sea(), Tile(50.0, 16), **options)


@pytest.mark.parametrize(
    ("sea", "tile", "pattern"),
    [
        ("calm", Tile(50.0, 16), r"sea_state: str is not allowed; allowed: a SeaState"),
        (None, (50.0, 16), r"tile: tuple is not allowed; allowed: a Tile"),
    ],
)
def test_bad_ocean_arguments(sea, tile, pattern):
    with pytest.raises(ValueError, match=pattern):
        Ocean(_small_sea() if sea is None else sea, tile)


@pytest.mark.parametrize("t", [math.nan, math.inf, -math.inf, True, None, "1"])
def test_bad_time(t):
    ocean = Ocean(_small_sea(), Tile(50.0, 16))
    with pytest.raises(ValueError, match=r"^t: .* allowed: a finite number"):
        ocean.frame(t)


def _bad_buffers():
    n = 16
    read_only = np.empty((4, n, n), np.complex64)
    read_only.flags.writeable = False
    return [
        (np.empty((4, n, n), np.complex128), r"complex128 array of shape \(4, 16, 16\)"),
        (np.empty((4, 2 * n, 2 * n), np.complex64), r"complex64 array of shape \(4, 32, 32\)"),
        (np.empty((3, n, n), np.complex64), r"shape \(3, 16, 16\)"),
        (np.empty((4, n, 2 * n), np.complex64)[:, :, ::2], r"non-contiguous complex64"),
        (read_only, r"read-only complex64"),
        ([[0.0]], r"buffer: a list is not allowed"),
    ]


@pytest.mark.parametrize(("buffer", "pattern"), _bad_buffers())
def test_bad_buffer(buffer, pattern):
    ocean = Ocean(_small_sea(), Tile(50.0, 16))
    with pytest.raises(ValueError, match=r"^buffer: ") as info:
        ocean.frame(0.0, buffer=buffer)
    message = str(info.value)
    assert re.search(pattern, message), message
    assert "allowed: a writable C-contiguous complex64 array of shape (4, 16, 16)" in message


def test_bad_displacement_order():
    ocean = Ocean(_small_sea(), Tile(50.0, 16))
    with pytest.raises(ValueError, match=r"order: 2 is not allowed; allowed: 1 \(bilinear\) or 3 \(cubic\)"):
        ocean.displacement_at(0.0, 0.0, 0.0, order=2)


@pytest.mark.parametrize("velocity", [False, True])
def test_resolution_beyond_memory_is_refused_up_front(monkeypatch, velocity):
    """A resolution whose frame cannot fit in the available memory is refused before
    anything is allocated, with the estimate in the message. The estimate must cover at
    least what a frame holds: four complex64 arrays (32 bytes a texel) plus the complex64
    amplitudes (8), and the velocity's two more complex64 arrays (16) when asked."""
    monkeypatch.setattr(synth, "available_memory", lambda: 256 * 2**20)
    n = 8192
    with pytest.raises(ValueError) as info:
        Ocean(_small_sea(), Tile(1000.0, n), velocity=velocity)
    message = str(info.value)
    assert message.startswith(f"tile resolution: {n} ")
    assert "allowed: a smaller resolution" in message
    found = re.search(r"needs about ([0-9.]+) (GiB|MiB) .* the ([0-9.]+) (GiB|MiB) available", message)
    assert found, message
    unit = {"GiB": 1.0, "MiB": 1.0 / 1024}
    needed = float(found.group(1)) * unit[found.group(2)]
    available = float(found.group(3)) * unit[found.group(4)]
    floor = n * n * (32 + 8 + (16 if velocity else 0)) / 2**30
    assert floor * 0.95 <= needed <= 2 * floor
    assert available == pytest.approx(0.25, abs=0.05)
    # Unknown available memory (None) refuses nothing; a small tile fits.
    monkeypatch.setattr(synth, "available_memory", lambda: None)
    Ocean(_small_sea(), Tile(50.0, 16), velocity=velocity)


@pytest.mark.parametrize("lateral", [1.0, 6.0])
def test_mean_jacobian_is_one_folded_or_not(lateral):
    """The lateral map x → x + D(x) of a periodic tile covers the tile once (it is the
    identity plus a periodic function, so its degree is 1), hence the mean Jacobian is
    exactly 1 whether or not the surface folds (derived; in Fourier terms the quadratic
    part's mean is Σ λ²|ĥ|²(kx²ky² − kx²ky²)/k² = 0). Checked on a fully developed wind
    sea (Pierson–Moskowitz, Mitsuyasu spreading), to float32 roundoff."""
    ocean = Ocean(SeaState((wind_sea(12.0),)), Tile(200.0, 128), seed=2, lateral_factor=lateral)
    fields = ocean.frame(5.0)
    for name in _ALL_FIELDS:
        assert np.isfinite(getattr(fields, name)).all(), name
    jacobian = _as64(fields.jacobian)
    if lateral == 6.0:
        assert (jacobian < 0).any(), "the case meant to fold does not"
    assert jacobian.mean() == pytest.approx(1.0, abs=FLOAT32_FIELD * np.abs(jacobian).max())


@pytest.mark.parametrize(("resolution", "size", "cubic_bound"), [(256, 300.0, 0.01), (128, 600.0, 0.04)])
def test_displacement_between_texels_against_the_exact_fourier_sum(resolution, size, cubic_bound):
    """``displacement_at`` between texels, against the band-limited field itself: the
    lattice's Fourier sum Σ ĥ e^{ik·x} evaluated directly at random points. The stated
    accuracy (rms error over std(h)) is what the docstring promises; cubic beats bilinear."""
    sea = SeaState((height_period(1.5, 7.0, spread=math.radians(25)),))
    ocean = Ocean(sea, Tile(size, resolution), seed=4, lateral_factor=0.0, bound_waves=False)  # linear sum below
    t = 3.0
    spectrum = _kernels.spectra_reference(ocean.amplitudes.astype(np.complex128), ocean.frequencies,
                                          t, ocean.tile.dk, 0.0)[0]
    rng = np.random.default_rng(1)
    x = rng.uniform(0.0, size, 300)
    y = rng.uniform(0.0, size, 300)
    index = np.fft.fftfreq(resolution, 1.0 / resolution)
    ky = index[:, None] * ocean.tile.dk
    kx = index[None, :] * ocean.tile.dk
    exact = np.array([np.sum(spectrum * np.exp(1j * (kx * xi + ky * yi))).real for xi, yi in zip(x, y)])
    scale = float(ocean.frame(t).height.std())
    errors = {}
    for order in (1, 3):
        got = ocean.displacement_at(x, y, t, order=order)[:, 2]
        errors[order] = float(np.sqrt(np.mean((got - exact) ** 2))) / scale
    assert errors[3] < cubic_bound
    assert errors[1] > 2.0 * errors[3]


def _folding_sea():
    return SeaState((height_period(3.0, 6.0, spread=math.radians(20)),))


def test_lingering_foam_is_the_largest_decayed_past_foam():
    """With foam_memory M and S samples, foam(t) = max over j = 0…S of
    e^{−jΔ/M}·clip((threshold − J(t − jΔ))/ramp, 0, 1), Δ = 3M/S: recomputed here from
    frames of an Ocean without memory at the past instants (float32 tolerance)."""
    tile = Tile(200.0, 64)
    plain = Ocean(_folding_sea(), tile, seed=2, lateral_factor=2.5, fold_threshold=0.3)
    lingering = Ocean(_folding_sea(), tile, seed=2, lateral_factor=2.5, fold_threshold=0.3, foam_memory=2.0,
                      foam_samples=6)
    t = 10.0
    step = 3.0 * 2.0 / 6
    expected = plain.frame(t).foam.astype(np.float64)
    for j in range(1, 7):
        past = plain.frame(t - j * step).jacobian.astype(np.float64)
        fold = np.clip((0.3 - past) / 0.3, 0.0, 1.0)
        expected = np.maximum(expected, math.exp(-j * step / 2.0) * fold)
    got = lingering.frame(t)
    np.testing.assert_allclose(got.foam, expected, rtol=0, atol=1e-5)
    assert got.foam.mean() > 1.5 * plain.frame(t).foam.mean()  # the memory shows
    np.testing.assert_array_equal(got.height, plain.frame(t).height)  # nothing else changes


def test_no_foam_memory_is_instantaneous_foam():
    tile = Tile(200.0, 64)
    a = Ocean(_folding_sea(), tile, seed=2, lateral_factor=2.5).frame(4.0)
    b = Ocean(_folding_sea(), tile, seed=2, lateral_factor=2.5, foam_memory=0.0, foam_samples=3).frame(4.0)
    np.testing.assert_array_equal(a.foam, b.foam)


@pytest.mark.parametrize(
    ("keyword", "value", "fragment"),
    [
        ("foam_memory", -1.0, "foam_memory"),
        ("foam_memory", float("nan"), "foam_memory"),
        ("foam_samples", 0, "foam_samples"),
        ("foam_samples", 65, "foam_samples"),
        ("foam_samples", True, "foam_samples"),
    ],
)
def test_bad_foam_memory_settings_are_refused(keyword, value, fragment):
    with pytest.raises(ValueError, match=fragment):
        Ocean(_folding_sea(), Tile(100.0, 16), **{keyword: value})
