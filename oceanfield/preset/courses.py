"""A moving body's course in a preset: keyframes, a CSV table, or a prim of a USD layout.

Knows nothing of rendering. A course is written in a vessel's ``course`` mapping in one of
three ways (exactly one)::

    course:
      interpolation: smooth          # smooth | linear (default smooth for keys, linear for files)
      keys:                          # keyframes: time_s or frame, x_m, y_m, heading_deg optional
        - {time_s: 0.0, x_m: -150, y_m: -20}
        - {frame: 1048, x_m: 40, y_m: 35, heading_deg: 30}
      file: chase_boat.csv           # or: a CSV table of frame (or time_s), x_m, y_m[, heading_deg]
      usd_file: layout.usda          # or: the animated translate of a prim in a USD layout
      prim: /Layout/ChaseBoat        #   (its metersPerUnit and upAxis; the preset's scene where unset)
      sha256: null                   # optional pin for file or usd_file: the file must have this digest

Positions are tile metres (x along the tile's +x, y along +y); headings degrees
counter-clockwise from +x, like ``towards_deg``; without them the body heads along its
velocity. A ``frame`` is at the preset's time of that frame. Files are relative to the
YAML that names them and are hashed into the render hash by their contents (as wave
records are, see ``record``), not by their path.

``smooth`` passes a cubic through the keys in time whose velocity at each key is the
Catmull–Rom finite difference (p[i+1] − p[i−1]) / (t[i+1] − t[i−1]) (one-sided at the
ends; Catmull & Rom 1974, with Hermite segments on non-uniform times); it is sampled at
the frame rate into the piecewise-linear :class:`~oceanfield.surface.wake.Course`. A
body is at rest at its first position before its first key and at its last after the
last. Every mistake is one line naming the key (file:line) or the table's row.
"""

from __future__ import annotations

import hashlib
import math
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import NDArray

from ._yamltree import BAD, Section, describe, valid

__all__ = ["INTERPOLATIONS", "CourseError", "CourseKey", "CourseSettings", "CourseSamples", "read_course", "course_samples"]

INTERPOLATIONS = ("smooth", "linear")
_COURSE_FIELD_M = 1.0e6  # positions within a million metres of the tile's origin
_CSV_SUFFIXES = (".csv", ".txt")
_USD_SUFFIXES = (".usda", ".usd", ".usdc")


@dataclass(frozen=True)
class CourseKey:
    """One keyframe as written: ``time_s`` or ``frame`` (the other None), position, heading."""

    time_s: float | None
    frame: float | None
    x_m: float
    y_m: float
    heading_deg: float | None = None


@dataclass(frozen=True)
class CourseSettings:
    """A course as written: its keys, or a CSV ``file``, or a ``usd_file`` and ``prim``.

    Files are absolute paths; ``sha256`` is the digest of the file's contents when the
    preset was loaded (the render hash carries it instead of the path).
    """

    interpolation: str
    keys: tuple[CourseKey, ...] = ()
    file: str | None = None
    usd_file: str | None = None
    prim: str | None = None
    sha256: str | None = None


@dataclass(frozen=True)
class CourseSamples:
    """A course in SI units: times (s, increasing), positions (m), headings (rad) or None."""

    times: NDArray[np.float64]
    x: NDArray[np.float64]
    y: NDArray[np.float64]
    heading: NDArray[np.float64] | None
    #: where each sample came from, for messages (``file:line`` or a key's path)
    origins: tuple[str, ...]


class CourseError(ValueError):
    """A keyframe at fault: ``key`` its index, ``name`` the key (``time_s`` or ``frame``)."""

    def __init__(self, message: str, *, key: int, name: str) -> None:
        super().__init__(message)
        self.key, self.name = key, name


# -- reading the section -------------------------------------------------------------------


def read_course(sec: Section, time: Any, scene: Any = None) -> Any:
    """The ``course`` mapping of a vessel as :class:`CourseSettings`, or ``BAD``.

    ``time`` is the preset's :class:`~oceanfield.preset.settings.TimeSettings` (frames
    become times), or ``BAD`` when it did not read (then frame keys are not checked);
    ``scene`` its ``SceneSettings`` (a USD layout's units and axes where it has none).
    """
    keys_node, file_node, usd_node = sec.node("keys"), sec.node("file"), sec.node("usd_file")
    prim = sec.text("prim", "") or None
    given = [name for name, node in (("keys", keys_node), ("file", file_node), ("usd_file", usd_node))
             if node is not None and node.value not in (None, [])]
    default = "smooth" if given == ["keys"] else "linear"
    interpolation = sec.choice("interpolation", default, INTERPOLATIONS)
    if len(given) != 1:
        problem = ("needs one of: keys (a list of keyframes), file (a CSV table) or usd_file with prim"
                   if not given else f"is given twice ({' and '.join(given)}); keep one")
        return sec.fail(given[-1] if len(given) > 1 else "", problem)
    if prim is not None and given != ["usd_file"]:
        return sec.fail("prim", "applies to a usd_file course only (set prim: null)")
    if not valid(interpolation, prim):
        return BAD
    if given == ["keys"]:
        keys = _read_keys(sec, keys_node)
        if not valid(keys):
            return BAD
        settings = CourseSettings(interpolation, keys=keys)
    else:
        key = given[0]
        node = file_node if key == "file" else usd_node
        suffixes = _CSV_SUFFIXES if key == "file" else _USD_SUFFIXES
        path = _located_file(sec, key, node, suffixes)
        if not valid(path):
            return BAD
        if key == "usd_file" and prim is None:
            return sec.fail("prim", "needs the prim whose translate the course follows (e.g. /Layout/Boat)")
        digest = _file_digest(path)
        pinned = sec.text("sha256", "") or None
        if valid(pinned) and pinned is not None and pinned.lower() != digest:
            return sec.fail("sha256", f"{path} has changed since the preset was written (its sha256 is {digest}); "
                                      f"set sha256: null to take the file as it is now")
        settings = CourseSettings(interpolation, file=str(path) if key == "file" else None,
                                  usd_file=str(path) if key == "usd_file" else None, prim=prim, sha256=digest)
    if valid(time):
        try:
            course_samples(settings, time, scene=scene if valid(scene) else None, where=sec.path)
        except CourseError as error:  # at the key's own line
            item = keys_node.value[error.key]
            return _fail_at(sec, item, f"{sec.path}.keys.{error.key}", error.name, str(error).split(": ", 1)[1])
        except ValueError as error:  # the file's line or the prim: at the course's file key
            return sec.fail(given[0], str(error))
    return settings


def _read_keys(sec: Section, node) -> Any:
    if not isinstance(node.value, list):
        return sec.fail("keys", f"expected a list of keyframes, got {describe(node)}")
    if len(node.value) < 2:
        return sec.fail("keys", f"has {len(node.value)} keyframe(s) (allowed: two or more: a course must go somewhere)")
    keys = []
    for index, item in enumerate(node.value):
        key = Section(sec.context, item, f"{sec.path}.keys.{index}", sec.where)
        time_s = key.number("time_s", None, low=-1.0e9, high=1.0e9, optional=True)
        frame = key.number("frame", None, low=-1.0e9, high=1.0e9, optional=True)
        x = key.number("x_m", None, low=-_COURSE_FIELD_M, high=_COURSE_FIELD_M)
        y = key.number("y_m", None, low=-_COURSE_FIELD_M, high=_COURSE_FIELD_M)
        heading = key.number("heading_deg", None, low=-100_000.0, high=100_000.0, optional=True)
        if valid(x) and x is None:
            x = key.fail("x_m", "needs the key's x position in metres")
        if valid(y) and y is None:
            y = key.fail("y_m", "needs the key's y position in metres")
        if valid(time_s, frame) and (time_s is None) == (frame is None):
            problem = "gives both time_s and frame; keep one" if time_s is not None else "needs time_s or frame"
            time_s = key.fail("frame" if frame is not None else "", problem)
        if not valid(time_s, frame, x, y, heading):
            return BAD
        keys.append(CourseKey(time_s, frame, x, y, heading))
    with_heading = [k.heading_deg is not None for k in keys]
    if any(with_heading) and not all(with_heading):
        index = with_heading.index(False)
        return _fail_at(sec, node.value[index], f"{sec.path}.keys.{index}", "",
                        "has no heading_deg while other keys have one (allowed: every key with a heading, or none)")
    return tuple(keys)


def _fail_at(sec: Section, item, path: str, key: str, problem: str) -> Any:
    """Report ``problem`` at ``key`` of a keyframe already read (no second section: its keys
    were asked by the first)."""
    node = item.value.get(key) if key and isinstance(item.value, dict) else None
    where = (node or item).where
    sec.context.errors.append(f"{where}: {path}{'.' + key if key else ''}: {problem}")
    return BAD


def _located_file(sec: Section, key: str, node, suffixes: tuple[str, ...]) -> Any:
    if not isinstance(node.value, str) or not node.value.strip():
        return sec.fail(key, f"expected a file name, got {describe(node)}")
    path = Path(node.value.strip()).expanduser()
    if not path.is_absolute():
        base = Path.cwd() if node.where.startswith("--set") else Path(node.where.rsplit(":", 1)[0]).resolve().parent
        path = base / path
    path = path.resolve()
    if path.suffix.lower() not in suffixes:
        return sec.fail(key, f"`{node.value}`: unknown kind of file (allowed suffixes: {', '.join(suffixes)})")
    if not path.is_file():
        return sec.fail(key, f"`{node.value}`: no such file ({path})")
    return path


def _file_digest(path: Path) -> str:
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


# -- the course in SI units ------------------------------------------------------------------


def course_samples(course: CourseSettings, time, *, scene=None, where: str = "course") -> CourseSamples:
    """The course sampled into times and positions (SI units, radians), ready for a ``Course``.

    ``time`` is the preset's :class:`~oceanfield.preset.settings.TimeSettings`; ``scene``
    its ``SceneSettings``, whose metres per unit and up axis stand for a USD layout's where
    the layout does not author them (None: metres, Y up). Smooth courses are sampled at
    the frame rate between their first and last keys.

    Raises
    ------
    ValueError
        One line naming the key (``where``.keys.N), the file's line or the prim: a time not
        after the one before, a value that is not finite, fewer than two samples, a file
        changed since the preset was loaded.
    """
    if course.keys:
        # frame → time exactly as TimeSettings.frame_time does, for fractional frames too
        times = np.array([k.time_s if k.time_s is not None else
                          time.time_offset_s + (k.frame - time.first_frame) / time.fps for k in course.keys])
        x = np.array([k.x_m for k in course.keys], dtype=np.float64)
        y = np.array([k.y_m for k in course.keys], dtype=np.float64)
        heading = (np.radians([k.heading_deg for k in course.keys]) if course.keys[0].heading_deg is not None
                   else None)
        origins = tuple(f"{where}.keys.{i}" for i in range(len(course.keys)))
        for i in range(1, times.size):
            if not times[i] > times[i - 1]:
                which = "time_s" if course.keys[i].time_s is not None else "frame"
                written = course.keys[i].time_s if which == "time_s" else course.keys[i].frame
                raise CourseError(
                    f"{origins[i]}.{which}: `{written:g}` is at {times[i]:g} s, not after the key before it "
                    f"({times[i - 1]:g} s) (allowed: keys in strictly increasing time)", key=i, name=which)
    else:
        if _file_digest(Path(course.file or course.usd_file)) != course.sha256:
            raise ValueError(f"{course.file or course.usd_file}: the course file changed after the preset was "
                             f"loaded; load the preset again")
        if course.file is not None:
            times, x, y, heading, origins = _table_course(Path(course.file), time)
        else:
            times, x, y, heading, origins = _usd_course(Path(course.usd_file), course.prim, time, scene)
    if course.interpolation == "smooth":
        times, x, y, heading, origins = _smooth(times, x, y, heading, origins, time.fps)
    return CourseSamples(times, x, y, heading, origins)


def _table_course(path: Path, time):
    from ..io.errors import CorruptFileError
    from ..io.records import read_table

    try:
        table = read_table(path)
    except CorruptFileError as error:
        raise ValueError(str(error)) from None
    except OSError as error:
        raise ValueError(f"cannot read '{path}': {error.strerror or error}") from None
    columns = table.columns
    clocks = [name for name in ("frame", "time_s") if name in columns]
    if len(clocks) != 1:
        problem = "both frame and time_s; keep one" if clocks else "no frame or time_s column"
        raise ValueError(f"{table.where(None)}: {problem} (a course table has frame or time_s, x_m, y_m "
                         f"and optionally heading_deg; columns: {', '.join(columns)})")
    for name in ("x_m", "y_m"):
        if name not in columns:
            raise ValueError(f"{table.where(None)}: no column `{name}` (columns: {', '.join(columns)}); a course "
                             f"table needs frame or time_s, x_m and y_m")
    known = {"frame", "time_s", "x_m", "y_m", "heading_deg"}
    unknown = [name for name in columns if name not in known]
    if unknown:
        raise ValueError(f"{table.where(None)}: unknown column `{unknown[0]}` (allowed: frame or time_s, x_m, "
                         f"y_m, heading_deg)")
    clock = columns[clocks[0]]
    for name in columns:
        bad = np.flatnonzero(~np.isfinite(columns[name]))
        if bad.size:
            raise ValueError(f"{table.where(int(bad[0]))}: column `{name}`: `{columns[name][bad[0]]}` is not a "
                             f"finite number (allowed: finite numbers)")
    if clock.size < 2:
        raise ValueError(f"{table.where(0)}: the table has {clock.size} row (allowed: two or more)")
    times = clock if clocks[0] == "time_s" else time.time_offset_s + (clock - time.first_frame) / time.fps
    for i in range(1, times.size):
        if not times[i] > times[i - 1]:
            raise ValueError(f"{table.where(i)}: column `{clocks[0]}`: `{clock[i]:g}` is not after the row "
                             f"before ({clock[i - 1]:g}) (allowed: strictly increasing)")
    for name in ("x_m", "y_m"):
        far = np.flatnonzero(np.abs(columns[name]) > _COURSE_FIELD_M)
        if far.size:
            raise ValueError(f"{table.where(int(far[0]))}: column `{name}`: `{columns[name][far[0]]:g}` is out "
                             f"of range (allowed: -{_COURSE_FIELD_M:g} to {_COURSE_FIELD_M:g})")
    heading = np.radians(columns["heading_deg"]) if "heading_deg" in columns else None
    origins = tuple(table.where(i) for i in range(times.size))
    return np.asarray(times, dtype=np.float64), columns["x_m"], columns["y_m"], heading, origins


def _usd_course(path: Path, prim: str, time, scene):
    from ..io.usd import read_prim_track

    track = read_prim_track(path, prim)  # ValueError: one line (usd-core missing, no prim, ...)
    up = track.up_axis or (scene.up_axis if scene is not None else "y")
    metres = track.metres_per_unit or (scene.metres_per_unit if scene is not None else 1.0)
    if up == "z":
        x, y = track.points[:, 0], track.points[:, 1]
    else:  # Y-up: scene (X, Y, Z) = (x, z, -y), so x = X and y = -Z (surface.maps.scene_axes)
        x, y = track.points[:, 0], -track.points[:, 2]
    x, y = x * metres, y * metres
    if not np.all(np.isfinite(track.points)):
        bad = int(np.flatnonzero(~np.all(np.isfinite(track.points), axis=1))[0])
        raise ValueError(f"{path}: `{prim}` at time code {track.codes[bad]:g}: the translate is not finite")
    # time code c at time_offset + (c - first_frame) / timeCodesPerSecond: frame_time(c) when the rates agree
    times = time.time_offset_s + (track.codes - time.first_frame) / track.codes_per_second
    origins = tuple(f"{path}: `{prim}` at time code {code:g}" for code in track.codes)
    return times, x, y, None, origins


def _smooth(times, x, y, heading, origins, fps: float):
    """Hermite cubics through the samples with Catmull–Rom velocities, sampled at ``fps``."""
    if times.size < 3:
        return times, x, y, heading, origins
    from scipy.interpolate import CubicHermiteSpline

    def tangents(values):
        slope = np.empty_like(values)
        slope[1:-1] = (values[2:] - values[:-2]) / (times[2:] - times[:-2])
        slope[0] = (values[1] - values[0]) / (times[1] - times[0])
        slope[-1] = (values[-1] - values[-2]) / (times[-1] - times[-2])
        return slope

    count = int(math.ceil((times[-1] - times[0]) * fps)) + 1
    dense = np.linspace(times[0], times[-1], max(count, times.size))
    sample = [CubicHermiteSpline(times, v, tangents(v))(dense) for v in (x, y)]
    turned = None
    if heading is not None:
        unwrapped = np.unwrap(heading)
        turned = CubicHermiteSpline(times, unwrapped, tangents(unwrapped))(dense)
    # each dense sample is named after the keys (or rows) it lies between
    segment = np.clip(np.searchsorted(times, dense, side="right") - 1, 0, times.size - 2)
    named = tuple(f"between {origins[s]} and {origins[s + 1]}" for s in segment)
    return dense, sample[0], sample[1], turned, named
