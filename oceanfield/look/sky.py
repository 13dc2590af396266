"""A clear sky with its sun: the Preetham, Shirley & Smits (1999) daylight model.

Knows nothing of tiles, presets or files: radiance of the sky and the sun by direction.

Directions are unit vectors in internal axes (x, y horizontal, z up). The sun's azimuth
is counter-clockwise from the tile's +x axis, as the presets' ``towards_deg``; its
elevation is above the horizon. Radiance is linear sRGB (Rec. 709 primaries, D65 white)
in kcd/m² of luminance per unit, the model's own unit for Y.

Sky: the Perez et al. (1993) distribution F(θ, γ) = (1 + A e^{B / cos θ})(1 + C e^{Dγ}
+ E cos² γ) of luminance Y and chromaticity x, y, scaled to the model's zenith values;
θ the direction's zenith angle, γ its angle from the sun. Sun: a disc of the sun's
angular radius whose radiance is the extraterrestrial solar illuminance spread over the
disc, dimmed by Rayleigh and aerosol extinction along the Kasten & Young air mass.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .optics import SUN_ANGULAR_RADIUS

__all__ = ["Sky", "perez", "xyz_to_srgb", "air_mass", "SOLAR_ILLUMINANCE"]

# Preetham, Shirley & Smits (1999), "A practical analytic model for daylight", SIGGRAPH 99,
# Appendix A.2: the Perez coefficients as linear functions of turbidity T, rows A … E,
# columns (T, 1); written from memory and checked against several public reproductions of
# the table, which agree with these digits.
_PEREZ_Y = np.array([[0.1787, -1.4630], [-0.3554, 0.4275], [-0.0227, 5.3251], [0.1206, -2.5771], [-0.0670, 0.3703]])
_PEREZ_X = np.array([[-0.0193, -0.2592], [-0.0665, 0.0008], [-0.0004, 0.2125], [-0.0641, -0.8989], [-0.0033, 0.0452]])
_PEREZ_YC = np.array([[-0.0167, -0.2608], [-0.0950, 0.0092], [-0.0079, 0.2102], [-0.0441, -1.6537], [-0.0109, 0.0529]])
# Appendix A.2, zenith chromaticity: x_z = [T², T, 1] M [θs³, θs², θs, 1]ᵀ (checked as above;
# one reproduction prints 0.00165 for M_x's first entry, the others 0.00166).
_ZENITH_X = np.array([[0.00166, -0.00375, 0.00209, 0.0],
                      [-0.02903, 0.06377, -0.03202, 0.00394],
                      [0.11693, -0.21196, 0.06052, 0.25886]])
_ZENITH_Y = np.array([[0.00275, -0.00610, 0.00317, 0.0],
                      [-0.04214, 0.08970, -0.04153, 0.00516],
                      [0.15346, -0.26756, 0.06670, 0.26688]])

#: CIE XYZ → linear sRGB (IEC 61966-2-1:1999, the Rec. 709 primaries with a D65 white).
_XYZ_TO_SRGB = np.array([[3.2406, -1.5372, -0.4986], [-0.9689, 1.8758, 0.0415], [0.0557, -0.2040, 1.0570]])

#: Extraterrestrial solar illuminance on a surface facing the sun at 1 au, in klx:
#: 128 klx is the value lighting references use (common practice; 127.5–133 klx in the
#: literature, from memory).
SOLAR_ILLUMINANCE: float = 128.0

# Wavelengths (µm) standing for the sRGB channels when the sun is dimmed by the air: the
# primaries' dominant wavelengths, near 612, 549 and 465 nm (common practice).
_CHANNEL_WAVELENGTHS = np.array([0.612, 0.549, 0.465])
_RAYLEIGH_SCALE_HEIGHT = 8000.0  # m, the air's molecules (common practice; about 8.4 km in the US Standard Atmosphere 1976)
_AEROSOL_SCALE_HEIGHT = 1200.0  # m, haze near the sea (common practice, from memory: 1–1.5 km)


def perez(cos_theta: ArrayLike, gamma: ArrayLike, coefficients: ArrayLike) -> NDArray[np.float64]:
    """The Perez et al. (1993) all-weather distribution F(θ, γ) (Preetham et al. 1999, eq. 3).

    ``cos_theta`` is the cosine of the zenith angle (clamped to ≥ 0.001: the horizon's
    value below it), ``gamma`` the angle from the sun in radians, ``coefficients`` (A, B,
    C, D, E) along the last axis.
    """
    a, b, c, d, e = np.moveaxis(np.asarray(coefficients, dtype=np.float64), -1, 0)
    cos_theta = np.maximum(np.asarray(cos_theta, dtype=np.float64), 1e-3)
    gamma = np.asarray(gamma, dtype=np.float64)
    return (1.0 + a * np.exp(b / cos_theta)) * (1.0 + c * np.exp(d * gamma) + e * np.cos(gamma) ** 2)


def xyz_to_srgb(xyz: ArrayLike) -> NDArray[np.float64]:
    """Linear sRGB of CIE XYZ along the last axis (IEC 61966-2-1)."""
    return np.asarray(xyz, dtype=np.float64) @ _XYZ_TO_SRGB.T


def air_mass(zenith: ArrayLike) -> NDArray[np.float64]:
    """Relative optical air mass at a zenith angle in radians (Kasten & Young 1989,
    "Revised optical air mass tables and approximation formula", Appl. Opt. 28, 4735:
    m = 1 / (cos z + 0.50572 (96.07995° − z)^−1.6364), z in degrees)."""
    z = np.degrees(np.asarray(zenith, dtype=np.float64))
    return 1.0 / (np.cos(np.radians(z)) + 0.50572 * (96.07995 - z) ** -1.6364)


@dataclass(frozen=True)
class Sky:
    """A clear sky and its sun.

    Parameters
    ----------
    sun_elevation : float
        The sun's elevation above the horizon, radians, in (0, π/2].
    sun_azimuth : float
        The sun's azimuth, radians, counter-clockwise from the tile's +x axis.
    turbidity : float
        Preetham's turbidity T, 2 … 10 (2 a very clear sky, 3 clear, 6 hazy, 10 thick haze).
    """

    sun_elevation: float
    sun_azimuth: float
    turbidity: float = 3.0

    def __post_init__(self) -> None:
        if not (0.0 < self.sun_elevation <= math.pi / 2):
            raise ValueError(f"sun_elevation: {self.sun_elevation!r} is not allowed; allowed: (0, π/2] radians")
        if not (2.0 <= self.turbidity <= 10.0):
            raise ValueError(f"turbidity: {self.turbidity!r} is not allowed; allowed: 2 … 10")

    @property
    def sun_direction(self) -> NDArray[np.float64]:
        """Unit vector toward the sun."""
        e, a = self.sun_elevation, self.sun_azimuth
        return np.array([math.cos(e) * math.cos(a), math.cos(e) * math.sin(a), math.sin(e)])

    def coefficients(self) -> NDArray[np.float64]:
        """(3, 5) Perez coefficients of Y, x and y at this turbidity."""
        t = np.array([self.turbidity, 1.0])
        return np.stack([_PEREZ_Y @ t, _PEREZ_X @ t, _PEREZ_YC @ t])

    def zenith(self) -> NDArray[np.float64]:
        """(Y in kcd/m², x, y) at the zenith (Preetham et al. 1999, Appendix A.2)."""
        t, theta_s = self.turbidity, math.pi / 2 - self.sun_elevation
        chi = (4.0 / 9.0 - t / 120.0) * (math.pi - 2.0 * theta_s)
        luminance = (4.0453 * t - 4.9710) * math.tan(chi) - 0.2155 * t + 2.4192
        powers_t = np.array([t * t, t, 1.0])
        powers_s = np.array([theta_s**3, theta_s**2, theta_s, 1.0])
        return np.array([luminance, powers_t @ _ZENITH_X @ powers_s, powers_t @ _ZENITH_Y @ powers_s])

    def kernel_table(self) -> NDArray[np.float64]:
        """(3, 7) per quantity Y, x, y: A … E, the zenith value over F(0, θs)
        (so that value = row[5] F(θ, γ)), and 0: what the renderer's kernel reads."""
        coefficients = self.coefficients()
        theta_s = math.pi / 2 - self.sun_elevation
        at_zenith = perez(1.0, theta_s, coefficients)
        table = np.zeros((3, 7))
        table[:, :5] = coefficients
        table[:, 5] = self.zenith() / at_zenith
        return table

    def radiance(self, directions: ArrayLike) -> NDArray[np.float64]:
        """Sky radiance (linear sRGB, kcd/m²) along unit ``directions`` (…, 3), sun excluded.

        Directions below the horizon see the horizon's sky.
        """
        d = np.asarray(directions, dtype=np.float64)
        gamma = np.arccos(np.clip(d @ self.sun_direction, -1.0, 1.0))
        table = self.kernel_table()
        values = table[:, 5] * perez(d[..., 2, None], gamma[..., None], table[:, :5])
        luminance, x, y = np.moveaxis(values, -1, 0)
        xyz = np.stack([x / y * luminance, luminance, (1.0 - x - y) / y * luminance], axis=-1)
        return xyz_to_srgb(xyz)

    def sun_radiance(self) -> NDArray[np.float64]:
        """Radiance of the sun's disc (linear sRGB, kcd/m²) seen from the sea.

        The extraterrestrial illuminance `SOLAR_ILLUMINANCE` over the disc's solid angle,
        white, times exp(−(τ_R + τ_a) m) per channel: Rayleigh optical depth
        τ_R = 0.008735 λ^−4.08 (Leckner 1978, "The spectral distribution of solar radiation
        at the earth's surface", Solar Energy 20, 143–150; λ in µm; from memory), aerosol
        τ_a = β λ^−1.3 (Ångström 1929) with β = 0.04608 T − 0.04586 (Preetham et al. 1999,
        Appendix A.1), m the Kasten & Young air mass.
        """
        solid_angle = 2.0 * math.pi * (1.0 - math.cos(SUN_ANGULAR_RADIUS))
        depth = self._optical_depth().sum(axis=0)
        transmittance = np.exp(-depth * air_mass(math.pi / 2 - self.sun_elevation))
        return SOLAR_ILLUMINANCE / solid_angle * transmittance

    def _optical_depth(self) -> NDArray[np.float64]:
        """Vertical optical depth per sRGB channel: Rayleigh (Leckner 1978) and aerosol
        (Ångström 1929 with Preetham's β(T)), as (rayleigh, aerosol) rows."""
        wavelengths = _CHANNEL_WAVELENGTHS
        beta = 0.04608 * self.turbidity - 0.04586
        return np.stack([0.008735 * wavelengths**-4.08, beta * wavelengths**-1.3])

    def extinction(self) -> NDArray[np.float64]:
        """Extinction coefficient of the air at the sea's surface per sRGB channel, 1/m:
        each vertical optical depth over its scale height, 8 km for the air's molecules and
        1.2 km for its aerosol (common practice; from memory). 1.8·10⁻⁴ /m in green at
        turbidity 3: a visual range 3.912/σ (Koschmieder 1924) of about 20 km."""
        rayleigh, aerosol = self._optical_depth()
        return rayleigh / _RAYLEIGH_SCALE_HEIGHT + aerosol / _AEROSOL_SCALE_HEIGHT

    def sun_irradiance(self) -> NDArray[np.float64]:
        """Irradiance from the sun on a surface facing it (linear sRGB, klx)."""
        return self.sun_radiance() * 2.0 * math.pi * (1.0 - math.cos(SUN_ANGULAR_RADIUS))

    def downwelling_irradiance(self, *, rings: int = 48, sectors: int = 96) -> NDArray[np.float64]:
        """Irradiance on the horizontal sea from the sun and the whole sky (linear sRGB, klx):
        E_sun sin(elevation) + ∫ L_sky cos θ dω, the integral by the midpoint rule on
        ``rings`` × ``sectors`` cells of equal dθ, dφ."""
        theta = (np.arange(rings) + 0.5) * (math.pi / 2) / rings
        phi = (np.arange(sectors) + 0.5) * 2.0 * math.pi / sectors
        t, p = np.meshgrid(theta, phi, indexing="ij")
        directions = np.stack([np.sin(t) * np.cos(p), np.sin(t) * np.sin(p), np.cos(t)], axis=-1)
        weights = (np.cos(t) * np.sin(t) * (math.pi / 2 / rings) * (2.0 * math.pi / sectors))[..., None]
        sky = np.sum(self.radiance(directions) * weights, axis=(0, 1))
        return sky + self.sun_irradiance() * math.sin(self.sun_elevation)
