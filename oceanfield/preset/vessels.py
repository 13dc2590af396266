"""Moving bodies and their wake in a preset: the ``vessels`` list and the ``wake`` region.

Knows nothing of rendering. Each vessel is a hull (waterline length, beam, draft in metres)
that follows a course (``courses``: keyframes, a CSV table or a USD prim); the ``wake``
section places the square, non-periodic region the wake is computed on (origin and size in
tile metres, texels per side) and how far back in time each frame looks. A region left
null is derived from the courses: the box around every position a vessel holds from one
look-back before the first frame to the last frame, widened on every side by the Kelvin
wedge's half-width behind the longest stretch of the trail (tan 19.47° × that length;
Kelvin 1887), by half a transverse wavelength 2πU²/g at the fastest speed in that window
and by four hull lengths, whichever is most; its texels resolve a quarter of the shortest hull and a
twentieth of that wavelength (common practice: a wave needs about ten texels across).

This module turns the settings into the surface's wake (``surface.wake``: ``Hull``,
``Course``, ``WakeRegion``, ``Wake``) and checks that an explicit region holds every course.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ._yamltree import BAD, Section, describe, valid
from .courses import CourseSamples, CourseSettings, course_samples, read_course

__all__ = [
    "VesselSettings",
    "WakeSettings",
    "NO_WAKE",
    "read_vessels",
    "read_wake",
    "check_region",
    "vessel_samples",
    "wake_region",
    "preset_wake",
    "vessel_speeds",
    "wake_notes",
    "wake_report",
    "format_wake_report",
    "WAKE_PREFIX",
    "wake_map_names",
    "WakeFrame",
    "WakeRenderer",
]

#: The Kelvin wedge's half-angle in deep water, arcsin(1/3) (Kelvin 1887; Lighthill 1978, §3.10).
KELVIN_HALF_ANGLE = math.asin(1.0 / 3.0)
_HULL_LENGTHS_OF_MARGIN = 4.0  # common practice: the near field and bow wave stay inside
_TEXELS_PER_TRANSVERSE_WAVE = 20.0  # common practice: ~10 texels a wave, twice for the divergent waves
_TEXELS_PER_HULL = 4.0  # the pressure patch is smooth over its own length: four texels along the shortest
_MIN_RESOLUTION, _MAX_RESOLUTION = 64, 2048
_MAX_REGION_M = 20_000.0


@dataclass(frozen=True)
class VesselSettings:
    """One moving body as written: a name, its hull in metres and its course."""

    name: str
    length_m: float
    beam_m: float
    draft_m: float
    course: CourseSettings


@dataclass(frozen=True)
class WakeSettings:
    """The wake's region (origin, size and resolution; null: derived from the courses) and
    its look-back in seconds (how far into the past each frame sums the vessels' forcing)."""

    origin_x_m: float | None = None
    origin_y_m: float | None = None
    size_m: float | None = None
    resolution: int | None = None
    lookback_s: float = 60.0


NO_WAKE = WakeSettings()


# -- reading -----------------------------------------------------------------------------------


def read_vessels(top: Section, time: Any, scene: Any = None) -> Any:
    """The top-level ``vessels`` list as a tuple of :class:`VesselSettings` (``()`` when absent)."""
    node = top.node("vessels")
    if node is None or node.value is None or node.value == []:
        return ()
    if not isinstance(node.value, list):
        return top.fail("vessels", f"expected a list of vessels, got {describe(node)}")
    vessels: list[Any] = []
    for index, item in enumerate(node.value):
        sec = Section(top.context, item, f"vessels.{index}", top.where)
        name = sec.text("name", f"vessel{index + 1}")
        length = sec.number("length_m", None, low=0.1, high=500.0)
        beam = sec.number("beam_m", None, low=0.05, high=100.0)
        draft = sec.number("draft_m", None, low=0.0, high=30.0)
        for key, value in (("length_m", length), ("beam_m", beam), ("draft_m", draft)):
            if valid(value) and value is None:
                sec.fail(key, "needs a value in metres (the hull's waterline length, beam and draft)")
        if valid(name) and not name.replace("_", "").replace("-", "").isalnum():
            name = sec.fail("name", f"`{name}` is not a name (allowed: letters, digits, _ and -)")
        elif valid(name) and name in [v.name for v in vessels if valid(v)]:
            name = sec.fail("name", f"`{name}` names two vessels (allowed: a name of its own for each vessel)")
        course_node = sec.node("course")
        if course_node is None or course_node.value is None:
            course = sec.fail("", "needs a course (keys, a file or a usd_file with its prim)")
        else:
            course = read_course(Section(top.context, course_node, f"vessels.{index}.course", sec.where), time,
                                 scene)
        if valid(length, beam) and length is not None and beam is not None and beam > length:
            beam = sec.fail("beam_m", f"`{beam:g}` is wider than the hull is long ({length:g} m)")
        if not valid(name, length, beam, draft, course) or None in (length, beam, draft):
            vessels.append(BAD)
            continue
        vessels.append(VesselSettings(name, length, beam, draft, course))
    return tuple(vessels) if valid(*vessels) else BAD


def read_wake(sec: Section) -> Any:
    """The ``wake`` section as :class:`WakeSettings`."""
    origin_x = sec.number("origin_x_m", None, low=-1.0e6, high=1.0e6, optional=True)
    origin_y = sec.number("origin_y_m", None, low=-1.0e6, high=1.0e6, optional=True)
    size = sec.number("size_m", None, low=1.0, high=_MAX_REGION_M, optional=True)
    resolution = sec.number("resolution", None, low=16, high=8192, whole=True, optional=True)
    lookback = sec.number("lookback_s", NO_WAKE.lookback_s, low=0.0, high=3600.0, low_open=True)
    if valid(resolution) and resolution is not None and resolution % 2:
        resolution = sec.fail("resolution", f"`{resolution}` is odd (allowed: an even whole number, or null)")
    placed = [value is not None for value in (origin_x, origin_y, size)]
    if valid(origin_x, origin_y, size) and any(placed) and not all(placed):
        missing = ("origin_x_m", "origin_y_m", "size_m")[placed.index(False)]
        return sec.fail(missing, "needs a value: origin_x_m, origin_y_m and size_m place the region together "
                                 "(or set all three null to derive it from the courses)")
    if not valid(origin_x, origin_y, size, resolution, lookback):
        return BAD
    return WakeSettings(origin_x, origin_y, size, resolution, lookback)


def check_region(sec: Section, vessels: Any, wake: Any, time: Any, scene: Any = None) -> None:
    """An explicit region must hold every course over the frames and their look-back (what
    any frame depends on; a course may start far away before that): one line naming the
    key, row or sample where a vessel is outside."""
    if not valid(vessels, wake, time, scene) or not vessels or wake.size_m is None:
        return
    x0, y0, size = wake.origin_x_m, wake.origin_y_m, wake.size_m
    start, end = time.frame_time(time.first_frame) - wake.lookback_s, time.frame_time(time.last_frame)
    for index, vessel in enumerate(vessels):
        samples = course_samples(vessel.course, time, scene=scene, where=f"vessels.{index}.course")
        t, x, y, origins = _windowed(samples, start, end)
        outside = np.flatnonzero((x < x0) | (x > x0 + size) | (y < y0) | (y > y0 + size))
        if outside.size:
            i = int(outside[0])
            sec.fail("size_m", f"vessel `{vessel.name}` leaves the region at {origins[i]} (t {t[i]:.6g} s, "
                               f"x {x[i]:.6g} m, y {y[i]:.6g} m; the region spans x {x0:g} to {x0 + size:g} m, "
                               f"y {y0:g} to {y0 + size:g} m); allowed: a region holding every course from one "
                               f"look-back before the first frame ({start:g} s) to the last ({end:g} s), or "
                               f"origin_x_m, origin_y_m and size_m null to derive one")
            return


def _windowed(samples: CourseSamples, start: float, end: float):
    """(times, x, y, origins) of the samples within [start, end] and the course at both ends."""
    inside = np.flatnonzero((samples.times >= start) & (samples.times <= end))
    ends = np.array([start, end])
    t = np.concatenate([ends[:1], samples.times[inside], ends[1:]])
    x = np.interp(t, samples.times, samples.x)
    y = np.interp(t, samples.times, samples.y)
    named = ["the look-back's start" if start > samples.times[0] else samples.origins[0]]
    named += [samples.origins[i] for i in inside]
    named += ["the last frame" if end < samples.times[-1] else samples.origins[-1]]
    return t, x, y, named


# -- the wake in SI units ------------------------------------------------------------------------


def vessel_samples(preset) -> tuple[CourseSamples, ...]:
    """Each vessel's course sampled in SI units (built once per preset)."""
    cached = preset.__dict__.get("_vessel_samples")
    if cached is None:
        cached = tuple(course_samples(v.course, preset.time, scene=preset.scene, where=f"vessels.{i}.course")
                       for i, v in enumerate(preset.vessels))
        object.__setattr__(preset, "_vessel_samples", cached)  # frozen: a cache, not a field
    return cached


def vessel_speeds(samples: CourseSamples) -> np.ndarray:
    """Speed over ground in m/s on each piece between samples (piecewise-linear course)."""
    return np.hypot(np.diff(samples.x), np.diff(samples.y)) / np.diff(samples.times)


def _window(preset) -> tuple[float, float]:
    """From one look-back before the first frame to the last frame (s)."""
    time = preset.time
    return time.frame_time(time.first_frame) - preset.wake.lookback_s, time.frame_time(time.last_frame)


def wake_region(preset) -> tuple[float, float, float, int]:
    """(origin_x, origin_y, size in metres, resolution) of the preset's wake region, derived
    from the courses where the preset leaves it null (see the module notes)."""
    wake = preset.wake
    samples = vessel_samples(preset)
    start, end = _window(preset)
    xs, ys, trail, fastest = [], [], 0.0, 0.0
    for course in samples:
        _, px, py, _ = _windowed(course, start, end)
        xs.append(px)
        ys.append(py)
        speeds = vessel_speeds(course)
        live = (course.times[1:] > start) & (course.times[:-1] < end)  # pieces inside the window
        fastest = max(fastest, float(speeds[live].max()) if live.any() else 0.0)
        trail = max(trail, float(np.hypot(np.diff(px), np.diff(py)).sum()))
    gravity = preset.sea.gravity_mps2
    transverse = 2.0 * math.pi * fastest**2 / gravity
    longest = max(v.length_m for v in preset.vessels)
    shortest = min(v.length_m for v in preset.vessels)
    if wake.size_m is not None:
        x0, y0, size = wake.origin_x_m, wake.origin_y_m, wake.size_m
    else:
        x, y = np.concatenate(xs), np.concatenate(ys)
        margin = max(math.tan(KELVIN_HALF_ANGLE) * trail, 0.5 * transverse, _HULL_LENGTHS_OF_MARGIN * longest)
        size = min(_MAX_REGION_M, float(math.ceil(max(np.ptp(x), np.ptp(y)) + 2.0 * margin)))
        x0 = float(math.floor(0.5 * (x.min() + x.max()) - 0.5 * size))
        y0 = float(math.floor(0.5 * (y.min() + y.max()) - 0.5 * size))
    if wake.resolution is not None:
        resolution = wake.resolution
    else:
        spacing = shortest / _TEXELS_PER_HULL
        if transverse > 0:
            spacing = min(spacing, transverse / _TEXELS_PER_TRANSVERSE_WAVE)
        resolution = int(16 * math.ceil(size / spacing / 16))
        resolution = max(_MIN_RESOLUTION, min(_MAX_RESOLUTION, resolution))
    return x0, y0, size, resolution


def _hull_and_course(vessel: VesselSettings, samples: CourseSamples):
    from ..surface.wake import Course, Hull

    return (Hull(vessel.length_m, vessel.beam_m, vessel.draft_m),
            Course(samples.times, samples.x, samples.y, samples.heading))


def preset_wake(preset, *, fft_workers: int | None = None, velocity: bool | None = None):
    """The preset's :class:`~oceanfield.surface.wake.Wake` (its vessels on its region), or
    None for a preset without vessels."""
    if not preset.vessels:
        return None
    from ..surface.wake import Wake, WakeRegion

    x0, y0, size, resolution = wake_region(preset)
    vessels = [_hull_and_course(v, s) for v, s in zip(preset.vessels, vessel_samples(preset))]
    return Wake.for_sea(
        preset.sea_state(), vessels, WakeRegion(x0, y0, size, resolution),
        lookback=preset.wake.lookback_s,
        lateral_factor=preset.surface.lateral_factor,
        velocity=("velocity" in preset.maps) if velocity is None else velocity,
        fft_workers=fft_workers,
    )


def wake_notes(preset, wake=None) -> list[str]:
    """The wake's notes (``Wake.notes``: where linear theory or the set-up is doubtful),
    each vessel called by its name, and a looping sea's wake that does not loop."""
    wake = preset_wake(preset) if wake is None else wake
    notes = []
    for note in wake.notes():
        if "the course leaves the wake region" in note:
            continue  # the preset's own check (check_region) holds every course over the frames' window
        for index, vessel in sorted(enumerate(preset.vessels), reverse=True):  # vessel 10 before vessel 1
            note = note.replace(f"vessel {index}:", f"vessel `{vessel.name}`:")
        notes.append(f"wake: {note}")
    notes.extend(_coarse_region_notes(preset, wake.region))
    if preset.time.loop_period_s is not None:
        notes.append(f"wake: time.loop_period_s {preset.time.loop_period_s:g} s loops the sea, not the wake "
                     f"(a vessel's course does not repeat): the wake maps do not loop")
    return notes


def _coarse_region_notes(preset, region) -> list[str]:
    """A vessel whose deep-water transverse waves 2πU²/g (at its top speed over the frames'
    window) are shorter than two region texels: the region cannot carry its Kelvin waves
    (the sampling theorem's two samples a wavelength), whatever the wake's height."""
    notes = []
    start, end = _window(preset)
    spacing, size = region.spacing, region.size
    for vessel, samples in zip(preset.vessels, vessel_samples(preset)):
        transverse = 2.0 * math.pi * _top_speed(samples, start, end) ** 2 / preset.sea.gravity_mps2
        if 0.0 < transverse < 2.0 * spacing:
            needed = 2 * math.ceil(size / transverse)  # even, two texels a transverse wavelength
            notes.append(f"wake: vessel `{vessel.name}`: its {transverse:.3g} m transverse waves are shorter than "
                         f"two of the region's {spacing:.3g} m texels: the region cannot draw its Kelvin waves; "
                         f"allowed: a wake.resolution of at least {needed} for this {size:g} m region, or null "
                         f"to derive it")
    return notes


def _top_speed(samples: CourseSamples, start: float, end: float) -> float:
    """The fastest speed (m/s) of a course's pieces that overlap the window [start, end] s."""
    speeds = vessel_speeds(samples)
    live = (samples.times[1:] > start) & (samples.times[:-1] < end)
    return float(speeds[live].max()) if live.any() else 0.0


_KNOT_MPS = 1852.0 / 3600.0  # one knot: a nautical mile (1852 m, BIPM SI brochure table 8) an hour


def wake_report(preset) -> dict[str, Any]:
    """The figures ``oceanfield stats`` gives of the vessels and their wake, JSON-ready.

    Per vessel: hull, course span, top and mean speed over the render's window, the hull
    Froude number U/√(gL) and depth Froude number U/√(gh) at the top speed, the transverse
    wavelength 2πU²/g and the wake's half-angle (Kelvin's 19.47° in deep water, Havelock's
    in finite depth); the region (and whether it was derived); the notes.
    """
    from ..physics import wake as physics

    sea = preset.sea
    wake = preset_wake(preset)
    start, end = _window(preset)
    vessels = []
    for vessel, samples in zip(preset.vessels, vessel_samples(preset)):
        speeds = vessel_speeds(samples)
        pieces_start, pieces_end = samples.times[:-1], samples.times[1:]
        top = _top_speed(samples, start, end)
        span = np.clip(np.minimum(pieces_end, end) - np.maximum(pieces_start, start), 0.0, None)
        mean = float(np.sum(speeds * span) / np.sum(span)) if np.sum(span) > 0 else 0.0
        depth_froude = float(physics.depth_froude_number(top, sea.depth_m, gravity=sea.gravity_mps2))
        angle = physics.havelock_half_angle(depth_froude) if depth_froude > 0 else physics.kelvin_half_angle()
        vessels.append({
            "name": vessel.name,
            "length_m": vessel.length_m, "beam_m": vessel.beam_m, "draft_m": vessel.draft_m,
            "course_start_s": float(samples.times[0]), "course_end_s": float(samples.times[-1]),
            "top_speed_mps": top, "mean_speed_mps": mean, "top_speed_knots": top / _KNOT_MPS,
            "hull_froude": float(physics.hull_froude_number(top, vessel.length_m, gravity=sea.gravity_mps2)),
            "depth_froude": depth_froude if math.isfinite(sea.depth_m) else None,
            "transverse_wavelength_m": 2.0 * math.pi * top**2 / sea.gravity_mps2,
            "half_angle_deg": math.degrees(angle),
        })
    x0, y0, size, resolution = wake_region(preset)
    return {
        "vessels": vessels,
        "region": {"origin_x_m": x0, "origin_y_m": y0, "size_m": size, "resolution": resolution,
                   "texel_m": size / resolution, "derived": preset.wake.size_m is None,
                   "lookback_s": preset.wake.lookback_s, "lattice_size": getattr(wake, "lattice_size", None)},
        "notes": wake_notes(preset, wake),
    }


def format_wake_report(report: dict[str, Any]) -> list[str]:
    """The wake's lines of ``oceanfield stats``."""
    lines = []
    for v in report["vessels"]:
        depth = "" if v["depth_froude"] is None else f", depth Froude {v['depth_froude']:.2f}"
        lines.append(
            f"vessel {v['name']}: {v['length_m']:g} × {v['beam_m']:g} m, draft {v['draft_m']:g} m; course "
            f"{v['course_start_s']:.4g} to {v['course_end_s']:.4g} s; top speed {v['top_speed_mps']:.3g} m/s "
            f"({v['top_speed_knots']:.3g} kn), mean {v['mean_speed_mps']:.3g} m/s; hull Froude "
            f"{v['hull_froude']:.2f}{depth}; transverse waves {v['transverse_wavelength_m']:.3g} m, wake "
            f"half-angle {v['half_angle_deg']:.2f}°")
    r = report["region"]
    how = "derived from the courses" if r["derived"] else "set by the preset"
    lines.append(f"wake region: {r['size_m']:g} m at {r['resolution']}² ({r['texel_m']:.3g} m texels) from "
                 f"x {r['origin_x_m']:g} m, y {r['origin_y_m']:g} m ({how}); look-back {r['lookback_s']:g} s")
    lines.extend(f"wake note: {note.removeprefix('wake: ')}" for note in report["notes"])
    return lines


# -- the render job's view ---------------------------------------------------------------------

#: File map names of the wake are the sea's with this prefix (``wake_displacement``, ...).
WAKE_PREFIX = "wake_"


def wake_map_names(preset, layers_map: str | None = None) -> list[tuple[str, str]]:
    """(file map name, map) of the wake's files of one frame: ``wake_<map>`` for each of the
    preset's maps, and ``wake_<layers_map>`` for a multi-layer file; none without vessels."""
    if not preset.vessels:
        return []
    names = [(f"{WAKE_PREFIX}{name}", name) for name in preset.maps]
    if layers_map is not None:
        names.append((f"{WAKE_PREFIX}{layers_map}", layers_map))
    return names


@dataclass(frozen=True)
class WakeFrame:
    """One frame of a sea with vessels: the sea's frame (Fields, or a band stack's) and the
    wake's Fields on its own region."""

    sea: Any
    wake: Any


class WakeRenderer:
    """What the render job asks of a synthesiser (``frame(t, buffer=)``, ``new_buffer()``),
    for a sea with vessels: the sea's synthesiser's frame and the wake's, both pure
    functions of t."""

    def __init__(self, preset, sea, *, fft_workers: int | None = None) -> None:
        self.sea = sea
        self.wake = preset_wake(preset, fft_workers=fft_workers)

    def new_buffer(self):
        return self.sea.new_buffer()

    def frame(self, t: float, *, buffer=None) -> WakeFrame:
        return WakeFrame(self.sea.frame(t, buffer=buffer), self.wake.frame(t))
