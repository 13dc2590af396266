"""Wakes of moving bodies (surface/wake.py, surface/_wake_kernels.py): kernels against their
references, frames as pure functions of time, probes against maps, validation, notes."""

from __future__ import annotations

import math

import numba
import numpy as np
import pytest

from oceanfield.physics.constants import GRAVITY
from oceanfield.physics.seastate import SeaState, wind_sea
from oceanfield.physics.wake import BLOCK_COEFFICIENT
from oceanfield.surface import _wake_kernels as kern
from oceanfield.surface.probes import SurfacePoints
from oceanfield.surface.wake import Course, Hull, Wake, WakeRegion, combine


def _turning_course(speed: float = 3.0, fps: float = 24.0, duration: float = 30.0) -> Course:
    """A per-frame course curving round (20, 30) on a 64 m region."""
    t = np.arange(0.0, duration, 1.0 / fps)
    phase = speed * t / 20.0
    return Course(times=t, x=32 + 20 * np.cos(phase), y=32 + 16 * np.sin(phase))


def _small_wake(**options) -> Wake:
    vessels = [(Hull(6.0, 2.0, 0.3), _turning_course()),
               (Hull(4.0, 1.5, 0.2), Course(times=[0.0, 30.0], x=[4.0, 60.0], y=[10.0, 12.0]))]
    options.setdefault("lookback", 12.0)
    return Wake(vessels, WakeRegion(0.0, 0.0, 64.0, 64), **options)


def test_spectra_kernel_matches_its_numpy_reference_with_two_vessels_and_velocity():
    wake = _small_wake(velocity=True, surface_tension=0.073, depth=6.0)
    kernel = wake._spectra(20.0, 11)
    reference = wake._spectra(20.0, 11, kernel=False)
    scale = np.abs(reference).max(axis=(1, 2), keepdims=True)
    assert np.abs(kernel - reference).max() / scale.min() < 1e-5
    assert np.all(np.abs(kernel - reference) <= 1e-5 * scale)


def test_point_and_foam_kernels_match_their_references():
    rng = np.random.default_rng(4)
    kx, ky = rng.normal(size=50), rng.normal(size=50)
    weight = rng.choice([1.0, 2.0], size=50)
    spec = rng.normal(size=(11, 50)) + 1j * rng.normal(size=(11, 50))
    x, y = rng.uniform(0, 50, 7), rng.uniform(0, 50, 7)
    out = np.empty((7, 11))
    kern.wake_point_kernel(kx, ky, weight, spec, x, y, out)
    assert out == pytest.approx(kern.wake_point_reference(kx, ky, weight, spec, x, y), abs=1e-12)
    capsules = [np.array(v, dtype=float) for v in
                ([5, 20], [5, 30], [30, 20], [8, 50], [2, 1], [4, 6], [1, 0.5], [0.2, 0.9])]
    a = np.zeros((64, 64), np.float32)
    b = np.zeros((64, 64), np.float32)
    kern.foam_trail_kernel(-3.0, 1.0, 0.75, *capsules, a)
    kern.foam_trail_reference(-3.0, 1.0, 0.75, *capsules, b)
    assert np.abs(a - b).max() < 1e-6 and a.max() > 0.5


def test_a_hull_at_rest_sinks_the_water_by_its_draft():
    """Statics: the patch's peak pressure ρ g d depresses the surface by d where the patch
    is large against its waves (the steady limit of the Cauchy–Poisson integral is −p/ρg: Lamb 1932, ch. IX, from memory);
    the periodic lattice's zero mean lifts it by the displaced volume over the lattice."""
    hull = Hull(20.0, 8.0, 0.5)
    wake = Wake([(hull, Course(times=[0, 1], x=[32, 32], y=[32, 32]))], WakeRegion(0, 0, 64, 64), lookback=300.0)
    centre = float(wake.frame(1000.0).height[32, 32])
    volume = BLOCK_COEFFICIENT * hull.length * hull.beam * hull.draft
    assert centre == pytest.approx(-hull.draft + volume / wake.lattice_extent**2, rel=5e-3)


def test_velocity_is_the_time_derivative_of_height_and_displacement():
    wake = _small_wake(velocity=True)
    t, dt = 15.0, 1e-3
    frame, after, before = wake.frame(t), wake.frame(t + dt), wake.frame(t - dt)
    for axis, name in ((2, "height"), (0, "displacement_x"), (1, "displacement_y")):
        fd = (getattr(after, name).astype(np.float64) - getattr(before, name)) / (2 * dt)
        assert np.abs(frame.velocity[..., axis] - fd).max() < 1e-3 * np.abs(fd).max() + 1e-5


def test_surface_at_equals_the_maps_at_texels():
    wake = _small_wake(velocity=True)
    t = 17.5
    frame = wake.frame(t)
    iy, ix = np.array([10, 30, 40, 63]), np.array([20, 33, 50, 0])
    points = wake.surface_at(ix * 1.0, iy * 1.0, t)
    assert points.displacement[:, 2] == pytest.approx(frame.height[iy, ix], abs=1e-6)
    assert points.displacement[:, 0] == pytest.approx(frame.displacement_x[iy, ix], abs=1e-6)
    assert points.displacement[:, 1] == pytest.approx(frame.displacement_y[iy, ix], abs=1e-6)
    assert points.normal == pytest.approx(frame.normal[iy, ix], abs=1e-6)
    assert points.velocity == pytest.approx(frame.velocity[iy, ix], abs=1e-6)
    assert points.jacobian == pytest.approx(frame.jacobian[iy, ix], abs=1e-6)
    assert np.all(points.residual == 0)


def test_surface_at_broadcasts_times_and_excludes_a_vessels_own_wake():
    wake = _small_wake()
    t = np.array([[14.0], [16.0]])
    both = wake.surface_at(np.array([10.0, 30.0, 50.0]), 20.0, t)
    assert both.displacement.shape == (2, 3, 3)
    first, second = (wake.surface_at(np.array([10.0, 30.0, 50.0]), 20.0, t, exclude=i) for i in (1, 0))
    # the wakes add linearly: leaving out each in turn sums to the whole
    assert first.displacement + second.displacement == pytest.approx(both.displacement, abs=1e-7)
    with pytest.raises(ValueError, match="exclude"):
        wake.surface_at(0.0, 0.0, 1.0, exclude=2)


def test_a_frame_alone_equals_the_same_frame_after_others_bit_for_bit_on_any_threads():
    """Farm determinism: nothing a frame computes depends on frames before it, the FFT's
    thread count or numba's."""
    alone = _small_wake(velocity=True, fft_workers=1).frame(21.0)
    wake = _small_wake(velocity=True, fft_workers=2)
    for t in (3.0, 29.0, 21.5):
        wake.frame(t)
    threads = numba.get_num_threads()
    numba.set_num_threads(1)
    try:
        single = _small_wake(velocity=True, fft_workers=1).frame(21.0)
    finally:
        numba.set_num_threads(threads)
    for other in (wake.frame(21.0), single):
        for name in ("height", "displacement_x", "displacement_y", "jacobian", "normal", "foam", "velocity"):
            assert np.array_equal(getattr(alone, name), getattr(other, name)), name


def test_padding_keeps_the_wake_from_wrapping_into_the_region():
    """The same texels from a region four times the area agree: no periodic image enters."""
    course = Course(times=[0.0, 40.0], x=[2.0, 62.0], y=[60.0, 4.0])
    hull = Hull(5.0, 2.0, 0.3)
    small = Wake([(hull, course)], WakeRegion(0, 0, 64, 64), lookback=30.0).frame(30.0)
    large = Wake([(hull, course)], WakeRegion(-64, -64, 128, 128), lookback=30.0).frame(30.0)
    inner = large.height[64:, 64:]
    assert np.abs(small.height - inner).max() < 2e-3 * np.abs(inner).max()


def test_foam_trail_follows_the_stern_and_fades_with_age():
    course = Course(times=[0.0, 20.0], x=[4.0, 64.0], y=[32.0, 32.0])  # 3 m/s, Fr_L 0.39
    wake = Wake([(Hull(6.0, 2.0, 0.3), course)], WakeRegion(0, 0, 64, 64), foam_lifetime=5.0)
    foam = wake.foam(15.0)  # the hull's centre at x = 49, stern at 46
    # on the track the strength is e^{−age/lifetime}, the age being the distance from the stern over 3 m/s
    for x in (44, 30, 10):
        assert foam[32, x] == pytest.approx(math.exp(-(46 - x) / 3.0 / 5.0), rel=0.02)
    assert foam[32, 56] == 0.0 and foam[10, 40] == 0.0   # not ahead of the bow, not far abeam
    assert foam[32, 51] == pytest.approx((3.0 / math.sqrt(GRAVITY * 6.0) - 0.3) / 0.3, rel=0.02)  # bow foam
    # across: (1 − (d/w)²)² with the half-width w = (B/2)√(1 + age/lifetime) widening with age
    for x in (10, 30):
        w2 = 1.0 + (46 - x) / 3.0 / 5.0
        assert foam[33, x] / foam[32, x] == pytest.approx((1 - 1 / w2) ** 2, rel=0.03)


def test_bad_hulls_regions_and_options_are_refused():
    course = Course(times=[0, 1], x=[0, 1], y=[0, 0])
    region = WakeRegion(0, 0, 64, 64)
    with pytest.raises(ValueError, match="hull length"):
        Hull(0.0, 1.0, 1.0)
    with pytest.raises(ValueError, match="hull draft"):
        Hull(1.0, 1.0, -0.1)
    with pytest.raises(ValueError, match="resolution"):
        WakeRegion(0, 0, 64, 15)
    with pytest.raises(ValueError, match="size"):
        WakeRegion(0, 0, -1, 16)
    with pytest.raises(ValueError, match=r"vessels\[0\]"):
        Wake([(course, Hull(1, 1, 1))], region)
    for key, value in (("lookback", 0.0), ("depth", -1.0), ("lateral_factor", -1.0), ("fft_workers", 0),
                       ("foam_lifetime", float("nan"))):
        with pytest.raises(ValueError, match=key):
            Wake([(Hull(1, 1, 1), course)], region, **{key: value})
    with pytest.raises(ValueError, match="t:"):
        Wake([(Hull(1, 1, 1), course)], region).frame(float("nan"))


def test_notes_warn_of_high_froude_numbers_critical_depth_and_a_course_leaving_the_region():
    course = Course(times=[0.0, 10.0], x=[10.0, 110.0], y=[30.0, 30.0])  # 10 m/s
    notes = " ".join(Wake([(Hull(10.0, 3.0, 0.5), course)], WakeRegion(0, 0, 64, 64),
                          depth=10.0**2 / GRAVITY).notes())
    assert "hull Froude number" in notes and "1.01" in notes  # U/√(gL) = 10/√(98) = 1.01
    assert "depth Froude number" in notes and "1.00" in notes
    assert "leaves the wake region at sample 1" in notes
    calm = Wake([(Hull(10.0, 3.0, 0.5), Course(times=[0.0, 10.0], x=[10.0, 40.0], y=[30.0, 30.0]))],
                WakeRegion(0, 0, 64, 64), lookback=60.0).notes()
    assert calm == []
    # 3 m/s: transverse waves 5.8 m long; 5 s of look-back holds 7.5 m of them, under three
    short = Wake([(Hull(10.0, 3.0, 0.5), Course(times=[0.0, 10.0], x=[10.0, 40.0], y=[30.0, 30.0]))],
                 WakeRegion(0, 0, 64, 64), lookback=5.0).notes()
    assert len(short) == 1 and "look-back of at least 12 s" in short[0]


def test_for_sea_takes_the_water_from_the_sea_state():
    sea = SeaState((wind_sea(8.0),), depth=12.0, surface_tension=0.07)
    wake = Wake.for_sea(sea, [(Hull(5, 2, 0.3), Course(times=[0, 1], x=[1, 2], y=[1, 1]))], WakeRegion(0, 0, 32, 16))
    assert (wake.depth, wake.surface_tension, wake.density, wake.gravity) == (12.0, 0.07, sea.density, sea.gravity)
    with pytest.raises(ValueError, match="depth"):
        Wake.for_sea(sea, wake.vessels, WakeRegion(0, 0, 32, 16), depth=3.0)


def test_combine_adds_heights_and_slopes():
    def points(h, sx, dz):
        shape = (1,)
        normal = np.array([[-sx, 0.0, 1.0]]) / math.hypot(sx, 1.0)
        return SurfacePoints(rest=np.zeros(shape + (2,)), residual=np.zeros(shape), iterations=np.zeros(shape, int),
                             position=np.array([[0.0, 0.0, h]]), displacement=np.array([[0.0, 0.0, h]]),
                             normal=normal, velocity=np.array([[0.0, 0.0, dz]]), rise_rate=np.array([dz]),
                             jacobian=np.ones(shape))
    total = combine(points(1.0, 0.1, 0.5), points(0.2, 0.05, -0.1))
    assert total.displacement[0, 2] == pytest.approx(1.2) and total.rise_rate[0] == pytest.approx(0.4)
    assert -total.normal[0, 0] / total.normal[0, 2] == pytest.approx(0.15)


def test_probes_by_non_uniform_fft_match_the_direct_sums(monkeypatch):
    import oceanfield.surface.wake as wake_module

    wake = _small_wake(velocity=True)
    rng = np.random.default_rng(1)
    x, y = rng.uniform(0, 64, 40), rng.uniform(0, 64, 40)
    direct = wake.surface_at(x, y, 17.0)
    monkeypatch.setattr(wake_module, "NUFFT_ABOVE", 0)
    spread = wake.surface_at(x, y, 17.0)
    for name in ("displacement", "normal", "velocity", "jacobian"):
        assert getattr(spread, name) == pytest.approx(getattr(direct, name), abs=1e-9), name


def test_a_course_from_far_away_pads_only_for_what_can_reach_the_region():
    """Pieces farther from the region than the waves can travel in the look-back are left
    out, so a course starting 5 km away costs what one starting just out of reach does."""
    hull, region = Hull(5.0, 2.0, 0.3), WakeRegion(0, 0, 64, 64)
    far = Course(times=[0.0, 1060.0], x=[-5000.0, 60.0], y=[32.0, 32.0])   # 4.8 m/s
    near = Course(times=[960.0, 1060.0], x=[far.position(960.0)[0], 60.0], y=[32.0, 32.0])
    a = Wake([(hull, far)], region, lookback=20.0)
    b = Wake([(hull, near)], region, lookback=20.0)
    assert a.lattice_size == b.lattice_size < 4 * region.resolution
    fa, fb = a.frame(1050.0), b.frame(1050.0)
    assert np.abs(fa.height - fb.height).max() < 1e-5 * np.abs(fb.height).max()


def test_the_kernels_cosine_and_sine_are_within_an_ulp_of_numpys():
    rng = np.random.default_rng(0)
    for scale in (1.0, 1e3, 1e5):
        x = rng.uniform(-scale, scale, 20000)
        out = np.empty(x.size, complex)
        kern.cis_kernel(x, out)
        assert np.abs(out.real - np.cos(x)).max() <= 2.3e-16
        assert np.abs(out.imag - np.sin(x)).max() <= 2.3e-16
