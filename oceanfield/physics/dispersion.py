"""Linear dispersion of surface waves: ω(k, h) with gravity, depth and surface tension.

Knows nothing of lattices, tiles or files.

All functions are vectorised over numpy arrays of any shape and pure. Deep water is
``depth=np.inf`` and is handled exactly (tanh(kh) = 1), not by a large number.

References
----------
Stewart, R. H. (2008). *Introduction to Physical Oceanography*, §16.2 (dispersion,
phase and group velocity).
USACE (2002). *Coastal Engineering Manual*, EM 1110-2-1100, Part II-1 (linear wave theory).
Lamb, H. (1932). *Hydrodynamics*, 6th ed., §267 (capillary-gravity waves).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .constants import GRAVITY, SEAWATER_DENSITY

__all__ = [
    "angular_frequency",
    "group_velocity",
    "phase_velocity",
    "wavenumber",
    "check_depth",
]

_RELATIVE_TOLERANCE = 1e-13
_MAX_ITERATIONS = 200


def check_depth(depth: float, name: str = "depth") -> float:
    """Return ``depth`` as a float, or raise ValueError unless it is > 0 (``inf`` = deep)."""
    try:
        value = float(depth)
    except (TypeError, ValueError):
        raise ValueError(f"{name}: {depth!r} is not a number; allowed: > 0 metres or inf (deep)") from None
    if not value > 0 or np.isnan(value):
        raise ValueError(f"{name}: {depth!r} is not allowed; allowed: > 0 metres or inf (deep)")
    return value


def _tanh_kh(k: NDArray[np.float64], depth: float) -> NDArray[np.float64]:
    if np.isinf(depth):
        return np.ones_like(k)
    return np.tanh(k * depth)


def _long_wave_speed(depth: float, gravity: float) -> float:
    """Limit of phase and group speed as k → 0: √(g h), or inf in deep water."""
    return np.inf if np.isinf(depth) else float(np.sqrt(gravity * depth))


def angular_frequency(
    k: ArrayLike,
    depth: float = np.inf,
    *,
    gravity: float = GRAVITY,
    surface_tension: float = 0.0,
    density: float = SEAWATER_DENSITY,
) -> NDArray[np.float64]:
    """Angular frequency of linear capillary-gravity waves (Lamb 1932, §267).

    ω² = (g k + (τ/ρ) k³) · tanh(k h)

    Parameters
    ----------
    k : array_like
        Wavenumber magnitude in rad/m (≥ 0).
    depth : float
        Water depth h in metres; ``np.inf`` for deep water (exact).
    gravity : float
        Gravitational acceleration in m/s².
    surface_tension : float
        Surface tension τ in N/m (0 = gravity waves only; clean water ≈ 0.073).
    density : float
        Water density ρ in kg/m³.

    Returns
    -------
    ndarray
        ω in rad/s, same shape as ``k``; 0 at k = 0.

    References
    ----------
    Stewart (2008), eq. 16.3 (gravity); Lamb (1932) §267 (surface tension term).
    """
    depth = check_depth(depth)
    k = np.asarray(k, dtype=np.float64)
    restoring = gravity * k + (surface_tension / density) * k**3
    return np.sqrt(restoring * _tanh_kh(k, depth))


def group_velocity(
    k: ArrayLike,
    depth: float = np.inf,
    *,
    gravity: float = GRAVITY,
    surface_tension: float = 0.0,
    density: float = SEAWATER_DENSITY,
) -> NDArray[np.float64]:
    """Group velocity dω/dk in m/s of linear capillary-gravity waves (Stewart 2008, §16.2).

    Differentiating ω² = R(k)·T(k) with R = gk + (τ/ρ)k³ and T = tanh(kh) gives
    2ω dω/dk = R′T + R·h(1 − T²). Gravity only this is c/2·[1 + 2kh/sinh(2kh)].

    At k = 0 the limit is √(g h) in finite depth and ``inf`` in deep water.
    """
    depth = check_depth(depth)
    k = np.asarray(k, dtype=np.float64)
    tension = surface_tension / density
    tanh_kh = _tanh_kh(k, depth)
    restoring = gravity * k + tension * k**3
    d_restoring = gravity + 3.0 * tension * k**2
    d_tanh = 0.0 if np.isinf(depth) else depth * (1.0 - tanh_kh**2)
    omega = np.sqrt(restoring * tanh_kh)
    with np.errstate(divide="ignore", invalid="ignore"):
        speed = (d_restoring * tanh_kh + restoring * d_tanh) / (2.0 * omega)
    return np.where(k > 0, speed, _long_wave_speed(depth, gravity))


def phase_velocity(
    k: ArrayLike,
    depth: float = np.inf,
    *,
    gravity: float = GRAVITY,
    surface_tension: float = 0.0,
    density: float = SEAWATER_DENSITY,
) -> NDArray[np.float64]:
    """Phase velocity c = ω/k in m/s (Stewart 2008, eq. 16.6); √(g h) or inf at k = 0."""
    depth = check_depth(depth)
    k = np.asarray(k, dtype=np.float64)
    omega = angular_frequency(
        k, depth, gravity=gravity, surface_tension=surface_tension, density=density
    )
    with np.errstate(divide="ignore", invalid="ignore"):
        speed = omega / k
    return np.where(k > 0, speed, _long_wave_speed(depth, gravity))


def wavenumber(
    omega: ArrayLike,
    depth: float = np.inf,
    *,
    gravity: float = GRAVITY,
    surface_tension: float = 0.0,
    density: float = SEAWATER_DENSITY,
) -> NDArray[np.float64]:
    """Wavenumber k(ω, h) in rad/m: the inverse of :func:`angular_frequency`.

    Solved by Newton's method safeguarded with bisection on a bracket, vectorised over
    ``omega``; ω² is strictly increasing in k, so the root is unique. Converges to a
    relative error below 1e-12 for every depth and frequency; 0 at ω = 0.

    Parameters
    ----------
    omega : array_like
        Angular frequency in rad/s (≥ 0).
    depth, gravity, surface_tension, density
        As in :func:`angular_frequency`.
    """
    depth = check_depth(depth)
    omega = np.asarray(omega, dtype=np.float64)
    target = omega**2
    tension = surface_tension / density
    shape = omega.shape
    target = target.ravel()
    positive = target > 0

    def residual_and_slope(k: NDArray[np.float64]) -> tuple[NDArray, NDArray]:
        tanh_kh = _tanh_kh(k, depth)
        restoring = gravity * k + tension * k**3
        d_tanh = 0.0 if np.isinf(depth) else depth * (1.0 - tanh_kh**2)
        value = restoring * tanh_kh - target
        slope = (gravity + 3.0 * tension * k**2) * tanh_kh + restoring * d_tanh
        return value, slope

    # Bracket: gravity-only deep and shallow estimates are both lower bounds on the root;
    # grow an upper bound from them until the residual changes sign.
    deep = target / gravity
    shallow = np.sqrt(target / (gravity * depth)) if np.isfinite(depth) else deep
    low = np.zeros_like(target)
    high = np.maximum(deep, shallow) * 2.0 + 1e-300
    for _ in range(2000):
        value, _slope = residual_and_slope(high)
        short = value < 0
        if not short.any():
            break
        high = np.where(short, high * 2.0, high)

    # Start from the larger lower bound (exact in deep water without surface tension).
    k = np.clip(np.maximum(deep, np.minimum(shallow, high)), low, high)
    for _ in range(_MAX_ITERATIONS):
        value, slope = residual_and_slope(k)
        low = np.where(value < 0, k, low)
        high = np.where(value > 0, k, high)
        with np.errstate(divide="ignore", invalid="ignore"):
            step = np.where(slope > 0, value / slope, 0.0)
        candidate = k - step
        outside = ~((candidate > low) & (candidate < high))
        candidate = np.where(outside, 0.5 * (low + high), candidate)
        change = np.abs(candidate - k)
        k = candidate
        if np.all(change[positive] <= _RELATIVE_TOLERANCE * k[positive]):
            break
    k = np.where(positive, k, 0.0)
    return k.reshape(shape)
