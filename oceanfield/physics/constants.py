"""Physical constants, each with its source.

Knows nothing of lattices, tiles or files.

Functions take these as keyword defaults so a caller can override them (a tank of another
fluid, or on another planet, is still a tank).
"""

from __future__ import annotations

__all__ = [
    "GRAVITY",
    "WATER_DENSITY",
    "SEAWATER_DENSITY",
    "SURFACE_TENSION",
    "WIND_HEIGHT_PM",
    "WIND_RATIO_19_5_TO_10",
]

#: Standard acceleration of gravity in m/s², exact by definition (3rd General Conference on
#: Weights and Measures, 1901; the value of scipy.constants.g, written out so that importing
#: the physics does not import scipy.constants, a tenth of a second at every start).
GRAVITY: float = 9.80665

#: Density of fresh water near 4–20 °C in kg/m³ (common practice: 998–1000).
WATER_DENSITY: float = 1000.0

#: Density of sea water in kg/m³ (common practice: 1020–1030 at the surface).
SEAWATER_DENSITY: float = 1025.0

#: Surface tension of clean water against air near 20 °C in N/m (0.0728 N/m; CRC Handbook
#: of Chemistry and Physics, "Surface tension of common liquids"; from memory).
SURFACE_TENSION: float = 0.0728

#: Anemometer height of the Pierson–Moskowitz (1964) wind speeds, in m.
WIND_HEIGHT_PM: float = 19.5

#: U19.5 / U10 for a neutral boundary layer with drag coefficient 1.3e-3
#: (Stewart 2008, Introduction to Physical Oceanography, §16.5: U19.5 ≈ 1.026 U10).
WIND_RATIO_19_5_TO_10: float = 1.026
