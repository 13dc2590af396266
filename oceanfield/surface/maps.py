"""Named maps of one frame, in the 3D package's axes and scene units.

Knows nothing of physics or files: it rearranges arrays into a package's axes and units.

A map is a set of float32 channel arrays named by the OpenEXR convention: a vector map has
channels ``"R"``, ``"G"``, ``"B"`` holding its scene X, Y, Z components; a one-channel map
has the single channel ``"Y"``. `layered_channels` puts several maps in one multi-layer
image with ``layer.channel`` names (``"displacement.R"``).

Axes
----
Internally x runs along array columns, y along array rows, z up (see `Fields`). The scene
is either Z-up or Y-up, both right-handed:

===========  =======================================
``up_axis``  scene (X, Y, Z) from internal (x, y, z)
===========  =======================================
``"z"``      (x, y, z): unchanged
``"y"``      (x, z, −y)
===========  =======================================

so in a Y-up scene the internal +y direction is scene −Z, and "up" is scene +Y.

Image rows
----------
A map's row 0 is the image's top row, as image files store them (OpenEXR and PNG scanlines
run from the top down). The maps put the tile's y = 0 in the image's *bottom* row: file
row r holds the tile's texel row N − 1 − r, so the picture is the tile seen from above
with x to the right and y up. A package whose UV origin is the bottom-left corner then
lays texel (x, y) at u = (x + ½ texel)/L, v = (y + ½ texel)/L: on a Z-up plane with u
along +X and v along +Y, or a Y-up ground plane with u along +X and v along −Z, the tile
lands in scene axes exactly as the vectors in the maps say, and waves travel towards
``towards_deg`` (counter-clockwise from +X seen from above). `FILE_ROWS_FLIPPED` names this.

Units
-----
Lengths are divided by ``metres_per_unit`` (0.01 for a centimetre scene); velocities too,
giving scene units per second. Normals and foam are dimensionless and never scaled.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from typing import NamedTuple

import numpy as np
from numpy.typing import NDArray

from oceanfield.surface.fields import Fields

__all__ = [
    "FILE_ROWS_FLIPPED",
    "MAPS",
    "UP_AXES",
    "ChannelSource",
    "map_channels",
    "map_sources",
    "layered_channels",
    "scene_axes",
]

#: The maps a frame can be written as.
MAPS: tuple[str, ...] = ("displacement", "normal", "foam", "height", "velocity")

#: The scene up-axis conventions `map_channels` knows.
UP_AXES: tuple[str, ...] = ("y", "z")

#: Whether file row 0 (the image's top row) holds the tile's last texel row (y = L − texel):
#: true, so that y = 0 is the image's bottom row (see the module notes).
FILE_ROWS_FLIPPED = True

#: Scene X, Y, Z as (internal component, negated) for each up axis (module notes).
_SCENE_COMPONENTS = {"z": ((0, False), (1, False), (2, False)), "y": ((0, False), (2, False), (1, True))}

#: OpenEXR channel names of a vector map's scene X, Y, Z components.
_VECTOR_CHANNELS = ("R", "G", "B")
#: OpenEXR channel name of a one-channel map.
_SCALAR_CHANNEL = "Y"


def map_channels(
    fields: Fields,
    name: str,
    *,
    metres_per_unit: float = 1.0,
    up_axis: str = "y",
) -> dict[str, NDArray[np.float32]]:
    """Channels of one named map of a frame, in scene axes and units.

    Parameters
    ----------
    fields : Fields
        The frame.
    name : str
        One of `MAPS`:

        - ``"displacement"``: the displacement (displacement_x, displacement_y, height) of
          each texel in scene units, as channels R, G, B = scene X, Y, Z;
        - ``"normal"``: the unit normal of the displaced surface, R, G, B = scene X, Y, Z;
        - ``"velocity"``: the velocity of the displaced surface point in scene units per
          second, R, G, B = scene X, Y, Z;
        - ``"height"``: the vertical displacement in scene units, channel Y;
        - ``"foam"``: foam coverage 0 … 1, channel Y.
    metres_per_unit : float, optional
        Metres in one scene unit (1.0 for a metre scene, 0.01 for centimetres); finite
        and positive.
    up_axis : {"y", "z"}, optional
        The scene's up axis; see the module notes for the mapping.

    Returns
    -------
    dict of str to NDArray[np.float32]
        C-contiguous (N, N) float32 arrays keyed by OpenEXR channel name, rows in file
        order: row 0 is the tile's last row, y = L − texel (module notes). They may share
        memory with `fields`; treat them as read-only.

    Raises
    ------
    ValueError
        For an unknown map name, an unknown up axis, a non-positive or non-finite
        ``metres_per_unit``, or ``"velocity"`` when ``fields.velocity`` is None.
    """
    _check_options(metres_per_unit, up_axis)
    return _map(fields, _check_name(fields, name), float(metres_per_unit), up_axis)


class ChannelSource(NamedTuple):
    """Where one channel's values come from, before any copy: the file holds
    ``(−array if negate else array) / divisor``, computed in float32."""

    array: NDArray[np.float32]  # a view into the frame, rows already in file order
    negate: bool
    divisor: float


def map_sources(
    fields: Fields,
    name: str,
    *,
    metres_per_unit: float = 1.0,
    up_axis: str = "y",
) -> dict[str, ChannelSource]:
    """The channels of `map_channels` as views into the frame plus the sign and divisor that
    turn them into file values, so a writer can convert in one pass without copies.

    Materialising every source as ``np.divide(−a or a, divisor, dtype=float32)`` (or a
    contiguous copy when the divisor is 1) gives exactly `map_channels`' arrays. Same
    parameters and errors as `map_channels`.
    """
    _check_options(metres_per_unit, up_axis)
    return _sources(fields, _check_name(fields, name), float(metres_per_unit), up_axis)


def layered_channels(
    fields: Fields,
    names: Iterable[str],
    *,
    metres_per_unit: float = 1.0,
    up_axis: str = "y",
) -> dict[str, NDArray[np.float32]]:
    """Channels of several maps for one multi-layer image, named ``"map.channel"``.

    Parameters
    ----------
    fields : Fields
        The frame.
    names : iterable of str
        Map names from `MAPS`, each at most once, at least one.
    metres_per_unit, up_axis
        As for `map_channels`.

    Returns
    -------
    dict of str to NDArray[np.float32]
        One entry per channel, keyed ``"<map>.<channel>"`` (OpenEXR layer naming), e.g.
        ``"displacement.R"``, ``"foam.Y"``; in the order of `names`.

    Raises
    ------
    ValueError
        For a bare string instead of a sequence of names, no names, a repeated name, or
        any error `map_channels` reports.
    """
    if isinstance(names, str):
        raise ValueError(f"names: got the string {names!r}; pass a sequence of map names, "
                         f"e.g. [{names!r}]")
    names = list(names)
    if not names:
        raise ValueError(f"names: no maps requested; choose from {', '.join(MAPS)}")
    repeated = sorted({n for n in names if names.count(n) > 1})
    if repeated:
        raise ValueError(f"names: map {repeated[0]!r} requested more than once")
    _check_options(metres_per_unit, up_axis)
    checked = [_check_name(fields, name) for name in names]
    layered: dict[str, NDArray[np.float32]] = {}
    for name in checked:
        for channel, array in _map(fields, name, float(metres_per_unit), up_axis).items():
            layered[f"{name}.{channel}"] = array
    return layered


def _check_options(metres_per_unit: float, up_axis: str) -> None:
    if (
        isinstance(metres_per_unit, (bool, np.bool_))
        or not isinstance(metres_per_unit, (int, float, np.integer, np.floating))
        or not math.isfinite(metres_per_unit)
        or metres_per_unit <= 0
    ):
        raise ValueError(f"metres_per_unit: got {metres_per_unit!r}; expected a finite "
                         f"number of metres per scene unit above 0 (e.g. 1.0, 0.01)")
    if up_axis not in UP_AXES:
        raise ValueError(f"up_axis: got {up_axis!r}; expected one of {', '.join(UP_AXES)}")


def _check_name(fields: Fields, name: str) -> str:
    if name not in MAPS:
        raise ValueError(f"map name: got {name!r}; expected one of {', '.join(MAPS)}")
    if name == "velocity" and fields.velocity is None:
        raise ValueError("map name: 'velocity' requested but this frame has no velocity "
                         "field (fields.velocity is None)")
    return name


def _sources(fields: Fields, name: str, metres_per_unit: float, up_axis: str) -> dict[str, ChannelSource]:
    if name == "height":
        return {_SCALAR_CHANNEL: ChannelSource(fields.height[::-1], False, metres_per_unit)}
    if name == "foam":
        return {_SCALAR_CHANNEL: ChannelSource(fields.foam[::-1], False, 1.0)}
    if name == "displacement":
        vector = (fields.displacement_x, fields.displacement_y, fields.height)
        scale = metres_per_unit
    elif name == "normal":
        vector = (fields.normal[..., 0], fields.normal[..., 1], fields.normal[..., 2])
        scale = 1.0
    else:  # velocity, checked present by _check_name
        assert fields.velocity is not None
        velocity = fields.velocity
        vector = (velocity[..., 0], velocity[..., 1], velocity[..., 2])
        scale = metres_per_unit
    return {
        channel: ChannelSource(vector[index][::-1], negate, scale)
        for channel, (index, negate) in zip(_VECTOR_CHANNELS, _SCENE_COMPONENTS[up_axis])
    }


def _map(
    fields: Fields, name: str, metres_per_unit: float, up_axis: str
) -> dict[str, NDArray[np.float32]]:
    return {channel: _materialised(source) for channel, source in _sources(fields, name, metres_per_unit, up_axis).items()}


def scene_axes(up_axis: str) -> NDArray[np.float64]:
    """The 3×3 matrix A taking an internal vector (x, y, z) to scene (X, Y, Z) = A·(x, y, z).

    The same mapping as the maps' (see the module notes); a rotation (det A = 1), so a
    rotation R in internal axes is A R Aᵀ in the scene's.
    """
    _check_options(1.0, up_axis)
    columns = _to_scene_axes(*np.eye(3), up_axis=up_axis)
    return np.stack(columns, axis=0).astype(np.float64)


def _to_scene_axes(
    x: NDArray[np.float32], y: NDArray[np.float32], z: NDArray[np.float32], *, up_axis: str
) -> tuple[NDArray[np.float32], NDArray[np.float32], NDArray[np.float32]]:
    """Scene (X, Y, Z) of an internal vector (x, y, z); both frames right-handed."""
    vector = (x, y, z)
    return tuple(-vector[i] if negate else vector[i] for i, negate in _SCENE_COMPONENTS[up_axis])


def _materialised(source: ChannelSource) -> NDArray[np.float32]:
    """One C-contiguous float32 channel in file row order, in scene units."""
    component = -source.array if source.negate else source.array
    if source.divisor != 1.0:
        return np.divide(component, source.divisor, dtype=np.float32)
    return np.ascontiguousarray(component, dtype=np.float32)
