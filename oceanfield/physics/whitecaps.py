"""Whitecap coverage of the sea surface against wind speed.

Knows nothing of lattices or files.

References
----------
Monahan, E. C. & O'Muircheartaigh, I. G. (1980). Optimal power-law description of oceanic
whitecap coverage dependence on wind speed. Journal of Physical Oceanography 10,
2097–2105.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["whitecap_coverage", "sea_whitecap_coverage", "WHITECAP_COEFFICIENT", "WHITECAP_EXPONENT"]

#: W = a·U10^b as a fraction of the surface, U10 in m/s (Monahan & O'Muircheartaigh 1980,
#: their optimal power law; the constants are from memory, matching the figures quoted
#: with the law: about 1 % at 10 m/s, 5 % at 16 m/s, 10 % at 20 m/s). The data scatter
#: by about a factor of two around it: a calibration, not an exact truth.
WHITECAP_COEFFICIENT = 3.84e-6
WHITECAP_EXPONENT = 3.41


def whitecap_coverage(
    wind_speed: ArrayLike, *, coefficient: float = WHITECAP_COEFFICIENT, exponent: float = WHITECAP_EXPONENT
) -> NDArray[np.float64]:
    """Share of the sea surface covered by whitecaps (Monahan & O'Muircheartaigh 1980).

    Parameters
    ----------
    wind_speed : array_like
        Wind speed at 10 m height, U10, in m/s (≥ 0).

    Returns
    -------
    ndarray
        W = 3.84·10⁻⁶ U10^3.41 as a fraction (0…1, capped at 1).

    References
    ----------
    Monahan & O'Muircheartaigh (1980), J. Phys. Oceanogr. 10, 2097–2105, the power law
    fitted to whitecap coverage against U10.

    Examples
    --------
    >>> round(float(whitecap_coverage(10.0)), 4)
    0.0099
    """
    u = np.asarray(wind_speed, dtype=np.float64)
    return np.minimum(coefficient * np.maximum(u, 0.0) ** exponent, 1.0)


def sea_whitecap_coverage(sea) -> float:
    """Whitecap coverage a sea state's wind calls for: W(U10) of its strongest wind-driven
    component, 0 when no component has a wind (swell alone does not break into whitecaps)."""
    winds = [c.wind_speed for c in sea.components if c.wind_speed is not None]
    return float(whitecap_coverage(max(winds))) if winds else 0.0
