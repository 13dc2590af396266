"""The linear wake of a moving surface pressure: its formulas and its published angles.

Knows nothing of lattices, tiles or files: functions of wavenumbers, speeds and depths.

A hull is modelled, as is common practice in linear ship-wave theory, by a pressure patch
p(x) = p0·f(x) moving on the free surface. For each Fourier component the linearised
free-surface problem (Laplace's equation, a flat bottom at depth h, the kinematic and the
dynamic condition with surface tension) gives the forced oscillator

    η̂_tt + ω² η̂ = −(κ(k)/ρ) p̂,      κ = k·tanh(kh),   ω² = (g + (σ/ρ)k²)·κ,

whose causal solution from rest is the Cauchy–Poisson integral

    η̂(k, t) = −(κ/(ρω)) ∫_{−∞}^{t} p̂(k, τ) sin(ω(t − τ)) dτ

(Lamb 1932, ch. IX and §§255–256; Wehausen & Laitone 1960; section numbers beyond
§§255–256 from memory). For a body that has stood still at x_s this gives η̂ = −p̂/(ρ(g + σk²/ρ)): the hydrostatic
depression −p/(ρg) where the patch is large against its waves.

Functions here: the patch's spectrum (`pressure_patch_spectrum`), the closed form of the
time integral over one constant-velocity segment (`segment_response`), the Froude
numbers and their limits (`hull_froude_number`, `depth_froude_number`), and the
published wake angles (`kelvin_half_angle`, `kelvin_cusp_wave_angle`,
`kelvin_cusp_crest_angle`, `havelock_half_angle`, `stationary_ray_angle`).

References
----------
Kelvin, Lord (W. Thomson) (1887). On ship waves. *Proc. Inst. Mech. Eng.* 38, 409–434.
Havelock, T. H. (1908). The propagation of groups of waves in dispersive media, with
application to waves on water produced by a travelling disturbance. *Proc. R. Soc. Lond.
A* 81, 398–430.
Lamb, H. (1932). *Hydrodynamics*, 6th ed., Cambridge: §§255–256 (ship waves, the
Kelvin pattern); ch. IX (the Cauchy–Poisson problem; section from memory).
Wehausen, J. V. & Laitone, E. V. (1960). Surface waves. *Handbuch der Physik* 9, 446–778.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ._brent import bounded_minimum
from .constants import GRAVITY

__all__ = [
    "BLOCK_COEFFICIENT",
    "patch_lengths",
    "pressure_patch_spectrum",
    "segment_response",
    "hull_froude_number",
    "depth_froude_number",
    "kelvin_half_angle",
    "kelvin_cusp_wave_angle",
    "kelvin_cusp_crest_angle",
    "stationary_ray_angle",
    "havelock_half_angle",
    "HULL_FROUDE_LINEAR_LIMIT",
    "DEPTH_FROUDE_CRITICAL_BAND",
]

#: Block coefficient C_B = V / (L·B·d) of the displaced volume the pressure patch holds
#: (common practice: 0.4–0.55 for fast craft and small boats; 0.5 taken).
BLOCK_COEFFICIENT: float = 0.5

#: Hull (length) Froude number above which linear pressure-patch theory is doubtful: the
#: hull rides its own bow wave ("hump", Fr_L ≈ 0.4–0.5) and begins to plane (common
#: practice: displacement hulls keep Fr_L below ~0.4; planing above ~1).
HULL_FROUDE_LINEAR_LIMIT: float = 0.5

#: Depth Froude numbers U/√(gh) around 1 where the linear steady response is singular
#: (the long transverse waves travel at the body's speed and pile up): Havelock (1908);
#: the band's width is common practice.
DEPTH_FROUDE_CRITICAL_BAND: tuple[float, float] = (0.85, 1.15)


def patch_lengths(length: float, beam: float, block_coefficient: float = BLOCK_COEFFICIENT) -> tuple[float, float]:
    """The Gaussian patch's e-scales (ℓ, b) in metres for a hull of ``length`` × ``beam``.

    f(ξ, ζ) = exp(−π(ξ/ℓ)² − π(ζ/b)²) has ∫f dA = ℓ·b; with ℓ = L√C_B and b = B√C_B the
    patch under a peak pressure ρ g d holds the displaced volume C_B·L·B·d (common
    practice: a smooth patch of the hull's length and beam). At the bow (ξ = L/2) f is
    exp(−π/(4C_B)) = 0.21 of its peak for C_B = 0.5.
    """
    scale = math.sqrt(block_coefficient)
    return length * scale, beam * scale


def pressure_patch_spectrum(
    k_along: ArrayLike, k_across: ArrayLike, length: float, beam: float,
    *, block_coefficient: float = BLOCK_COEFFICIENT,
) -> NDArray[np.float64]:
    """Fourier transform F(k) = ∫ f(ξ) e^{−ik·ξ} dξ of the hull's pressure patch, in m².

    f(ξ, ζ) = exp(−π(ξ/ℓ)² − π(ζ/b)²), ξ along the heading, ζ across it, with (ℓ, b) from
    :func:`patch_lengths`; its transform is F = ℓ·b·exp(−(k_ξ²ℓ² + k_ζ²b²)/(4π)) (the
    Gaussian integral ∫ e^{−πξ²/ℓ² − iqξ} dξ = ℓ e^{−q²ℓ²/(4π)}).

    Parameters
    ----------
    k_along, k_across : array_like
        Wavenumber components along and across the hull's heading, rad/m.
    length, beam : float
        Waterline length and beam in metres.

    Returns
    -------
    ndarray
        F in m² (F(0) = ℓ·b = C_B·L·B); multiplied by the peak pressure p0 = ρ g d (d the
        draft) it is the pressure's transform, so the displaced volume is C_B·L·B·d.
    """
    ell, b = patch_lengths(length, beam, block_coefficient)
    ka = np.asarray(k_along, dtype=np.float64)
    kc = np.asarray(k_across, dtype=np.float64)
    return ell * b * np.exp(-((ka * ell) ** 2 + (kc * b) ** 2) / (4.0 * math.pi))


def _expm1_ratio(z: NDArray[np.complex128]) -> NDArray[np.complex128]:
    """(1 − e^{−z})/z, stable at z → 0 (a Taylor series below |z| = 1e-2, error < 1e-14)."""
    z = np.asarray(z, dtype=np.complex128)
    small = np.abs(z) < 1e-2
    with np.errstate(divide="ignore", invalid="ignore"):
        direct = -np.expm1(-z) / z
    series = 1.0 - z / 2.0 + z**2 / 6.0 - z**3 / 24.0 + z**4 / 120.0
    return np.where(small, series, direct)


def segment_response(
    kx: ArrayLike, ky: ArrayLike, omega: ArrayLike, *, age_end: float, duration: float,
    end_x: float, end_y: float, velocity_x: float, velocity_y: float, damping: float = 0.0,
) -> tuple[NDArray[np.complex128], NDArray[np.complex128]]:
    """The time integrals J± over one constant-velocity segment, in closed form (s).

    J± = ∫_{τa}^{τb} e^{−ik·x_s(τ)} e^{−(ε ∓ iω)(t − τ)} dτ   with   x_s(τ) = x_b − V(τb − τ),

    where the segment ends ``age_end`` = t − τb before the frame and lasts Δ =
    ``duration``. Substituting τ = τb − σ,

    J± = e^{−ik·x_b} e^{−(ε ∓ iω)(t − τb)} · Δ · (1 − e^{−z±})/z±,
    z± = (ε − i(k·V ± ω))·Δ,

    whose last factor is evaluated stably where ω ± k·V → 0 (the steady Kelvin waves).
    The Cauchy–Poisson kernel is e^{−εu} sin(ωu) = Im-part combination (J+ − J−)/(2i).

    Parameters
    ----------
    kx, ky, omega : array_like
        Wavenumber components (rad/m) and ω(|k|) (rad/s), broadcast together.
    age_end, duration : float
        t − τb ≥ 0 and τb − τa ≥ 0, in seconds.
    end_x, end_y : float
        The body's position at τb, metres.
    velocity_x, velocity_y : float
        Its constant velocity over the segment, m/s.
    damping : float
        ε in 1/s (≥ 0).

    Returns
    -------
    (J+, J−) : complex ndarrays in seconds.
    """
    kx, ky, omega = np.broadcast_arrays(*(np.asarray(v, dtype=np.float64) for v in (kx, ky, omega)))
    position = np.exp(-1j * (kx * end_x + ky * end_y))
    drift = kx * velocity_x + ky * velocity_y
    out = []
    for sign in (1.0, -1.0):
        rotation = np.exp(-(damping - sign * 1j * omega) * age_end)
        z = (damping - 1j * (drift + sign * omega)) * duration
        out.append(position * rotation * duration * _expm1_ratio(z))
    return out[0], out[1]


def hull_froude_number(speed: ArrayLike, length: float, *, gravity: float = GRAVITY) -> NDArray[np.float64]:
    """Length Froude number Fr_L = U/√(gL) of a hull (dimensionless; Froude 1868 via Lamb §256).

    Its steady wake's transverse wavelength is 2πU²/g = 2π·Fr_L²·L: at Fr_L ≈ 0.4 it equals
    the hull's length (the "hump", where the wave resistance peaks).
    """
    return np.asarray(speed, dtype=np.float64) / math.sqrt(gravity * length)


def depth_froude_number(speed: ArrayLike, depth: float, *, gravity: float = GRAVITY) -> NDArray[np.float64]:
    """Depth Froude number Fh = U/√(gh) (dimensionless; 0 in deep water; Havelock 1908)."""
    speed = np.asarray(speed, dtype=np.float64)
    if np.isinf(depth):
        return np.zeros_like(speed)
    return speed / math.sqrt(gravity * depth)


def kelvin_half_angle() -> float:
    """Half-angle of the deep-water ship-wave wedge, arcsin(1/3) = 19.47°, in radians.

    Kelvin (1887); Lamb (1932) §256: the stationary waves' rays fill the wedge
    tan α = tanθ/(1 + 2tan²θ), whose maximum over θ is at tanθ = 1/√2, sin α = 1/3.
    """
    return math.asin(1.0 / 3.0)


def kelvin_cusp_wave_angle() -> float:
    """Angle between the cusp waves' direction (their wavevector) and the track, arctan(1/√2) = 35.26°.

    Lamb (1932) §256: the wedge's edge is made of waves travelling at θ with tanθ = 1/√2.
    """
    return math.atan(1.0 / math.sqrt(2.0))


def kelvin_cusp_crest_angle() -> float:
    """Angle between the crests at the cusps and the track, 90° − 35.26° = 54.74° (radians).

    Crests are normal to the wavevector (Lamb 1932, §256; Kelvin 1887).
    """
    return 0.5 * math.pi - kelvin_cusp_wave_angle()


def stationary_ray_angle(wave_angle: ArrayLike, depth_froude: float = 0.0) -> NDArray[np.float64]:
    """Ray angle α(θ) of the steady waves travelling at ``wave_angle`` θ to the track (radians).

    A wave at θ is stationary behind a body of speed U where c(k) = U cos θ; its energy
    moves relative to the body at c_g k̂ − U, so with n = c_g/c (Havelock 1908)

        tan α = n sinθ cosθ / (1 − n cos²θ).

    Deep water (``depth_froude`` = 0): n = ½, tan α = tanθ/(1 + 2tan²θ) (Lamb §256). In
    depth h, kh solves cos θ = √(tanh(kh)/kh)/Fh and n = ½(1 + 2kh/sinh 2kh); where no
    stationary wave exists (U cos θ > √(gh)) the result is NaN.
    """
    theta = np.asarray(wave_angle, dtype=np.float64)
    if depth_froude <= 0.0:
        n = np.full_like(theta, 0.5)
    else:
        n = _depth_ratio(np.cos(theta) * depth_froude)
    c = np.cos(theta)
    return np.arctan2(n * np.sin(theta) * c, 1.0 - n * c**2)


def _depth_ratio(speed_ratio: NDArray[np.float64]) -> NDArray[np.float64]:
    """n = c_g/c of the gravity wave whose c/√(gh) = ``speed_ratio`` (NaN above 1)."""
    r = np.atleast_1d(np.asarray(speed_ratio, dtype=np.float64))
    out = np.full(r.shape, np.nan)
    for i, value in np.ndenumerate(r):
        if not 0.0 < value < 1.0:
            if value == 1.0:
                out[i] = 1.0
            continue
        # c²/(gh) = tanh(q)/q decreasing in q = kh: bisection in log q, then n(q).
        lo, hi = 1e-12, 1.0
        while math.tanh(hi) / hi > value * value:
            hi *= 2.0
        for _ in range(200):
            mid = math.sqrt(lo * hi)
            if math.tanh(mid) / mid > value * value:
                lo = mid
            else:
                hi = mid
            if hi / lo - 1.0 < 1e-15:
                break
        q = math.sqrt(lo * hi)
        out[i] = 0.5 * (1.0 + (2.0 * q / math.sinh(2.0 * q) if q < 350 else 0.0))
    return out.reshape(np.shape(speed_ratio))


def havelock_half_angle(depth_froude: float) -> float:
    """Half-angle of the steady wake in water of finite depth, radians (Havelock 1908).

    The envelope of the stationary rays, max over θ of :func:`stationary_ray_angle`.
    Fh = 0 gives Kelvin's arcsin(1/3); for 0 < Fh < 1 the angle widens toward 90° as
    Fh → 1 (the transverse waves lengthen and their n = c_g/c → 1); for Fh > 1 the
    transverse waves are gone (no wave travels as fast as the body) and the edge is the
    longest divergent wave, at sin α = 1/Fh.
    """
    f = float(depth_froude)
    if not (np.isfinite(f) and f >= 0.0):
        raise ValueError(f"depth_froude: {depth_froude!r} is not allowed; allowed: a finite number >= 0")
    if f == 0.0:
        return kelvin_half_angle()
    if f >= 1.0:
        return math.asin(1.0 / f)
    # θ from 0 (transverse, c = U) up to 90°: every θ has a stationary wave when Fh < 1.
    def negative_angle(theta: float) -> float:
        return -float(stationary_ray_angle(np.array([theta]), f)[0])

    grid = np.linspace(1e-4, 0.5 * math.pi - 1e-4, 721)
    values = -stationary_ray_angle(grid, f)
    i = int(np.nanargmin(values))
    low, high = grid[max(i - 1, 0)], grid[min(i + 1, grid.size - 1)]
    theta = bounded_minimum(negative_angle, low, high, xatol=1e-10)
    return max(-negative_angle(theta), -float(values[i]))
