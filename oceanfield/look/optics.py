"""The optics of a sea seen from above: water's Fresnel reflectance, the sun's disc, the
Earth's horizon dip, and the sea surface's slope statistics (Cox & Munk).

Knows nothing of tiles, presets or files: functions of angles, refractive indices and wind.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = [
    "WATER_REFRACTIVE_INDEX",
    "SUN_ANGULAR_RADIUS",
    "EARTH_RADIUS",
    "fresnel_unpolarised",
    "horizon_dip",
    "cox_munk_slope_variance",
]

#: Refractive index of water at visible wavelengths, dimensionless: 1.333 for pure water at
#: 25 °C near 589 nm (Hale & Querry 1973, "Optical constants of water in the 200-nm to
#: 200-µm wavelength region", Appl. Opt. 12, 555–563, Table I: 1.333–1.338 over
#: 0.45–0.65 µm; from memory of the table). Sea water is about 0.006 higher (Quan & Fry
#: 1995, Appl. Opt. 34, 3477: 1.339–1.341 at 35 PSU; from memory): R(0) moves 0.0204 → 0.0211.
WATER_REFRACTIVE_INDEX: float = 1.333

#: Angular radius of the sun's disc seen from the Earth, radians: 0.2666° at the mean
#: Earth–Sun distance (959.63″ solar semi-diameter, IAU 2015 nominal solar radius
#: 695 700 km over 1 au; the Astronomical Almanac's 16′ rounded).
SUN_ANGULAR_RADIUS: float = math.radians(0.2666)

#: Mean radius of the Earth in metres (IUGG mean radius R1 = 6 371 008.8 m; Moritz 2000,
#: "Geodetic Reference System 1980", J. Geodesy 74, 128–133).
EARTH_RADIUS: float = 6_371_008.8


def fresnel_unpolarised(cos_incidence: ArrayLike, *, n: float = WATER_REFRACTIVE_INDEX) -> NDArray[np.float64]:
    """Fresnel reflectance of unpolarised light at an air–water interface (Fresnel 1823;
    Born & Wolf, *Principles of Optics*, §1.5, the Fresnel formulae).

    Parameters
    ----------
    cos_incidence : array_like
        Cosine of the angle of incidence from the surface normal, 0 … 1 (light from the air).
    n : float
        Refractive index of the water relative to air.

    Returns
    -------
    NDArray[np.float64]
        R = ½ (r_s² + r_p²), with r_s = (cos i − n cos t)/(cos i + n cos t) and
        r_p = (n cos i − cos t)/(n cos i + cos t); R(0°) = ((n − 1)/(n + 1))² (0.0204 for
        n = 1.333), R(90°) = 1.
    """
    cos_i = np.clip(np.asarray(cos_incidence, dtype=np.float64), 0.0, 1.0)
    sin_t2 = (1.0 - cos_i * cos_i) / (n * n)  # Snell: sin t = sin i / n
    cos_t = np.sqrt(1.0 - sin_t2)
    r_s = (cos_i - n * cos_t) / (cos_i + n * cos_t)
    r_p = (n * cos_i - cos_t) / (n * cos_i + cos_t)
    return 0.5 * (r_s * r_s + r_p * r_p)


def horizon_dip(height: ArrayLike, *, radius: float = EARTH_RADIUS) -> NDArray[np.float64]:
    """Dip of the sea horizon below the horizontal, radians, for an eye ``height`` metres
    above a spherical Earth of ``radius`` metres, without refraction: arccos(R / (R + h))
    ≈ √(2h/R), the line of sight tangent to the sphere (elementary geometry). Air's
    refraction near the sea lessens the dip a little (by some 8 % in a standard
    atmosphere; common practice, from memory); the look ignores it.
    """
    h = np.asarray(height, dtype=np.float64)
    return np.arccos(radius / (radius + h))


def cox_munk_slope_variance(wind_speed: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Upwind and crosswind mean-square slopes of a clean sea surface (Cox & Munk 1954).

    Parameters
    ----------
    wind_speed : array_like
        Wind speed in m/s at 12.5 m above the sea (the paper's anemometer height; a 10 m
        wind is about 2 % lower in a neutral profile).

    Returns
    -------
    (upwind, crosswind) : tuple of NDArray[np.float64]
        σ_u² = 3.16·10⁻³ U and σ_c² = 0.003 + 1.92·10⁻³ U. The paper fits their total
        apart, 0.003 + 5.12·10⁻³ U (± 0.004; 0.054 at 10 m/s); the two components sum to
        0.003 + 5.08·10⁻³ U, well within that scatter.

    References
    ----------
    Cox, C. & Munk, W. (1954), "Measurement of the roughness of the sea surface from
    photographs of the sun's glitter", J. Opt. Soc. Am. 44(11), 838–850, the clean
    surface: the components as given by Mobley's *Ocean Optics Web Book*, "Cox-Munk sea
    surface slope statistics", the total as in PHYSICS.md (see REFERENCES.md).
    """
    u = np.asarray(wind_speed, dtype=np.float64)
    return 3.16e-3 * u, 0.003 + 1.92e-3 * u
