"""The look's camera: a pinhole at a height above the mean sea, turned by heading and
pitch, with a horizontal field of view; where it sees the horizon.

Knows nothing of presets, the sea or files: angles and rays.

Conventions: heading in radians counter-clockwise from the tile's +x axis (as the
presets' ``towards_deg``), pitch above the horizontal (negative looks down), no roll.
Image rows run from the top; the field of view spans the picture's width, its height
follows from the aspect ratio.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from .optics import EARTH_RADIUS, horizon_dip

__all__ = ["Camera"]

_MAX_FOV_DEG = 150.0


@dataclass(frozen=True)
class Camera:
    """A pinhole camera above the sea.

    Parameters
    ----------
    height : float
        Height of the lens above the mean sea level, metres, > 0.
    heading, pitch : float
        Where it looks: radians counter-clockwise from +x, and above the horizontal.
    fov : float
        Horizontal field of view, radians, in (0, 150°).
    width, rows : int
        Picture size in pixels.
    x, y : float
        Position over the tile, metres.
    """

    height: float
    heading: float
    pitch: float
    fov: float
    width: int
    rows: int
    x: float = 0.0
    y: float = 0.0

    def __post_init__(self) -> None:
        if not (self.height > 0.0 and math.isfinite(self.height)):
            raise ValueError(f"camera height: {self.height!r} is not allowed; allowed: metres above the sea, > 0")
        if not (-math.pi / 2 < self.pitch < math.pi / 2):
            raise ValueError(f"pitch: {math.degrees(self.pitch)!r} degrees is not allowed; allowed: between -90 and 90")
        if not (0.0 < self.fov < math.radians(_MAX_FOV_DEG)):
            raise ValueError(f"field of view: {math.degrees(self.fov)!r} degrees is not allowed; "
                             f"allowed: between 0 and {_MAX_FOV_DEG:g}")

    @property
    def tan_half(self) -> tuple[float, float]:
        """tan of half the horizontal and vertical fields of view."""
        tan_x = math.tan(self.fov / 2.0)
        return tan_x, tan_x * self.rows / self.width

    def basis(self) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
        """(forward, right, up) unit vectors in internal axes."""
        ch, sh, cp, sp = math.cos(self.heading), math.sin(self.heading), math.cos(self.pitch), math.sin(self.pitch)
        forward = np.array([cp * ch, cp * sh, sp])
        right = np.array([sh, -ch, 0.0])
        up = np.array([-sp * ch, -sp * sh, cp])
        return forward, right, up

    def ray(self, row: float, col: float) -> NDArray[np.float64]:
        """Unit direction through the pixel centre (row, col) (fractional positions allowed)."""
        tan_x, tan_y = self.tan_half
        forward, right, up = self.basis()
        d = (forward + (2.0 * (col + 0.5) / self.width - 1.0) * tan_x * right
             + (1.0 - 2.0 * (row + 0.5) / self.rows) * tan_y * up)
        return d / np.linalg.norm(d)

    def horizon_row(self, *, radius: float = EARTH_RADIUS) -> float:
        """Where the horizon crosses the picture's vertical centre line, in rows from the
        top edge (a pixel's centre sits at row + ½): the line of sight at dip
        arccos(R/(R + h)) below the horizontal (``radius`` inf: 0, a flat sea)."""
        dip = 0.0 if math.isinf(radius) else float(horizon_dip(self.height, radius=radius))
        _tan_x, tan_y = self.tan_half
        return (1.0 - math.tan(-dip - self.pitch) / tan_y) * self.rows / 2.0
