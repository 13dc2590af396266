"""Floating bodies (surface/bodies.py): averaging, signs, damped responses, rotations."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

from oceanfield import Ocean, SeaState, Tile, wind_sea
from oceanfield.physics.constants import GRAVITY
from oceanfield.physics.seastate import height_period
from oceanfield.surface.bodies import Body, Response, body_motion, impulse_response, quaternion
from oceanfield.surface.modes import WaveModes
from oceanfield.surface.probes import surface_at


def _single_wave(amplitude: float, wavelength: float, lateral: float = 0.0) -> WaveModes:
    """η = A cos(kx − ωt) travelling toward +x, deep water."""
    k = 2 * math.pi / wavelength
    return WaveModes([k], [0.0], [math.sqrt(GRAVITY * k)], [amplitude], [1j * lateral * amplitude], [0.0])


def test_a_one_metre_waterplane_heaves_like_the_probe_at_its_centre():
    """Issue check: correlation > 0.99 with the point probe."""
    ocean = Ocean(SeaState((wind_sea(10.0),)), Tile(200.0, 64), seed=3)
    modes = ocean.modes()
    t = np.arange(0.0, 60.0, 0.5)
    body = body_motion(modes, Body(40.0, 70.0, 1.0, 1.0), t, spacing=ocean.tile.spacing)
    probe = surface_at(modes, 40.0, 70.0, t).position[:, 2]
    assert np.corrcoef(body.heave, probe)[0, 1] > 0.99
    assert body.worst_residual < 1e-3


def test_a_body_three_peak_wavelengths_long_heaves_under_a_tenth_of_a_point():
    """Issue check: rms heave ratio < 1/10 for a body 3 λp long (JONSWAP γ 3.3, cos-2s
    spread 15°, tile 4 λp). The sinc-like averaging of a length-L plane leaves about
    λ/(πL) of each wave's height (common practice)."""
    sea = SeaState((height_period(2.0, 8.0, spread=math.radians(15.0)),))
    peak = sea.statistics().peak_wavelength
    ocean = Ocean(sea, Tile(4 * peak, 32), seed=1)
    modes = ocean.modes()
    t = np.arange(0.0, 120.0, 1.0)
    body = body_motion(modes, Body(10.0, 20.0, 3 * peak, peak / 4), t, spacing=ocean.tile.spacing)
    probe = surface_at(modes, 10.0, 20.0, t).position[:, 2]
    ratio = float(np.std(body.heave) / np.std(probe))
    assert ratio < 0.1, ratio


@pytest.mark.parametrize("t", [0.0, 0.7, 2.1])
def test_pitch_and_roll_signs_on_a_single_long_crested_wave(t):
    """A short body on one wave: pitch (bow up) = atan(∂η/∂x) heading along x; roll
    (starboard down) = −atan(∂η/∂x) heading along +y, whose port side is −x."""
    wavelength, amplitude = 80.0, 1.0
    modes = _single_wave(amplitude, wavelength)
    k = 2 * math.pi / wavelength
    w = math.sqrt(GRAVITY * k)
    x = 13.0
    slope = -amplitude * k * math.sin(k * x - w * t)
    small = wavelength / 40
    along = body_motion(modes, Body(x, 5.0, small, small / 2), [t], spacing=small / 8)
    across = body_motion(modes, Body(x, 5.0, small / 2, small, heading=math.pi / 2), [t], spacing=small / 8)
    # the plane through a short stretch of a cosine: slope to 0.1 % (derived: 1 − (kL)²/24...)
    assert along.pitch[0] == pytest.approx(math.atan(slope), rel=2e-3, abs=1e-6)
    assert across.roll[0] == pytest.approx(-math.atan(slope), rel=2e-3, abs=1e-6)
    assert abs(along.roll[0]) < 1e-9 and abs(across.pitch[0]) < 1e-9
    # the body's up axis is the plane's normal
    up = along.rotation[0][:, 2]
    assert up == pytest.approx(np.array([-slope, 0.0, 1.0]) / math.hypot(slope, 1.0), abs=2e-3 * abs(slope) + 1e-9)


def test_a_wave_three_body_lengths_long_is_followed_a_wave_as_long_is_not():
    modes = _single_wave(1.0, 90.0)
    t = np.linspace(0, 30, 61)
    short = body_motion(modes, Body(0.0, 0.0, 30.0, 5.0), t, spacing=1.0)
    long = body_motion(modes, Body(0.0, 0.0, 90.0, 5.0), t, spacing=1.0)
    # midpoint average of a cosine over L: sinc(kL/2) (derived): 0.827 at L = λ/3, 0 at L = λ
    assert np.std(short.heave) * math.sqrt(2) == pytest.approx(math.sin(math.pi / 3) / (math.pi / 3), rel=5e-3)
    assert np.std(long.heave) < 1e-3


def test_the_damped_heave_of_a_steady_wave_has_the_textbook_gain():
    """Steady-state amplitude of x'' + 2ζω_n x' + ω_n² x = ω_n² F cos ωt is
    1/√((1 − r²)² + (2ζr)²), r = ω/ω_n (single-degree-of-freedom system; Thomson &
    Dahleh, *Theory of Vibration with Applications*, 5th ed., §3.1)."""
    wavelength = 100.0
    modes = _single_wave(1.0, wavelength)
    period = 2 * math.pi / math.sqrt(GRAVITY * 2 * math.pi / wavelength)
    response = Response(period / 2.0, 0.2)
    t = np.linspace(200.0, 200.0 + 2 * period, 41)
    motion = body_motion(modes, Body(0.0, 0.0, 1.0, 1.0, heave=response), t, spacing=0.5)
    r = 0.5  # the wave's period is twice the natural period
    gain = 1.0 / math.sqrt((1 - r * r) ** 2 + (2 * 0.2 * r) ** 2)
    assert (motion.heave.max() - motion.heave.min()) / 2 == pytest.approx(gain, rel=0.01)


def test_a_damped_motion_depends_on_its_time_alone():
    ocean = Ocean(SeaState((wind_sea(8.0),)), Tile(100.0, 32), seed=4)
    body = Body(5.0, 5.0, 6.0, 2.0, roll=Response(4.0, 0.3), heave=Response(3.0, 0.5))
    together = body_motion(ocean.modes(), body, [10.0, 10.5, 11.0], spacing=1.0)
    alone = body_motion(ocean.modes(), body, [10.5], spacing=1.0)
    assert alone.roll[0] == together.roll[1] and alone.heave[0] == together.heave[1]


@pytest.mark.parametrize("damping", [0.1, 1.0, 2.5])
def test_the_impulse_response_integrates_to_one(damping):
    response = Response(5.0, damping)
    tau = np.linspace(0.0, response.memory, 200_001)
    g = impulse_response(response, tau)
    assert np.trapezoid(g, tau) == pytest.approx(1.0, abs=2e-3)


def test_quaternions_agree_with_scipy():
    rng = np.random.default_rng(2)
    matrices = Rotation.random(50, random_state=3).as_matrix()
    q = quaternion(matrices)
    expected = Rotation.from_matrix(matrices).as_quat()  # (x, y, z, w)
    expected = np.where(expected[:, 3:] < 0, -expected, expected)
    assert np.allclose(q, np.concatenate([expected[:, 3:], expected[:, :3]], axis=1), atol=1e-12)
    assert rng is not None


@pytest.mark.parametrize(
    "kwargs, message",
    [
        (dict(length=0.0), "length"),
        (dict(beam=-1.0), "beam"),
        (dict(x=float("inf")), "x"),
        (dict(heave=(3.0, 0.1)), "heave"),
    ],
)
def test_bad_bodies_are_refused(kwargs, message):
    settings = dict(x=0.0, y=0.0, length=10.0, beam=3.0)
    settings.update(kwargs)
    with pytest.raises(ValueError, match=message):
        Body(**settings)


def test_bad_responses_are_refused():
    with pytest.raises(ValueError, match="damping ratio"):
        Response(5.0, 0.0)
    with pytest.raises(ValueError, match="natural period"):
        Response(-1.0, 0.1)
