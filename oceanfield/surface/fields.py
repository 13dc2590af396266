"""The fields of one ocean frame: the contract between the synthesiser and its consumers.

Knows nothing of physics or files.

`Fields` holds what one frame of the synthesised surface is made of, in internal axes and
SI units (x = array columns, y = array rows, z up; metres, seconds). The map layout
(`oceanfield.surface.maps`) turns it into scene axes and units; the writers (`oceanfield.io`) put
those maps in files. Nothing here knows of physics or files.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

__all__ = ["Fields"]

_SCALAR_FIELDS = ("height", "displacement_x", "displacement_y", "jacobian", "foam")
_VECTOR_FIELDS = ("normal", "velocity")


@dataclass(frozen=True, eq=False)
class Fields:
    """One frame of the ocean surface on a square tile of N × N texels.

    Every array is float32 and indexed ``[iy, ix]``: texel (iy, ix) sits at
    (x, y) = (ix, iy) · L / N on a tile of side L metres. Vectors are in internal axes
    (x along columns, y along rows, z up).

    Attributes
    ----------
    time : float
        Time of the frame in seconds.
    height : NDArray[np.float32], shape (N, N)
        Vertical displacement of the surface in metres, z up (positive above the mean
        water level).
    displacement_x : NDArray[np.float32], shape (N, N)
        Lateral displacement along internal x in metres, with the user's lateral factor
        already applied.
    displacement_y : NDArray[np.float32], shape (N, N)
        Lateral displacement along internal y in metres, with the user's lateral factor
        already applied.
    jacobian : NDArray[np.float32], shape (N, N)
        Jacobian determinant of the lateral map (x, y) → (x + Dx, y + Dy), dimensionless:
        1 for no lateral displacement, below 0 where the surface folds over itself.
    normal : NDArray[np.float32], shape (N, N, 3)
        Unit normal of the displaced surface, components (x, y, z) in internal axes,
        pointing up out of the water (z component positive where the surface does not
        fold).
    foam : NDArray[np.float32], shape (N, N)
        Foam coverage, dimensionless in 0 … 1.
    velocity : NDArray[np.float32], shape (N, N, 3), or None
        Velocity of the displaced surface point in m/s, components (x, y, z) in internal
        axes; None when the frame was synthesised without it.

    Notes
    -----
    Construction checks shapes and dtypes only (no pass over the data), so building a
    `Fields` costs nothing next to the transforms that filled it. The dataclass is frozen
    but numpy arrays stay writable; consumers must treat them as read-only.
    """

    time: float
    height: NDArray[np.float32]
    displacement_x: NDArray[np.float32]
    displacement_y: NDArray[np.float32]
    jacobian: NDArray[np.float32]
    normal: NDArray[np.float32]
    foam: NDArray[np.float32]
    velocity: NDArray[np.float32] | None = None

    def __post_init__(self) -> None:
        shape = np.shape(self.height)
        if len(shape) != 2 or shape[0] != shape[1] or shape[0] == 0:
            raise ValueError(f"Fields.height: shape {shape} is not a square (N, N) array")
        for name in _SCALAR_FIELDS + _VECTOR_FIELDS:
            value = getattr(self, name)
            if value is None and name == "velocity":
                continue
            expected = shape if name in _SCALAR_FIELDS else (*shape, 3)
            if not isinstance(value, np.ndarray) or value.dtype != np.float32:
                kind = getattr(value, "dtype", type(value).__name__)
                raise ValueError(f"Fields.{name}: got {kind}, expected a float32 numpy array")
            if value.shape != expected:
                raise ValueError(f"Fields.{name}: shape {value.shape}, expected {expected}")

    @property
    def resolution(self) -> int:
        """Texels per side N of the tile."""
        return int(self.height.shape[0])
