"""Hulls, courses and wake regions (surface/course.py): interpolation, validation naming
the row, the reduction of a course to constant-velocity pieces."""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield.physics.wake import patch_lengths
from oceanfield.surface.course import Course, Hull, WakeRegion
from oceanfield.surface.wake import MERGE_TOLERANCE, Wake


def _turning_course(speed: float = 3.0, fps: float = 24.0, duration: float = 30.0) -> Course:
    t = np.arange(0.0, duration, 1.0 / fps)
    phase = speed * t / 20.0
    return Course(times=t, x=32 + 20 * np.cos(phase), y=32 + 16 * np.sin(phase))


def test_a_per_frame_straight_course_merges_into_one_piece():
    t = np.arange(0, 20, 1 / 24)
    course = Course(times=t, x=3.0 * t, y=1.0 + 0.5 * t)
    wake = Wake([(Hull(8, 3, 0.4), course)], WakeRegion(-10, -10, 100, 64), lookback=10.0)
    pieces = wake._piece_arrays(15.0)
    assert pieces[0].size == 1 and pieces[4][0] == pytest.approx(3.0) and pieces[5][0] == pytest.approx(0.5)


def test_merged_pieces_stay_within_the_tolerance_of_the_samples():
    course = _turning_course()
    wake = Wake([(Hull(6.0, 2.0, 0.3), course)], WakeRegion(0, 0, 64, 64))
    path = wake._paths[0]
    assert path.times.size < course.times.size / 10
    x = np.interp(course.times, path.times, path.x)
    y = np.interp(course.times, path.times, path.y)
    assert np.hypot(x - course.x, y - course.y).max() <= MERGE_TOLERANCE * patch_lengths(6.0, 2.0)[1] + 1e-12


def test_course_interpolates_clamps_and_heads_along_its_velocity():
    course = Course(times=[0.0, 10.0, 20.0], x=[0.0, 10.0, 10.0], y=[0.0, 0.0, 20.0])
    x, y = course.position([-5.0, 5.0, 15.0, 30.0])
    assert x == pytest.approx([0, 5, 10, 10]) and y == pytest.approx([0, 0, 10, 20])
    vx, vy = course.velocity([-5.0, 5.0, 15.0, 30.0])
    assert vx == pytest.approx([0, 1, 0, 0]) and vy == pytest.approx([0, 0, 2, 0])
    assert course.heading_at([5.0, 15.0, 30.0]) == pytest.approx([0.0, 0.5 * math.pi, 0.5 * math.pi])
    given = Course(times=[0.0, 1.0], x=[0.0, 1.0], y=[0.0, 0.0], heading=[0.1, 0.3])
    assert given.heading_at(0.5) == pytest.approx(0.2)


@pytest.mark.parametrize("times, x, message", [
    ([0.0, 1.0, 1.0], [0, 1, 2], r"course row 2: time 1\.0 does not follow 1\.0"),
    ([0.0, 2.0, 1.0], [0, 1, 2], r"course row 2: time 1\.0 does not follow 2\.0"),
    ([0.0, 1.0, 2.0], [0, float("nan"), 2], r"course row 1: x = nan"),
    ([0.0], [0], r"course times: 1 sample"),
    ([0.0, 1.0], [0, 1, 2], r"course x: 3 values"),
])
def test_bad_courses_name_the_row(times, x, message):
    with pytest.raises(ValueError, match=message):
        Course(times=times, x=x, y=np.zeros(len(x)))


def test_a_turning_heading_on_a_straight_run_splits_the_pieces():
    """A crabbing body: the given heading turns 20° while the track stays straight."""
    t = np.arange(0, 10, 1 / 24)
    course = Course(times=t, x=2.0 * t, y=np.zeros_like(t), heading=np.radians(2.0 * t))
    wake = Wake([(Hull(8, 3, 0.4), course)], WakeRegion(-10, -10, 100, 64), lookback=10.0)
    assert 10 <= wake._paths[0].times.size - 1 <= 12   # one piece per 2° of turn
