"""The vessels in the shot: bodies riding the sea and the wakes, the wake's patch in the scene.

Orchestration only — it knows nothing of formulas. For a preset with ``vessels``
(``preset.vessels``), ``probe`` adds the wakes at every probe, ``float`` rides each
``--body`` on the sea plus every vessel's wake and adds each vessel as a body of its own,
following its course and riding the sea plus the *other* vessels' wakes
(``surface.riding.ride``), and ``scene`` adds, beside the tiled sea mesh:

* ``/Shot/Bodies/<vessel>``: each vessel's animated transform (position and heading
  from its course, heave, pitch and roll from the water);
* ``/Shot/Wake``: a second mesh over the wake region (its own corner, side and texels:
  ``oceanfield.wake_*`` in the maps' headers), whose points are the sea *plus* the wake
  (the tile's displacement sampled at the patch's vertices, ``Ocean.displacement_at``,
  plus the wake's own), with its own material (``/Shot/Looks/WakeMaterial``) wired to the
  ``wake_*`` map sequences: the wake foam on the diffuse colour, the rest as textures.

A package user puts the patch in place of the tiled sea where it lies (it is the same
water there, with the wake added) or, rendering from maps, adds the ``wake_displacement``
sequence to the tiled sea's over the region the headers give.
"""

from __future__ import annotations

from typing import Any

import numpy as np

__all__ = ["preset_vessel_wake", "wake_motions", "wake_patch", "WAKE_MESH_RESOLUTION"]

#: Most vertices per side of the scene's wake patch.
WAKE_MESH_RESOLUTION = 128


def preset_vessel_wake(preset):
    """The preset's ``Wake`` (``preset.vessels.preset_wake``) without velocity, or None."""
    if not preset.vessels:
        return None
    from ..preset.vessels import preset_wake

    return preset_wake(preset, velocity=False)


def wake_motions(preset, modes, bodies, times: np.ndarray, *, spacing: float, wake) -> list[tuple[Any, Any, np.ndarray]]:
    """(body, motion, heading in degrees per instant) of each ``--body`` (standing, on the sea
    plus every wake) and of each vessel (on its course, on the sea plus the others' wakes)."""
    from ..surface.bodies import Body
    from ..surface.riding import headings_deg, ride, standing_course

    t0, t1 = float(np.min(times)), float(np.max(times)) + 1.0
    out = []
    for body in bodies:
        course = standing_course(body, t0, t1)
        motion = ride(modes, body, times, spacing=spacing, course=course, wake=wake)
        out.append((body, motion, headings_deg(course, times)))
    for index, (vessel, (hull, course)) in enumerate(zip(preset.vessels, wake.vessels)):
        x, y = course.position(times[:1])
        body = Body(float(x[0]), float(y[0]), hull.length, hull.beam, name=vessel.name)
        motion = ride(modes, body, times, spacing=spacing, course=course, wake=wake, exclude=index)
        out.append((body, motion, headings_deg(course, times)))
    return out


def wake_patch(preset, ocean, wake, times: np.ndarray):
    """The scene's wake patch: a grid over the wake region (at most
    :data:`WAKE_MESH_RESOLUTION` vertices a side, every stride-th texel) whose points are the
    sea's displacement plus the wake's at each frame, in scene axes and units."""
    from ..io.usd import SeaMesh
    from ..surface.maps import scene_axes

    scene = preset.scene
    region = wake.region
    n = region.resolution
    stride = 1
    while n // stride > WAKE_MESH_RESOLUTION and n % (stride * 2) == 0:
        stride *= 2
    m = n // stride
    index = np.arange(m) * stride
    rest = np.zeros((m, m, 3))
    rest[..., 0] = region.origin_x + index[None, :] * region.spacing
    rest[..., 1] = region.origin_y + index[:, None] * region.spacing
    axes = scene_axes(scene.up_axis)
    points = np.empty((len(times), m * m, 3), dtype=np.float32)
    normals = np.empty_like(points)
    banded = hasattr(ocean, "oceans")
    for f, t in enumerate(times):
        fields = wake.frame(float(t))  # internal axes: row iy is y = origin_y + iy·spacing
        moved = np.stack([fields.displacement_x, fields.displacement_y, fields.height], axis=-1)[::stride, ::stride]
        if banded:
            sea = ocean.composite(float(t), extent=region.size, resolution=m, origin=(region.origin_x, region.origin_y))
            moved = moved + np.stack([sea.displacement_x, sea.displacement_y, sea.height], axis=-1)
        else:
            moved = moved + ocean.displacement_at(rest[..., 0], rest[..., 1], float(t))
        points[f] = ((rest + moved) @ axes.T / scene.metres_per_unit).reshape(-1, 3)
        normals[f] = (fields.normal[::stride, ::stride] @ axes.T).reshape(-1, 3)  # the wake's own slopes
    grid = np.arange(m)
    quad = (grid[:-1, None] * m + grid[None, :-1]).ravel()
    indices = np.stack([quad, quad + 1, quad + m + 1, quad + m], axis=-1).ravel().astype(np.int32)
    u = (index[None, :] + 0.5) / n * np.ones((m, 1))
    v = (index[:, None] + 0.5) / n * np.ones((1, m))  # the maps put y = 0 in the image's bottom row
    st = np.stack([u, v], axis=-1).reshape(-1, 2).astype(np.float32)
    return SeaMesh(np.full((m - 1) ** 2, 4, dtype=np.int32), indices, st, points, normals)
