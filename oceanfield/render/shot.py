"""Into the shot: the ``probe``, ``float`` and ``scene`` commands.

Orchestration only — it knows nothing of formulas: it reads the preset and the frames,
asks the surface for probes (``surface.probes``) and body motions (``surface.bodies``),
puts them in the scene's axes and units (``surface.maps.scene_axes``) and hands arrays to
the writers (``io.table`` for CSV/JSON, ``io.usd`` for the USD stage), which write
atomically: a failed command leaves no partial file.

Positions on the command line are in the tile's own axes and metres (x along image
columns, y along rows), or in the scene's horizontal axes and units with
``--scene-units``; any position within ±100 km works.

A banded preset (a ``bands`` section) is summed from the modes of every band joined
(``BandStack.modes``): each band's waves lie on its own tile's lattice, so the sum is the
banded sea at the position asked for on the whole plane, never wrapped onto one tile. Its
scene mesh covers the composite's extent (``composite_extent_m``; without one, band 0's
tile) and its points are the bands' exact Fourier sums at the mesh's vertices
(``BandStack.composite``): every wave the mesh's own grid can hold, the shorter ones left
out rather than aliased; the material wires the ``composite_*`` maps when there are any.
"""

from __future__ import annotations

import math
import os
import sys
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Sequence

import numpy as np

from ..io.atomic import prepare_option_output
from .plan import parse_frames

__all__ = [
    "ProbePoint",
    "parse_probe",
    "parse_body",
    "probe_table",
    "body_table",
    "run_probe_command",
    "run_float_command",
    "run_scene_command",
]

#: Farthest a probe or body may be from the tile's origin, metres.
MAX_DISTANCE_M = 100_000.0
#: Default most vertices per side of the scene's sea mesh.
DEFAULT_MESH_RESOLUTION = 128

_UNIT_NAMES = {1.0: "m", 0.01: "cm", 0.001: "mm", 0.1: "dm", 1000.0: "km", 0.0254: "in", 0.3048: "ft"}


@dataclass(frozen=True)
class ProbePoint:
    """A named probe position in the tile's axes, metres."""

    name: str
    x: float
    y: float


# -- parsing ---------------------------------------------------------------------------------


def _number(option: str, text: str, key: str, value: str) -> float:
    try:
        number = float(value)
    except ValueError:
        raise ValueError(f"{option}: {key}={value!r} in {text!r} is not a number") from None
    if not math.isfinite(number):
        raise ValueError(f"{option}: {key}={value!r} in {text!r} is not allowed; allowed: a finite number")
    return number


def _check_position(option: str, text: str, x: float, y: float) -> None:
    if abs(x) > MAX_DISTANCE_M or abs(y) > MAX_DISTANCE_M:
        raise ValueError(
            f"{option}: {text!r} is {max(abs(x), abs(y)):.6g} m from the tile's origin; allowed: within "
            f"±{MAX_DISTANCE_M:.0f} m (a single tile repeats, and a banded sea is laid out for a shot's reach)"
        )


def _to_tile_metres(x: float, y: float, scene: Any | None) -> tuple[float, float]:
    """A horizontal position given in scene units and axes, as tile metres (x, y)."""
    if scene is None:
        return x, y
    from ..surface.maps import scene_axes

    # Scene horizontal axes: X and Y (Z-up) or X and Z (Y-up); the up component is 0.
    horizontal = np.zeros(3)
    up = 1 if scene.up_axis == "y" else 2
    horizontal[[0, 2 if up == 1 else 1]] = (x, y)
    internal = scene_axes(scene.up_axis).T @ horizontal * scene.metres_per_unit
    return float(internal[0]), float(internal[1])


def parse_probe(text: str, index: int, scene: Any | None = None) -> ProbePoint:
    """``X,Y`` or ``NAME=X,Y`` (tile metres; scene units and axes when ``scene`` is given)."""
    name, _, coordinates = text.rpartition("=")
    name = name.strip() or f"probe{index}"
    parts = [p.strip() for p in coordinates.split(",")]
    if len(parts) != 2 or not all(parts):
        raise ValueError(f"--at: {text!r} is not a position; allowed: X,Y or NAME=X,Y (e.g. --at hero=12.5,40)")
    x = _number("--at", text, "X", parts[0])
    y = _number("--at", text, "Y", parts[1])
    x, y = _to_tile_metres(x, y, scene)
    _check_position("--at", text, x, y)
    return ProbePoint(name, x, y)


_BODY_KEYS = ("name", "x_m", "y_m", "length_m", "beam_m", "heading_deg",
              "heave_period_s", "heave_damping", "pitch_period_s", "pitch_damping", "roll_period_s", "roll_damping")


def parse_body(text: str, index: int, scene: Any | None = None):
    """A body from ``key=value,...`` (see ``_BODY_KEYS``); x_m, y_m, length_m, beam_m required."""
    from ..surface.bodies import Body, Response

    values: dict[str, str] = {}
    for item in text.split(","):
        key, sep, value = (s.strip() for s in item.partition("="))
        if not sep or not key or not value:
            raise ValueError(f"--body: {item.strip()!r} in {text!r} is not key=value; allowed keys: {', '.join(_BODY_KEYS)}")
        if key not in _BODY_KEYS:
            import difflib

            close = difflib.get_close_matches(key, _BODY_KEYS, n=1)
            hint = f" — did you mean {close[0]}?" if close else ""
            raise ValueError(f"--body: {key!r} is not a key{hint}; allowed: {', '.join(_BODY_KEYS)}")
        if key in values:
            raise ValueError(f"--body: {key} is given twice in {text!r}")
        values[key] = value
    missing = [k for k in ("x_m", "y_m", "length_m", "beam_m") if k not in values]
    if missing:
        raise ValueError(f"--body: {text!r} lacks {', '.join(missing)}; a body needs x_m, y_m, length_m and beam_m")
    number = {k: _number("--body", text, k, v) for k, v in values.items() if k != "name"}
    for key in ("length_m", "beam_m"):
        if number[key] <= 0:
            raise ValueError(f"--body: {key}={values[key]} is not allowed; allowed: a length > 0 metres")
    responses = {}
    for motion in ("heave", "pitch", "roll"):
        period, damping = number.get(f"{motion}_period_s"), number.get(f"{motion}_damping")
        if (period is None) != (damping is None):
            given, lacking = (f"{motion}_period_s", f"{motion}_damping") if damping is None else \
                (f"{motion}_damping", f"{motion}_period_s")
            raise ValueError(f"--body: {given} needs {lacking} too: the two set the {motion} response together")
        if period is not None:
            if period <= 0:
                raise ValueError(f"--body: {motion}_period_s={values[f'{motion}_period_s']} is not allowed; "
                                 "allowed: a natural period > 0 seconds")
            if damping <= 0:
                raise ValueError(f"--body: {motion}_damping={values[f'{motion}_damping']} is not allowed; "
                                 "allowed: a damping ratio > 0 (0.05-0.3 is typical of a hull)")
            responses[motion] = Response(period, damping)
    x, y = _to_tile_metres(number["x_m"], number["y_m"], scene)
    _check_position("--body", text, x, y)
    length, beam = number["length_m"], number["beam_m"]
    if scene is not None:
        length, beam = length * scene.metres_per_unit, beam * scene.metres_per_unit
    heading = math.radians(number.get("heading_deg", 0.0))
    return Body(x, y, length, beam, heading, name=values.get("name", f"body{index}"), **responses)


# -- computing ---------------------------------------------------------------------------------


def _unit(metres_per_unit: float) -> str:
    """The scene unit's symbol for column names (``su`` = scene units when not a common one)."""
    for value, name in _UNIT_NAMES.items():
        if math.isclose(metres_per_unit, value, rel_tol=1e-12):
            return name
    return "su"


def _frames_and_times(preset, frames_text: str | None) -> tuple[list[int], np.ndarray]:
    frames = parse_frames(frames_text, preset.time.frames)
    return frames, np.array([preset.time.frame_time(f) for f in frames], dtype=np.float64)


def _ocean(preset):
    """The preset's sea: an ``Ocean`` for one tile, a ``BandStack`` for a banded preset
    (both answer ``modes()``)."""
    if preset.bands.active:
        from ..preset.banding import band_stack

        return band_stack(preset, foam_memory=0.0)
    from ..surface.synth import Ocean

    return Ocean.from_preset(preset, velocity=False, foam_memory=0.0)


def _banded(ocean) -> bool:
    return hasattr(ocean, "oceans")


def _largest_tile(ocean):
    return ocean.largest_tile if _banded(ocean) else ocean.tile


def _finest_spacing(ocean) -> float:
    return ocean.finest_spacing if _banded(ocean) else ocean.tile.spacing


def probe_table(preset, ocean, probes: Sequence[ProbePoint], frames: Sequence[int], times: np.ndarray, wake=None):
    """(columns, rows, positions (P, F, 3) in scene units, worst residual) of the probes;
    with ``wake`` (a preset's vessels), the sea plus the wakes."""
    from ..surface.maps import scene_axes
    from ..surface.probes import surface_at

    scene = preset.scene
    axes = scene_axes(scene.up_axis)
    unit = _unit(scene.metres_per_unit)
    mpu = scene.metres_per_unit
    xs = np.array([[p.x] for p in probes])
    ys = np.array([[p.y] for p in probes])
    # probes are few: every bound wave, so a probe reads what the maps hold
    points = surface_at(ocean.modes(bound_share=1.0), xs, ys, times[None, :], tolerance=_tolerance(ocean))
    shape = (len(probes), len(times))
    if wake is not None:  # the wakes at the sea's rest points, added to first order (surface.wake.combine)
        from ..surface.wake import combine

        points = combine(points, wake.surface_at(points.rest[..., 0], points.rest[..., 1],
                                                 np.broadcast_to(times[None, :], shape)))
    where = np.stack([np.broadcast_to(xs, shape), np.broadcast_to(ys, shape), points.position[..., 2]], axis=-1)
    position = where @ axes.T / mpu
    displacement = points.displacement @ axes.T / mpu
    normal = points.normal @ axes.T
    velocity = points.velocity @ axes.T / mpu
    axis_names = ("X", "Y", "Z")
    columns = ["frame", "time_s", "probe", "at_x_m", "at_y_m",
               *(f"position_{a}_{unit}" for a in axis_names), f"height_{unit}",
               *(f"displacement_{a}_{unit}" for a in axis_names),
               *(f"normal_{a}" for a in axis_names),
               *(f"velocity_{a}_{unit}ps" for a in axis_names), f"rise_rate_{unit}ps",
               "rest_x_m", "rest_y_m", "residual_m"]
    rows = []
    for f, (frame, t) in enumerate(zip(frames, times)):
        for p, probe in enumerate(probes):
            rows.append([frame, float(t), probe.name, probe.x, probe.y,
                         *position[p, f].tolist(), float(points.position[p, f, 2] / mpu),
                         *displacement[p, f].tolist(), *normal[p, f].tolist(), *velocity[p, f].tolist(),
                         float(points.rise_rate[p, f] / mpu),
                         *points.rest[p, f].tolist(), float(points.residual[p, f])])
    return columns, rows, position, float(points.residual.max(initial=0.0))


def _tolerance(ocean) -> float:
    """Inversion tolerance: a hundred-millionth of the (widest band's) tile (7.7 µm on a 768 m tile)."""
    return 1e-8 * _largest_tile(ocean).size


def body_table(preset, ocean, bodies, frames: Sequence[int], times: np.ndarray, wake=None):
    """(columns, rows, transforms {name: (F, 4, 4) USD row-vector matrices}, worst residual).

    With ``wake`` (a preset's vessels) the bodies ride the sea plus every wake, and each
    vessel follows its course riding the sea plus the others' wakes (``wakeshot``)."""
    from ..surface.bodies import body_motion, quaternion
    from ..surface.maps import scene_axes

    scene = preset.scene
    axes = scene_axes(scene.up_axis)
    unit = _unit(scene.metres_per_unit)
    mpu = scene.metres_per_unit
    modes = ocean.modes()
    columns = ["frame", "time_s", "body", *(f"position_{a}_{unit}" for a in "XYZ"), f"heave_{unit}",
               "pitch_bow_up_deg", "roll_starboard_down_deg", "heading_deg",
               "orientation_w", "orientation_X", "orientation_Y", "orientation_Z", "waterplane_samples", "residual_m"]
    motions = []
    tile = _largest_tile(ocean)
    for body in bodies:
        if max(body.length, body.beam) > tile.size:  # its waterplane samples wrap onto one tile
            size = f"{body.length:.3g} m long" if body.length >= body.beam else f"{body.beam:.3g} m wide"
            print(f"oceanfield: warning: body {body.name!r} is {size}, more than the {tile.size:.3g} m "
                  f"{'widest band' if _banded(ocean) else 'tile'}: the sea repeats under it, so parts of "
                  f"it ride the same water; use a larger tile.size_m (or bands)", file=sys.stderr)
    if wake is None:
        ridden = [(body, body_motion(modes, body, times, spacing=_finest_spacing(ocean)),
                   np.full(len(times), math.degrees(body.heading))) for body in bodies]
    else:
        from .wakeshot import wake_motions

        ridden = wake_motions(preset, modes, bodies, times, spacing=_finest_spacing(ocean), wake=wake)
    for body, motion, heading in ridden:
        position = motion.position @ axes.T / mpu
        rotation = axes @ motion.rotation @ axes.T
        matrix = np.zeros((len(times), 4, 4))
        matrix[:, :3, :3] = np.swapaxes(rotation, -1, -2)  # USD: row vectors, p' = p · M
        matrix[:, 3, :3] = position
        matrix[:, 3, 3] = 1.0
        motions.append((body, motion, position, quaternion(rotation), matrix, heading))
    rows = []
    for f, (frame, t) in enumerate(zip(frames, times)):
        for body, motion, position, quat, _, heading in motions:
            rows.append([frame, float(t), body.name, *position[f].tolist(), float(motion.heave[f] / mpu),
                         math.degrees(motion.pitch[f]), math.degrees(motion.roll[f]),
                         float(heading[f]), *quat[f].tolist(), motion.samples, motion.worst_residual])
    worst = max((m[1].worst_residual for m in motions), default=0.0)
    return columns, rows, {m[0].name: m[4] for m in motions}, worst


def _metadata(preset, frames: Sequence[int]) -> dict[str, Any]:
    from .. import __version__
    from .plan import render_hash

    return {
        "software": f"oceanfield {__version__}",
        "preset": preset.name,
        "preset_hash": render_hash(preset),
        "fps": preset.time.fps,
        "frames": [frames[0], frames[-1]] if frames else [],
        "metres_per_unit": preset.scene.metres_per_unit,
        "up_axis": preset.scene.up_axis,
        "tile_size_m": preset.tile.size_m,
    }


def _unique_names(kind: str, names: Sequence[str]) -> None:
    seen = set()
    for name in names:
        if name in seen:
            raise ValueError(f"{kind}: the name {name!r} is used twice (a preset's vessels float under their "
                             f"own names); give each a name of its own")
        seen.add(name)


# -- commands ----------------------------------------------------------------------------------


def _load(args):
    from ..preset.schema import load_preset

    return load_preset(args.preset, overrides=tuple(args.overrides), allow_outside_output=False)


def _emit(args, columns, rows, metadata) -> None:
    from ..io.table import format_csv, format_json, write_table

    if args.out:
        path = write_table(args.out, columns, rows, metadata)
        print(f"{len(rows)} rows written to {path}", file=sys.stderr)
    elif args.json:
        sys.stdout.write(format_json(columns, rows, metadata))
    else:
        sys.stdout.write(format_csv(columns, rows))


def _check_out(args) -> None:
    if args.out:
        from ..io.table import table_format

        table_format(args.out)


def run_probe_command(args) -> int:
    """``oceanfield probe``: the surface above points, per frame, as CSV or JSON."""
    return _run_table_command(args, "--at", args.at, parse_probe, probe_table)


def run_float_command(args) -> int:
    """``oceanfield float``: floating bodies' position and rotation per frame, as CSV or JSON."""
    return _run_table_command(args, "--body", args.body, parse_body, body_table)


def _run_table_command(args, option: str, texts: Sequence[str], parse, table) -> int:
    """A per-frame table of things placed on the sea (probes or bodies): parse each ``option``
    text, check their names, tabulate them over the frames and write the table."""
    _check_out(args)
    preset = _load(args)
    scene = preset.scene if args.scene_units else None
    items = [parse(text, i + 1, scene) for i, text in enumerate(texts)]
    vessels = [v.name for v in preset.vessels] if table is body_table else []  # they float too
    if not items and not vessels:
        raise ValueError(f"{option}: needed at least once (the preset has no vessels to float)")
    _unique_names(option, [item.name for item in items] + vessels)
    frames, times = _frames_and_times(preset, args.frames)
    if args.out:
        prepare_option_output("--out", args.out)  # said before any work
    from .wakeshot import preset_vessel_wake

    columns, rows, _, worst = table(preset, _ocean(preset), items, frames, times, wake=preset_vessel_wake(preset))
    _emit(args, columns, rows, {**_metadata(preset, frames), "worst_residual_m": worst})
    return 0


def mesh_extent(preset, ocean) -> tuple[float, int, str]:
    """(metres, texels, what) the scene's sea mesh spans: the tile; for a banded preset the
    composite's extent and resolution, or without a composite band 0's tile (twice the
    reach for a laid-out stack)."""
    if not _banded(ocean):
        return preset.tile.size_m, preset.tile.resolution, "tile resolution"
    if preset.bands.composite_extent_m is not None:
        return preset.bands.composite_extent_m, preset.bands.composite_resolution, "bands.composite_resolution"
    tile = ocean.bands[0].tile
    return tile.size, tile.resolution, "band 0's resolution"


def _mesh_stride(preset, requested: int | None, texels: int | None = None, what: str = "tile resolution") -> int:
    n = preset.tile.resolution if texels is None else texels
    if requested is None:
        stride = 1
        while n // stride > DEFAULT_MESH_RESOLUTION and n % (stride * 2) == 0:
            stride *= 2
        return stride
    if requested < 2 or requested > n or n % requested:
        raise ValueError(f"--mesh-resolution: {requested} is not allowed; allowed: a divisor of the "
                         f"{what} {n} from 2 up (e.g. {n // 4 if n % 4 == 0 else n // 2})")
    return n // requested


def sea_mesh(preset, ocean, frames: Sequence[int], times: np.ndarray, stride: int):
    """The displaced grid of each frame at every ``stride``-th texel of the maps.

    One tile: the maps' texels, with one row and column more so the mesh closes at the
    far edges (they take the first row's and column's values: the tile repeats). A band
    stack: the composite's exact sums at the vertices (:func:`mesh_extent`), every wave
    the mesh's grid holds; the sea does not repeat, so the mesh ends at the last texel.
    """
    from ..io.usd import SeaMesh
    from ..surface.maps import map_channels, scene_axes

    scene = preset.scene
    banded = _banded(ocean)
    size, texels, _ = mesh_extent(preset, ocean)
    n = texels // stride
    spacing = size / n
    m = n if banded else n + 1  # vertices per side
    index = np.arange(m)
    rest = np.zeros((m, m, 3))
    rest[..., 0] = index[None, :] * spacing
    rest[..., 1] = index[:, None] * spacing
    rest_scene = rest @ scene_axes(scene.up_axis).T / scene.metres_per_unit
    points = np.empty((len(frames), m * m, 3), dtype=np.float32)
    normals = np.empty_like(points)
    for f, t in enumerate(times):
        fields = ocean.composite(float(t), extent=size, resolution=n) if banded else ocean.frame(float(t))
        step = 1 if banded else stride
        for name, target in (("displacement", points), ("normal", normals)):
            channels = map_channels(fields, name, metres_per_unit=scene.metres_per_unit, up_axis=scene.up_axis)
            # map channels are in file row order (y = 0 last): back to the tile's rows first
            vector = np.stack([channels[c][::-1][::step, ::step] for c in ("R", "G", "B")], axis=-1)
            if not banded:
                vector = np.pad(vector, ((0, 1), (0, 1), (0, 0)), mode="wrap")
            target[f] = (vector + (rest_scene if name == "displacement" else 0.0)).reshape(-1, 3)
    quad = (index[:-1, None] * m + index[None, :-1]).ravel()
    # Counter-clockwise seen from above: +x, then +y (internal axes; the scene map is a rotation).
    indices = np.stack([quad, quad + 1, quad + m + 1, quad + m], axis=-1).ravel().astype(np.int32)
    u = rest[..., 0] / size + 0.5 / texels
    v = rest[..., 1] / size + 0.5 / texels  # the maps put y = 0 in the image's bottom row
    st = np.stack([u, v], axis=-1).reshape(-1, 2).astype(np.float32)
    return SeaMesh(np.full((m - 1) ** 2, 4, dtype=np.int32), indices, st, points, normals)


def _texture_files(preset, maps_root: Path, stage_path: Path, frames: Sequence[int],
                   names: Sequence[tuple[str, str]] | None = None) -> tuple[dict, int]:
    """Each map's file per frame, relative to the stage's folder; and how many are missing.

    A banded preset's material takes its ``composite_*`` maps (the mesh's extent); without
    a composite it has no textures (each band's maps span a tile of their own). ``names``
    gives other (file map name, map) pairs (the wake's ``wake_*``)."""
    files: dict[str, list[str]] = {}
    missing = 0
    base = stage_path.resolve().parent
    if names is None and preset.bands.active:
        from ..preset.banding import band_map_names

        names = [(file_name, name) for file_name, band, name in band_map_names(preset) if band is None]
    elif names is None:
        names = [(name, name) for name in preset.maps]
    for file_name, name in names:
        paths = []
        for frame in frames:
            target = (maps_root / preset.output.relative_path(preset.name, file_name, frame)).resolve()
            missing += not target.is_file()
            relative = Path(os.path.relpath(target, base)).as_posix()
            paths.append(relative if relative.startswith("../") else f"./{relative}")
        files[name] = paths
    return files, missing


_TEXTURE_NOTES = {
    "displacement": "Vector displacement (scene X, Y, Z in scene units) of each texel; the mesh's points "
                    "already carry it at the mesh's resolution. Wire it to a vector displacement at render "
                    "time on a flat, finer tile instead.",
    "normal": "Unit normal of the displaced surface in scene axes (not tangent space): for shading a flat "
              "tile; the mesh's own normals already carry it at the mesh's resolution.",
    "height": "Vertical displacement in scene units (displacement along the normal of a flat tile).",
    "velocity": "Velocity of the surface in scene units per second (spray, motion blur).",
    "foam": "Foam coverage 0-1; wired to the diffuse colour through this texture's scale and bias.",
}


def run_scene_command(args) -> int:
    """``oceanfield scene``: the animated sea, its material, probes and bodies as a USD stage."""
    from ..io.usd import Look, USD_SUFFIXES, require_usd, write_stage

    out = Path(args.out)
    if out.suffix.lower() not in USD_SUFFIXES:
        raise ValueError(f"--out: {args.out!r} is not allowed; allowed: a file ending in .usda, .usd or .usdc")
    require_usd()
    preset = _load(args)
    scene = preset.scene if args.scene_units else None
    probes = [parse_probe(text, i + 1, scene) for i, text in enumerate(args.at)]
    bodies = [parse_body(text, i + 1, scene) for i, text in enumerate(args.body)]
    _unique_names("--at", [p.name for p in probes])
    _unique_names("--body", [b.name for b in bodies])
    prepare_option_output("--out", out)
    ocean = _ocean(preset)
    extent, texels, what = mesh_extent(preset, ocean)
    stride = _mesh_stride(preset, args.mesh_resolution, texels, what)
    frames, times = _frames_and_times(preset, args.frames)
    maps_root = Path(args.maps) if args.maps else Path("renders")
    if args.render_maps:
        from .job import render
        from .plan import plan_render

        plan = plan_render(preset, root=maps_root, frames=args.frames)
        summary = render(plan)
        print(summary.line(), file=sys.stderr)
        if not summary.ok:
            raise ValueError(f"--render-maps: {len(summary.failed)} frames failed to render; the stage was not written")
    mesh = sea_mesh(preset, ocean, frames, times, stride)
    from .wakeshot import preset_vessel_wake, wake_patch

    wake = preset_vessel_wake(preset)
    _unique_names("--body", [b.name for b in bodies] + [v.name for v in preset.vessels])
    probe_positions = {}
    if probes:
        _, _, positions, _ = probe_table(preset, ocean, probes, frames, times, wake=wake)
        probe_positions = {p.name: positions[i] for i, p in enumerate(probes)}
    body_transforms = body_table(preset, ocean, bodies, frames, times, wake=wake)[2] if bodies or wake else {}
    textures, missing = _texture_files(preset, maps_root, out, frames)
    look = Look(textures=textures, foam_map="foam" if "foam" in preset.maps else None,
                notes={k: v for k, v in _TEXTURE_NOTES.items() if k in textures},
                wrap="clamp" if preset.bands.active else "repeat")  # the composite does not repeat
    patch = wake_look = None
    if wake is not None:  # a second mesh over the wake region: sea + wake, wired to the wake_* maps
        from ..preset.vessels import wake_map_names

        patch = wake_patch(preset, ocean, wake, times)
        wake_files, wake_missing = _texture_files(preset, maps_root, out, frames, names=wake_map_names(preset))
        missing += wake_missing
        wake_look = Look(textures=wake_files, foam_map="foam" if "foam" in preset.maps else None, wrap="clamp",
                         notes={k: f"The wake alone over its region (add it to the tiled sea's): {v}"
                                for k, v in _TEXTURE_NOTES.items() if k in wake_files})
    from .. import __version__

    n = texels // stride
    quads = n - 1 if preset.bands.active else n
    over = (f"{len(ocean.bands)} bands' exact sums over {extent:g} m" if preset.bands.active
            else f"a {extent:g} m tile")
    path = write_stage(
        out, metres_per_unit=preset.scene.metres_per_unit, up_axis=preset.scene.up_axis, fps=preset.time.fps,
        frames=frames, mesh=mesh, look=look, probes=probe_positions, bodies=body_transforms,
        wake=patch, wake_look=wake_look,
        comment=f"oceanfield {__version__}: preset {preset.name}, frames {frames[0]}-{frames[-1]}, "
                f"sea mesh {quads}x{quads} quads, {over}",
    )
    vessels = f", {len(preset.vessels)} vessel{'s' * (len(preset.vessels) != 1)} and a wake patch" if wake else ""
    print(f"scene written to {path}: {len(frames)} frame{'s' * (len(frames) != 1)}, a {quads}x{quads} sea mesh, "
          f"{len(probes)} probe{'s' * (len(probes) != 1)}, {len(bodies)} {'body' if len(bodies) == 1 else 'bodies'}"
          f"{vessels}", file=sys.stderr)
    if preset.bands.active and not textures:
        print("oceanfield: note: the material has no textures: a banded preset wires its composite maps, "
              "and this one has none (set bands.composite_extent_m)", file=sys.stderr)
    if missing:
        import shlex

        # the render that makes exactly these files: the same preset and --set options, quoted for a shell
        command = ["oceanfield", "render", str(args.preset), *(t for o in args.overrides for t in ("--set", o)),
                   "--frames", f"{frames[0]}-{frames[-1]}", "--out", str(maps_root)]
        print(f"oceanfield: warning: the material refers to {missing} map files not rendered yet under "
              f"{maps_root}; render them with `{shlex.join(command)}` or add --render-maps", file=sys.stderr)
    return 0
