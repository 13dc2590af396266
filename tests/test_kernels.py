"""Tests for oceanfield.surface._kernels: each numba kernel against a plain-numpy reference.

The kernels compute in float64 and store complex64 (float32 parts); the references
compute the same quantities in numpy. Tolerances are float32's: a float32 holds a value
to 2⁻²⁴ ≈ 6e-8 of itself, so after the few additions inside a kernel the two sides may
differ by some ulps of the largest value in an array. We allow 1e-6 of that largest value
(about 16 ulps), stated once here as ``FLOAT32``.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield.surface import _kernels
from oceanfield.surface.tile import Tile

#: Relative to an array's largest magnitude: ~16 float32 ulps (see the module docstring).
FLOAT32 = 1e-6

#: e^{−iωt} with the phase in float64: cos and sin are correctly rounded to an ulp or two.
FLOAT64 = 1e-14

#: Several sizes, including even sizes that are not powers of two.
SIZES = (16, 48, 64, 96)

GRAVITY = 9.81



def _every_slot(omega_table):
    """The identity slot map: one rotation per q = nx² + ny² (the Ocean compacts it)."""
    return np.arange(omega_table.size, dtype=np.int32)

def _lattice_case(n: int, seed: int = 0, size: float = 80.0):
    """Random amplitudes on the carried lattice of a tile, and ω by deep-water dispersion.

    Returns h0 (complex64, zero outside the carried set, as :class:`Ocean` builds it), the
    ω table per q = nx² + ny² (what the kernels take) and ω on the full lattice (what the
    references take), and Δk.
    """
    tile = Tile(size, n)
    rng = np.random.default_rng(seed)
    ny, nx = tile.wave_indices()
    carried = np.broadcast_to(tile.carried(ny, nx), (n, n))
    h0 = (rng.standard_normal((n, n)) + 1j * rng.standard_normal((n, n))) * 0.1
    h0 = np.where(carried, h0, 0.0).astype(np.complex64)
    half = n // 2
    q_table = np.arange(half * half + 1, dtype=np.float64)
    omega_table = np.sqrt(GRAVITY * np.sqrt(q_table) * tile.dk)  # ω = √(g k), deep water
    q = np.minimum(nx * nx + ny * ny, half * half)
    return h0, omega_table, omega_table[q], tile.dk


def _close(actual, expected, rel=FLOAT32):
    scale = np.abs(expected).max()
    if scale == 0:  # e.g. every lateral-displacement spectrum when λ = 0
        np.testing.assert_array_equal(actual, 0.0)
        return
    np.testing.assert_allclose(actual, expected, rtol=0, atol=rel * scale)


def _unpack(packed):
    """Split a packed spectrum P = A + iB of two Hermitian spectra into A and B.

    A(k) = (P(k) + conj P(−k))/2 and B(k) = (P(k) − conj P(−k))/(2i).
    """
    mirrored = np.conj(np.roll(packed[..., ::-1, ::-1], 1, axis=(-2, -1)))
    return (packed + mirrored) / 2, (packed - mirrored) / 2j


@pytest.mark.parametrize("t", (0.0, 1.7, -250.3))
def test_rotation_kernel_is_exp_minus_i_omega_t(t):
    omega = np.linspace(0.0, 40.0, 1001)
    out = np.empty(omega.shape, np.complex128)
    _kernels.rotation_kernel(omega, t, out)
    np.testing.assert_allclose(out, np.exp(-1j * omega * t), rtol=0, atol=FLOAT64)


@pytest.mark.parametrize("n", SIZES)
@pytest.mark.parametrize(("t", "lateral"), [(0.0, 1.0), (3.25, 0.0), (11.0, 2.5)])
def test_spectra_kernel_matches_reference(n, t, lateral):
    h0, omega_table, omega, dk = _lattice_case(n, seed=n)
    rotation = np.exp(-1j * omega_table * t)
    out = np.empty((4, n, n), np.complex64)
    out[...] = np.nan  # every slot must be written, including the zeros
    _kernels.spectra_kernel(h0, _kernels.slot_index(_every_slot(omega_table), n), rotation, dk, lateral, out)
    expected = _kernels.spectra_reference(h0.astype(np.complex128), omega, t, dk, lateral)
    for slot in range(4):
        _close(out[slot], expected[slot])


@pytest.mark.parametrize("n", SIZES)
def test_spectra_kernel_gives_real_fields(n):
    """Every packed pair is two Hermitian spectra, so the eight fields come out real:
    unpacking the kernel's output gives spectra with A(−k) = conj A(k)."""
    h0, omega_table, _, dk = _lattice_case(n, seed=7)
    out = np.empty((4, n, n), np.complex64)
    _kernels.spectra_kernel(h0, _kernels.slot_index(_every_slot(omega_table), n), np.exp(-1j * omega_table * 2.0), dk, 1.3, out)
    fields = np.fft.ifft2(out.astype(np.complex128), norm="forward")
    for slot in range(4):
        a, b = _unpack(out[slot].astype(np.complex128))
        real_a = np.fft.ifft2(a, norm="forward")
        real_b = np.fft.ifft2(b, norm="forward")
        scale = np.abs(fields[slot]).max()
        assert np.abs(real_a.imag).max() <= FLOAT32 * scale
        assert np.abs(real_b.imag).max() <= FLOAT32 * scale
        _close(fields[slot], real_a.real + 1j * real_b.real)


def _transformed_fields(n: int, seed: int, lateral: float):
    h0, omega_table, _, dk = _lattice_case(n, seed=seed)
    out = np.empty((4, n, n), np.complex64)
    _kernels.spectra_kernel(h0, _kernels.slot_index(_every_slot(omega_table), n), np.exp(-1j * omega_table * 1.1), dk, lateral, out)
    return np.fft.ifft2(out, norm="forward").astype(np.complex64)


@pytest.mark.parametrize("n", SIZES)
@pytest.mark.parametrize("lateral", (0.0, 1.0, 40.0))
def test_surface_kernel_matches_reference(n, lateral):
    """Jacobian, normal and foam in place; ``lateral=40`` folds part of the surface."""
    fields = _transformed_fields(n, seed=n + 1, lateral=lateral)
    expected = _kernels.surface_reference(fields.astype(np.complex128), 0.3, 0.25)
    actual = fields.copy()
    _kernels.surface_kernel(actual, 0.3, 0.25)
    if lateral == 40.0:
        assert (expected[2].real < 0).any(), "the case meant to fold does not"
    # Slot 0 (h, Dx) and the real part of slot 1 (Dy) pass through untouched.
    np.testing.assert_array_equal(actual[0], fields[0])
    np.testing.assert_array_equal(actual[1].real, fields[1].real)
    _close(actual[2].real, expected[2].real)  # Jacobian
    # Normal components are O(1): compare absolutely at float32 resolution.
    for slot in (1, 2, 3):
        np.testing.assert_allclose(actual[slot].imag, expected[slot].imag, rtol=0, atol=10 * FLOAT32)
    np.testing.assert_allclose(actual[3].real, expected[3].real, rtol=0, atol=10 * FLOAT32)  # foam


def test_surface_kernel_flat_surface():
    """No slopes, no displacement: J = 1, normal (0, 0, 1), no foam below threshold 0.3."""
    fields = np.zeros((4, 16, 16), np.complex64)
    _kernels.surface_kernel(fields, 0.3, 0.3)
    np.testing.assert_array_equal(fields[2].real, 1.0)
    np.testing.assert_array_equal(fields[1].imag, 0.0)
    np.testing.assert_array_equal(fields[2].imag, 0.0)
    np.testing.assert_array_equal(fields[3].imag, 1.0)
    np.testing.assert_array_equal(fields[3].real, 0.0)


@pytest.mark.parametrize("n", SIZES)
@pytest.mark.parametrize("lateral", (0.0, 1.0, 2.0))
def test_velocity_kernel_is_the_time_derivative_of_the_spectra(n, lateral):
    """The velocity spectra are d/dt of the reference spectra (h, Dx, Dy), taken by a
    central difference in float64 (step 1e-5 s: truncation (ωΔt)²/6 < 1e-9, far below
    float32), then unpacked from the reference's packing and repacked as the kernel's:
    slot 0 = V_x + iV_y, slot 1 = V_z."""
    h0, omega_table, omega, dk = _lattice_case(n, seed=3 * n)
    t, step = 4.2, 1e-5
    after = _kernels.spectra_reference(h0.astype(np.complex128), omega, t + step, dk, lateral)
    before = _kernels.spectra_reference(h0.astype(np.complex128), omega, t - step, dk, lateral)
    derivative = (after - before) / (2 * step)
    dh, ddx = _unpack(derivative[0])
    ddy, _ = _unpack(derivative[1])
    out = np.empty((2, n, n), np.complex64)
    _kernels.velocity_kernel(h0, _every_slot(omega_table), omega_table, np.exp(-1j * omega_table * t), dk, lateral, out)
    if lateral > 0:
        _close(out[0], ddx + 1j * ddy)
    else:
        np.testing.assert_array_equal(out[0], 0.0)
    _close(out[1], dh)


def test_kernels_accept_a_lattice_with_only_low_waves():
    """Mean, Nyquist row and column: zero in every slot (nothing carried there)."""
    n = 48
    h0, omega_table, _, dk = _lattice_case(n)
    out = np.ones((4, n, n), np.complex64)
    _kernels.spectra_kernel(h0, _kernels.slot_index(_every_slot(omega_table), n), np.exp(-1j * omega_table * 0.5), dk, 1.0, out)
    half = n // 2
    assert np.all(out[:, 0, 0] == 0)
    assert np.all(out[:, half, :] == 0)
    assert np.all(out[:, :, half] == 0)
    assert math.isfinite(float(np.abs(out).max()))


def test_compact_slots_give_the_same_spectra_as_every_slot():
    """The Ocean keeps rotations only for the q that carry energy; the packed spectra
    must not change (q without energy have zero amplitudes)."""
    from oceanfield.physics.seastate import SeaState, height_period
    from oceanfield.surface.synth import Ocean
    from oceanfield.surface.tile import Tile

    ocean = Ocean(SeaState((height_period(1.0, 6.0),)), Tile(120.0, 48), seed=5)
    t = 2.75
    compact = np.empty((4, 48, 48), np.complex64)
    rotation = np.exp(-1j * ocean._omega_used * t)
    _kernels.spectra_kernel(ocean._h0, _kernels.slot_index(ocean._slots, 48), rotation, ocean.tile.dk, 1.0, compact)
    full = np.empty_like(compact)
    omega, _ = ocean._omega_by_q()
    _kernels.spectra_kernel(ocean._h0, _kernels.slot_index(_every_slot(omega), 48), np.exp(-1j * omega * t),
                            ocean.tile.dk, 1.0, full)
    np.testing.assert_array_equal(compact, full)
    assert ocean._omega_used.size < omega.size / 2


@pytest.mark.parametrize("n", [16, 30])
def test_slot_index_is_the_slot_of_each_waves_q(n):
    """Row r, column c of the half lattice holds slots[nx² + ny²] for that wave index, and −1
    at the mean and beyond the table."""
    half = n // 2
    slots = np.arange(1, half * half + 2, dtype=np.int32)  # q ≤ (N/2)²: the carried disc
    index = _kernels.slot_index(slots, n)
    assert index.shape == (half + 1, n) and index.dtype == np.int32
    for r in range(half + 1):
        for c in range(n):
            ny = r if r < half else r - n
            nx = c if c < half else c - n
            q = nx * nx + ny * ny
            assert index[r, c] == (slots[q] if 0 < q < slots.size else -1)


def test_the_composite_block_spectra_kernel_matches_its_numpy_reference():
    from oceanfield.surface import _kernels

    rng = np.random.default_rng(4)
    shape = (6, 10)
    h0, mirror = (rng.normal(size=shape) + 1j * rng.normal(size=shape) for _ in range(2))
    omega = rng.uniform(0.1, 3.0, shape)
    factors = rng.normal(size=(4,) + shape) + 1j * rng.normal(size=(4,) + shape)
    out = np.empty((4,) + shape, dtype=np.complex128)
    _kernels.block_spectra_kernel(h0, mirror, omega, factors, 2.7, out)
    np.testing.assert_allclose(out, _kernels.block_spectra_reference(h0, mirror, omega, factors, 2.7),
                               rtol=1e-13, atol=1e-13)
