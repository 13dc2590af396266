"""Floating bodies: heave, pitch and roll of a waterplane riding the displaced surface.

Knows nothing of presets or files: `WaveModes`, a `Body` and times in, motions out, in
internal axes (x along image columns, y along rows, z up) and SI units.

This is a picture of a body riding the sea, not seakeeping analysis. The body is its
waterplane, a rectangle (length along its heading, beam across) held at a fixed
horizontal position. At each instant the displaced surface is sampled over the
waterplane on a grid of cell midpoints and the least-squares plane through it gives the
wave's heave (the plane's height at the centre), pitch (its slope along the heading) and
roll (its slope across): a long body averages out waves shorter than itself. Optionally
each motion then passes through a damped second-order response, the standard
single-degree-of-freedom model

    x'' + 2 ζ ω_n x' + ω_n² x = ω_n² F(t),     ω_n = 2π / natural period,

with F the wave plane's motion, solved as the convolution of F with the model's impulse
response over a bounded window of the past (until its envelope has decayed to 1/10 000),
from forcing sampled on a fixed grid of times (multiples of ``step``). The motion at a
time therefore depends on that time alone, not on which other frames were asked for.
No surge, sway or yaw, no added mass, no coupling between motions, no hydrodynamic
forces: natural periods and damping ratios are the user's picture of the hull.

Angles: pitch is positive bow up, roll positive starboard down (port up), with heading
ψ measured counter-clockwise from +x like ``towards_deg``. The body's rotation is
R = Rz(ψ) · Ry(−pitch) · Rx(roll) in its (forward, port, up) axes: its up axis is the
plane's normal, its forward axis stays in the vertical plane of the heading.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .modes import WaveModes
from .probes import surface_at

__all__ = ["Response", "Body", "BodyMotion", "body_motion", "impulse_response", "quaternion", "MAX_SAMPLES_ALONG", "MAX_SAMPLES_ACROSS"]

#: Most waterplane samples along the length and across the beam.
MAX_SAMPLES_ALONG = 16
MAX_SAMPLES_ACROSS = 8
_MEMORY_DECAY = 1e-4  # the window ends where the impulse response's envelope has decayed to this
# (what it leaves out then integrates to under 1e-3 of the response, critically damped included)
_STEPS_PER_PERIOD = 40  # forcing samples per natural period (the shortest one given)


@dataclass(frozen=True)
class Response:
    """A damped second-order response: natural period (s, > 0) and damping ratio (> 0)."""

    natural_period: float
    damping_ratio: float

    def __post_init__(self) -> None:
        for name, value, allowed in (
            ("natural period", self.natural_period, "a finite number of seconds > 0"),
            ("damping ratio", self.damping_ratio,
             "a finite number > 0 (an undamped body never forgets its past; 0.05-0.3 is typical of a hull)"),
        ):
            if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)) \
                    or not math.isfinite(value) or value <= 0:
                raise ValueError(f"{name}: {value!r} is not allowed; allowed: {allowed}")

    @property
    def memory(self) -> float:
        """Seconds of the past the response remembers (its envelope decays to 1/10 000)."""
        wn = 2.0 * math.pi / self.natural_period
        z = self.damping_ratio
        slowest = wn * z if z <= 1.0 else wn * (z - math.sqrt(z * z - 1.0))
        return math.log(1.0 / _MEMORY_DECAY) / slowest


@dataclass(frozen=True)
class Body:
    """A floating body's waterplane and, optionally, its responses.

    Parameters
    ----------
    x, y : float
        Centre of the waterplane in metres, internal axes.
    length, beam : float
        Waterplane length along the heading and beam across it, in metres (> 0).
    heading : float
        Direction the bow points, radians counter-clockwise from +x.
    heave, pitch, roll : Response or None
        Damped response of each motion; None follows the wave plane directly.
    name : str
        A label for output files.
    """

    x: float
    y: float
    length: float
    beam: float
    heading: float = 0.0
    heave: Response | None = None
    pitch: Response | None = None
    roll: Response | None = None
    name: str = "body"

    def __post_init__(self) -> None:
        for name in ("x", "y", "heading"):
            value = getattr(self, name)
            if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)) \
                    or not math.isfinite(value):
                raise ValueError(f"body {name}: {value!r} is not allowed; allowed: a finite number")
        for name in ("length", "beam"):
            value = getattr(self, name)
            if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)) \
                    or not math.isfinite(value) or value <= 0:
                raise ValueError(f"body {name}: {value!r} is not allowed; allowed: a finite length > 0 metres")
        for name in ("heave", "pitch", "roll"):
            value = getattr(self, name)
            if value is not None and not isinstance(value, Response):
                raise ValueError(f"body {name}: {value!r} is not allowed; allowed: a Response or None")

    @property
    def responses(self) -> tuple[Response, ...]:
        return tuple(r for r in (self.heave, self.pitch, self.roll) if r is not None)


@dataclass(frozen=True, eq=False)
class BodyMotion:
    """A body's motion at each time asked for (internal axes, SI units).

    Attributes
    ----------
    heave : NDArray, shape (T,)
        Height of the waterplane's centre above the mean water level, metres.
    pitch, roll : NDArray, shape (T,)
        Pitch (bow up positive) and roll (starboard down positive), radians.
    position : NDArray, shape (T, 3)
        Centre of the waterplane: (x, y, heave).
    rotation : NDArray, shape (T, 3, 3)
        Rotation taking the body's level axes (forward, port, up) at zero heading to its
        attitude; columns are the body's forward, port and up axes in internal axes.
    samples : int
        Waterplane points sampled per instant.
    worst_residual : float
        The largest inversion residual of those points, metres.
    """

    heave: NDArray[np.float64]
    pitch: NDArray[np.float64]
    roll: NDArray[np.float64]
    position: NDArray[np.float64]
    rotation: NDArray[np.float64]
    samples: int
    worst_residual: float


def impulse_response(response: Response, lag: ArrayLike) -> NDArray[np.float64]:
    """Impulse response g(τ) of x'' + 2ζω_n x' + ω_n² x = ω_n² F, per second (∫g dτ = 1).

    Under-damped: (ω_n²/ω_d) e^{−ζω_n τ} sin(ω_d τ), ω_d = ω_n√(1 − ζ²); critically damped:
    ω_n² τ e^{−ω_n τ}; over-damped: ω_n²/(s1 − s2) (e^{s1 τ} − e^{s2 τ}) with
    s1,2 = ω_n(−ζ ± √(ζ² − 1)). Zero for τ < 0 (standard second-order system theory,
    e.g. Ogata, *Modern Control Engineering*, ch. 5).
    """
    tau = np.asarray(lag, dtype=np.float64)
    wn = 2.0 * math.pi / response.natural_period
    z = response.damping_ratio
    if z < 1.0:
        wd = wn * math.sqrt(1.0 - z * z)
        g = wn * wn / wd * np.exp(-z * wn * tau) * np.sin(wd * tau)
    elif z == 1.0:
        g = wn * wn * tau * np.exp(-wn * tau)
    else:
        root = wn * math.sqrt(z * z - 1.0)
        s1, s2 = -z * wn + root, -z * wn - root
        g = wn * wn / (s1 - s2) * (np.exp(s1 * tau) - np.exp(s2 * tau))
    return np.where(tau >= 0.0, g, 0.0)


def _waterplane(body: Body, spacing: float) -> tuple[NDArray, NDArray, float]:
    """Midpoints (ξ forward, ζ to port) of an n_l × n_b grid over the waterplane, and the
    larger of its two cell sides."""
    along = int(min(max(math.ceil(body.length / spacing), 2), MAX_SAMPLES_ALONG))
    across = int(min(max(math.ceil(body.beam / spacing), 2), MAX_SAMPLES_ACROSS))
    xi = ((np.arange(along) + 0.5) / along - 0.5) * body.length
    zeta = ((np.arange(across) + 0.5) / across - 0.5) * body.beam
    return np.repeat(xi, across), np.tile(zeta, along), max(body.length / along, body.beam / across)


def _wave_plane(modes: WaveModes, body: Body, times: NDArray, spacing: float) -> tuple[NDArray, NDArray, NDArray, int, float]:
    """Heave, pitch and roll of the least-squares plane through the surface over the waterplane."""
    xi, zeta, cell = _waterplane(body, spacing)
    # Waves shorter than two sample spacings are beyond what the grid resolves; over the
    # waterplane they average to a few per cent of their (small) height: leave them out.
    resolved = modes.longer_than(2.0 * cell) if cell > spacing else modes
    c, s = math.cos(body.heading), math.sin(body.heading)
    px = body.x + xi * c - zeta * s
    py = body.y + xi * s + zeta * c
    points = surface_at(resolved, px[None, :], py[None, :], times[:, None])
    eta = points.position[..., 2]
    # The grid is symmetric about the centre, so the fit's normal equations decouple.
    heave = eta.mean(axis=1)
    slope_along = eta @ xi / float(xi @ xi)
    slope_across = eta @ zeta / float(zeta @ zeta)
    pitch = np.arctan(slope_along)
    roll = np.arctan(slope_across * np.cos(pitch))
    return heave, pitch, roll, xi.size, float(points.residual.max(initial=0.0))


def _rotation(heading: float, pitch: NDArray, roll: NDArray) -> NDArray[np.float64]:
    """R = Rz(ψ) Ry(−pitch) Rx(roll), shape (T, 3, 3)."""
    c, s = math.cos(heading), math.sin(heading)
    rz = np.array([[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]])
    cp, sp = np.cos(-pitch), np.sin(-pitch)
    cr, sr = np.cos(roll), np.sin(roll)
    one, zero = np.ones_like(pitch), np.zeros_like(pitch)
    ry = np.stack([np.stack([cp, zero, sp], -1), np.stack([zero, one, zero], -1), np.stack([-sp, zero, cp], -1)], -2)
    rx = np.stack([np.stack([one, zero, zero], -1), np.stack([zero, cr, -sr], -1), np.stack([zero, sr, cr], -1)], -2)
    return rz @ ry @ rx


def body_motion(
    modes: WaveModes,
    body: Body,
    times: ArrayLike,
    *,
    spacing: float,
    step: float | None = None,
    plane=None,
) -> BodyMotion:
    """Heave, pitch and roll of ``body`` at ``times`` (seconds).

    Parameters
    ----------
    modes : WaveModes
        The sea (``Ocean.modes()``).
    body : Body
    times : array_like, shape (T,)
    spacing : float
        Target distance between waterplane samples in metres (the tile's texel spacing is
        a good choice: the shortest wave on the tile is two texels). At most
        `MAX_SAMPLES_ALONG` × `MAX_SAMPLES_ACROSS` points are used.
    step : float, optional
        Time between forcing samples for the damped responses; default a fortieth of the
        shortest natural period given. The forcing is sampled at whole multiples of it.
    plane : callable, optional
        ``plane(times) -> (heave, pitch, roll, samples, worst residual)`` of the wave plane
        in place of the sea's over the body's fixed waterplane (``surface.riding``: a body
        on a course, riding the sea and other bodies' wakes). The returned position and
        rotation are then the caller's to replace.

    Returns
    -------
    BodyMotion
    """
    if not isinstance(body, Body):
        raise ValueError(f"body: {type(body).__name__} is not allowed; allowed: a Body")
    if not (math.isfinite(spacing) and spacing > 0):
        raise ValueError(f"spacing: {spacing!r} is not allowed; allowed: a finite length > 0 metres")
    times = np.atleast_1d(np.asarray(times, dtype=np.float64))
    if times.ndim != 1 or not np.all(np.isfinite(times)):
        raise ValueError("times: allowed: a one-dimensional array of finite times in seconds")
    responses = body.responses
    if plane is None:
        def plane(instants):
            return _wave_plane(modes, body, instants, spacing)
    if not responses:
        heave, pitch, roll, samples, residual = plane(times)
    else:
        if step is None:
            step = min(r.natural_period for r in responses) / _STEPS_PER_PERIOD
        if not (math.isfinite(step) and step > 0):
            raise ValueError(f"step: {step!r} is not allowed; allowed: a finite number of seconds > 0")
        memory = max(r.memory for r in responses)
        # Forcing at whole multiples of `step` only: frame t uses the samples k·step in
        # [t − memory, t], whatever other frames are asked for.
        last = np.floor(times / step).astype(np.int64)
        first = np.floor((times - memory) / step).astype(np.int64)
        grid = np.unique(np.concatenate([np.arange(a, b + 1) for a, b in zip(first, last)]))
        if grid.size > 2_000_000:
            raise ValueError(
                f"step: {step:g} s over a response memory of {memory:.0f} s needs {grid.size} forcing samples; "
                "allowed: fewer frames, a shorter memory (more damping) or a longer step"
            )
        forcing = plane(grid * step)
        samples, residual = forcing[3], forcing[4]
        direct = plane(times) if len(responses) < 3 else None
        motions = []
        for index, response in enumerate((body.heave, body.pitch, body.roll)):
            series = forcing[index]
            if response is None:
                motions.append(direct[index])
                continue
            out = np.empty(times.size)
            for i, (t, a, b) in enumerate(zip(times, first, last)):
                lo, hi = np.searchsorted(grid, [a, b + 1])
                lag = t - grid[lo:hi] * step
                weight = impulse_response(response, lag)
                # Rectangle rule, normalised so a steady forcing gives the same steady motion.
                out[i] = float(weight @ series[lo:hi]) / float(weight.sum())
            motions.append(out)
        heave, pitch, roll = motions
    position = np.stack([np.full(times.size, float(body.x)), np.full(times.size, float(body.y)), heave], axis=-1)
    return BodyMotion(heave, pitch, roll, position, _rotation(body.heading, pitch, roll), samples, residual)


def quaternion(rotation: ArrayLike) -> NDArray[np.float64]:
    """Unit quaternions (w, x, y, z), w ≥ 0, of rotation matrices of shape (..., 3, 3).

    Shepperd's method (Shepperd 1978, "Quaternion from rotation matrix", J. Guidance and
    Control 1(3)): the largest of the four squared components is taken from the trace
    or a diagonal entry, the others from off-diagonal sums, for stability at any angle.
    """
    r = np.asarray(rotation, dtype=np.float64)
    m00, m11, m22 = r[..., 0, 0], r[..., 1, 1], r[..., 2, 2]
    candidates = np.stack([1 + m00 + m11 + m22, 1 + m00 - m11 - m22, 1 - m00 + m11 - m22, 1 - m00 - m11 + m22], -1)
    pick = np.argmax(candidates, axis=-1)
    big = 0.5 * np.sqrt(np.take_along_axis(candidates, pick[..., None], -1)[..., 0])
    d21, d02, d10 = r[..., 2, 1] - r[..., 1, 2], r[..., 0, 2] - r[..., 2, 0], r[..., 1, 0] - r[..., 0, 1]
    s21, s02, s10 = r[..., 2, 1] + r[..., 1, 2], r[..., 0, 2] + r[..., 2, 0], r[..., 1, 0] + r[..., 0, 1]
    q = np.stack([
        np.select([pick == 0, pick == 1, pick == 2], [big, d21 / (4 * big), d02 / (4 * big)], d10 / (4 * big)),
        np.select([pick == 0, pick == 1, pick == 2], [d21 / (4 * big), big, s10 / (4 * big)], s02 / (4 * big)),
        np.select([pick == 0, pick == 1, pick == 2], [d02 / (4 * big), s10 / (4 * big), big], s21 / (4 * big)),
        np.select([pick == 0, pick == 1, pick == 2], [d10 / (4 * big), s02 / (4 * big), s21 / (4 * big)], big),
    ], -1)
    return np.where(q[..., :1] < 0, -q, q)
