"""What the water sees of a moving body: its hull, its course, the region its wake is drawn on.

Knows nothing of presets or files: plain dataclasses of numbers (SI, internal axes: x along
image columns, y along rows), checked at construction, and the course's reduction to
pieces of constant velocity that `surface.wake` integrates over.

A `Course` is piecewise linear in time between its samples; outside its first and last
sample the body rests there. ``merge`` reduces it once to the fewest straight pieces that
stay within a tolerance of every sample (greedy: each run grows by doubling, then bisects
for the longest that fits) and whose given headings turn by under `MERGE_HEADING`;
``pieces`` cuts the look-back window [t − T, t] of a frame out of them, newest first.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["Hull", "Course", "WakeRegion", "MERGE_HEADING"]

#: Largest heading change inside one merged piece, radians (2°).
MERGE_HEADING = math.radians(2.0)


@dataclass(frozen=True)
class Hull:
    """A hull seen by the water: waterline length, beam and draft in metres.

    The pressure patch has e-scales L√C_B × B√C_B and peak pressure ρ g·draft, so it
    holds the displaced volume C_B·L·B·draft (``physics.wake.BLOCK_COEFFICIENT``); the
    wake's amplitude is proportional to the draft.
    """

    length: float
    beam: float
    draft: float

    def __post_init__(self) -> None:
        for name, low_open in (("length", True), ("beam", True), ("draft", False)):
            value = getattr(self, name)
            ok = isinstance(value, (int, float, np.floating, np.integer)) and not isinstance(value, bool)
            if not ok or not math.isfinite(value) or (value <= 0 if low_open else value < 0):
                allowed = "> 0" if low_open else ">= 0"
                raise ValueError(f"hull {name}: {value!r} is not allowed; allowed: a finite number of metres {allowed}")
            object.__setattr__(self, name, float(value))


@dataclass(frozen=True, eq=False)
class Course:
    """Where a body is: positions at strictly increasing times, linear in between.

    Outside [times[0], times[-1]] the body rests at the first or last position.
    ``heading`` (radians, counter-clockwise from +x) per sample, or None: along the
    velocity (kept from the nearest moving piece where the body rests).
    """

    times: NDArray[np.float64]
    x: NDArray[np.float64]
    y: NDArray[np.float64]
    heading: NDArray[np.float64] | None = None

    def __post_init__(self) -> None:
        arrays = {}
        for name in ("times", "x", "y", "heading"):
            value = getattr(self, name)
            if value is None and name == "heading":
                continue
            try:
                arr = np.array(value, dtype=np.float64).ravel()
            except (TypeError, ValueError):
                raise ValueError(f"course {name}: {value!r} is not allowed; allowed: a sequence of numbers") from None
            arrays[name] = arr
        n = arrays["times"].size
        if n < 2:
            raise ValueError(f"course times: {n} sample(s) is not allowed; allowed: at least 2")
        for name, arr in arrays.items():
            if arr.size != n:
                raise ValueError(f"course {name}: {arr.size} values is not allowed; allowed: one per time ({n})")
            bad = np.flatnonzero(~np.isfinite(arr))
            if bad.size:
                raise ValueError(f"course row {int(bad[0])}: {name} = {float(arr[bad[0]])!r} is not allowed; allowed: a finite number")
        step = np.diff(arrays["times"])
        bad = np.flatnonzero(step <= 0)
        if bad.size:
            row = int(bad[0]) + 1
            raise ValueError(
                f"course row {row}: time {float(arrays['times'][row])!r} does not follow {float(arrays['times'][row - 1])!r}; "
                "allowed: strictly increasing times")
        for name, arr in arrays.items():
            arr.setflags(write=False)
            object.__setattr__(self, name, arr)

    def _interval(self, t: NDArray[np.float64]) -> NDArray[np.int64]:
        return np.clip(np.searchsorted(self.times, t, side="right") - 1, 0, self.times.size - 2)

    def position(self, t: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """(x, y) in metres at time(s) t, clamped to the first and last samples."""
        t = np.asarray(t, dtype=np.float64)
        return np.interp(t, self.times, self.x), np.interp(t, self.times, self.y)

    def velocity(self, t: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """(vx, vy) in m/s at time(s) t: the sample interval's constant velocity, 0 outside."""
        t = np.asarray(t, dtype=np.float64)
        i = self._interval(t)
        dt = self.times[i + 1] - self.times[i]
        inside = (t >= self.times[0]) & (t < self.times[-1])
        return (np.where(inside, (self.x[i + 1] - self.x[i]) / dt, 0.0),
                np.where(inside, (self.y[i + 1] - self.y[i]) / dt, 0.0))

    def heading_at(self, t: ArrayLike) -> NDArray[np.float64]:
        """Heading in radians at time(s) t (given, interpolated; or along the velocity)."""
        t = np.asarray(t, dtype=np.float64)
        if self.heading is not None:
            return np.interp(t, self.times, np.unwrap(self.heading))
        moving = _interval_headings(self.times, self.x, self.y)
        return moving[self._interval(t)]


def _interval_headings(times, x, y) -> NDArray[np.float64]:
    """Heading of each sample interval along its velocity; resting ones take the nearest moving one's."""
    dx, dy = np.diff(x), np.diff(y)
    moving = np.hypot(dx, dy) > 0
    heading = np.arctan2(dy, dx)
    if not moving.any():
        return np.zeros(dx.size)
    idx = np.flatnonzero(moving)
    nearest = idx[np.clip(np.searchsorted(idx, np.arange(dx.size)), 0, idx.size - 1)]
    before = idx[np.clip(np.searchsorted(idx, np.arange(dx.size), side="right") - 1, 0, idx.size - 1)]
    pick = np.where(np.abs(before - np.arange(dx.size)) <= np.abs(nearest - np.arange(dx.size)), before, nearest)
    return np.where(moving, heading, heading[pick])


@dataclass(frozen=True)
class WakeRegion:
    """A square, non-periodic region: texel (iy, ix) at (origin_x + ix·s, origin_y + iy·s), s = size/resolution."""

    origin_x: float
    origin_y: float
    size: float
    resolution: int

    def __post_init__(self) -> None:
        for name in ("origin_x", "origin_y", "size"):
            value = getattr(self, name)
            if isinstance(value, bool) or not isinstance(value, (int, float, np.floating, np.integer)) or not math.isfinite(value):
                raise ValueError(f"wake region {name}: {value!r} is not allowed; allowed: a finite number of metres")
            object.__setattr__(self, name, float(value))
        if self.size <= 0:
            raise ValueError(f"wake region size: {self.size!r} is not allowed; allowed: > 0 metres")
        n = self.resolution
        if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or n < 16 or n % 2:
            raise ValueError(f"wake region resolution: {n!r} is not allowed; allowed: an even integer >= 16")
        object.__setattr__(self, "resolution", int(n))

    @property
    def spacing(self) -> float:
        """Texel spacing s in metres."""
        return self.size / self.resolution


@dataclass(frozen=True)
class Path:
    """A course reduced to pieces of constant velocity: node times, positions, piece velocities and headings."""

    times: NDArray[np.float64]
    x: NDArray[np.float64]
    y: NDArray[np.float64]
    vx: NDArray[np.float64]
    vy: NDArray[np.float64]
    heading: NDArray[np.float64]   # per piece


def merge(course: Course, tolerance: float) -> Path:
    """Greedy merge of course samples into straight constant-velocity pieces within ``tolerance`` metres."""
    t, x, y = course.times, course.x, course.y
    head = (np.unwrap(course.heading) if course.heading is not None
            else None)
    n = t.size
    keep = [0]
    i = 0

    def fits(i: int, j: int) -> bool:
        if j - i < 2:
            return True
        f = (t[i + 1:j] - t[i]) / (t[j] - t[i])
        ex = x[i] + f * (x[j] - x[i]) - x[i + 1:j]
        ey = y[i] + f * (y[j] - y[i]) - y[i + 1:j]
        if np.max(ex * ex + ey * ey) > tolerance * tolerance:
            return False
        if head is not None and np.max(np.abs(head[i:j + 1] - head[i])) > MERGE_HEADING:
            return False
        return True

    while i < n - 1:
        # grow the run by doubling, then bisect for the longest run that fits
        step = 1
        good = i + 1
        while good + step <= n - 1 and fits(i, good + step):
            good += step
            step *= 2
        low, high = good, min(good + step, n - 1)
        while high - low > 1:
            mid = (low + high) // 2
            if fits(i, mid):
                low = mid
            else:
                high = mid
        i = low if low > i else i + 1
        keep.append(i)
    k = np.array(keep)
    tt, xx, yy = t[k], x[k], y[k]
    dt = np.diff(tt)
    vx, vy = np.diff(xx) / dt, np.diff(yy) / dt
    if head is not None:
        heading = np.interp(0.5 * (tt[1:] + tt[:-1]), t, head)
    else:
        heading = _interval_headings(tt, xx, yy)
    return Path(tt, xx, yy, vx, vy, heading)


def pieces(path: Path, t: float, lookback: float):
    """Pieces of ``path`` inside [t − lookback, t], newest first: (τa, τb, x_b, y_b, vx, vy, heading)."""
    start = t - lookback
    nodes = path.times
    out = []
    tb = t
    # the rest after the last node and before the first are pieces of zero velocity
    while tb > start:
        if tb > nodes[-1]:
            ta = max(nodes[-1], start)
            out.append((ta, tb, path.x[-1], path.y[-1], 0.0, 0.0, path.heading[-1]))
        elif tb <= nodes[0]:
            out.append((start, tb, path.x[0], path.y[0], 0.0, 0.0, path.heading[0]))
            break
        else:
            i = int(np.searchsorted(nodes, tb, side="left")) - 1
            ta = max(nodes[i], start)
            vx, vy = path.vx[i], path.vy[i]
            xb = path.x[i] + vx * (tb - nodes[i])
            yb = path.y[i] + vy * (tb - nodes[i])
            out.append((ta, tb, xb, yb, vx, vy, path.heading[i]))
        tb = out[-1][0]
    return [p for p in out if p[1] > p[0]]
