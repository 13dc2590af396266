"""Tests for oceanfield.preset.courses: keyframes, CSV tables and USD prims as courses."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

from oceanfield.cli import main
from oceanfield.preset import PresetError, load_preset, preset_hash
from oceanfield.preset.courses import course_samples
from oceanfield.preset.vessels import vessel_samples

_BOAT = """\
extends: moderate_breeze
tile: {{resolution: 32}}
time: {{fps: 24, first_frame: 1001, last_frame: 1004}}
vessels:
  - name: skiff
    length_m: 6
    beam_m: 2
    draft_m: 0.4
    course:
{course}
"""


def _preset(tmp_path: Path, course: str, files: dict[str, str] | None = None, name: str = "boat.yaml"):
    for file_name, text in (files or {}).items():
        (tmp_path / file_name).write_text(text, encoding="utf-8")
    path = tmp_path / name
    path.write_text(_BOAT.format(course=course), encoding="utf-8")
    return path


def _messages(path: Path) -> list[str]:
    with pytest.raises(PresetError) as caught:
        load_preset(path)
    return caught.value.messages


def test_linear_keys_are_the_course_with_frames_at_their_times(tmp_path):
    path = _preset(tmp_path, """\
      interpolation: linear
      keys:
        - {time_s: -2.0, x_m: -10, y_m: 0}
        - {frame: 1013, x_m: 5, y_m: 5, heading_deg: 90}
        - {time_s: 1.0, x_m: 10, y_m: 5, heading_deg: 0}
""".replace("- {time_s: -2.0, x_m: -10, y_m: 0}", "- {time_s: -2.0, x_m: -10, y_m: 0, heading_deg: 0}"))
    samples = vessel_samples(load_preset(path))[0]
    # frame 1013 at 24 fps from frame 1001 at 0 s: 12/24 = 0.5 s (TimeSettings.frame_time)
    np.testing.assert_array_equal(samples.times, [-2.0, 0.5, 1.0])
    np.testing.assert_array_equal(samples.x, [-10.0, 5.0, 10.0])
    np.testing.assert_allclose(samples.heading, [0.0, math.pi / 2, 0.0], atol=1e-15)


def test_smooth_keys_pass_through_every_key_with_catmull_rom_velocities(tmp_path):
    """Hermite cubics with velocities (p[i+1] - p[i-1]) / (t[i+1] - t[i-1]) (Catmull & Rom 1974):
    at a key the sampled course is the key; between keys its velocity is continuous."""
    path = _preset(tmp_path, """\
      keys:
        - {time_s: 0.0, x_m: 0, y_m: 0}
        - {time_s: 1.0, x_m: 10, y_m: 0}
        - {time_s: 2.0, x_m: 10, y_m: 10}
""")
    samples = vessel_samples(load_preset(path))[0]
    assert samples.times.size == 2 * 24 + 1  # one sample a frame
    np.testing.assert_allclose(samples.times[1] - samples.times[0], 1 / 24, rtol=1e-12)
    at_key = int(np.argmin(np.abs(samples.times - 1.0)))
    np.testing.assert_allclose([samples.x[at_key], samples.y[at_key]], [10.0, 0.0], atol=1e-12)
    # velocity at the middle key: ((10, 10) - (0, 0)) / 2 s = (5, 5) m/s, from both sides
    dt = samples.times[1] - samples.times[0]
    before = (samples.x[at_key] - samples.x[at_key - 1]) / dt, (samples.y[at_key] - samples.y[at_key - 1]) / dt
    after = (samples.x[at_key + 1] - samples.x[at_key]) / dt, (samples.y[at_key + 1] - samples.y[at_key]) / dt
    np.testing.assert_allclose(before, (5.0, 5.0), atol=0.5)  # one frame's chord: O(dt) from the tangent
    np.testing.assert_allclose(after, (5.0, 5.0), atol=0.5)


def test_smooth_keys_of_steady_motion_are_straight(tmp_path):
    """Equally spaced keys of one velocity: the Catmull-Rom cubic reproduces the line exactly."""
    path = _preset(tmp_path, """\
      keys:
        - {time_s: 0.0, x_m: 0, y_m: 0}
        - {time_s: 1.0, x_m: 8, y_m: 2}
        - {time_s: 2.0, x_m: 16, y_m: 4}
""")
    samples = vessel_samples(load_preset(path))[0]
    np.testing.assert_allclose(samples.x, 8.0 * samples.times, atol=1e-12)
    np.testing.assert_allclose(samples.y, 2.0 * samples.times, atol=1e-12)


@pytest.mark.parametrize("course, fragment, line", [
    ("""\
      keys:
        - {time_s: 0.0, x_m: 0, y_m: 0}
        - {time_s: 0.0, x_m: 1, y_m: 0}
""", "vessels.0.course.keys.1.time_s: `0` is at 0 s, not after the key before it", 12),
    ("""\
      keys:
        - {time_s: 0.0, x_m: 0, y_m: 0}
""", "vessels.0.course.keys: has 1 keyframe(s) (allowed: two or more", 11),
    ("""\
      keys:
        - {time_s: 0.0, x_m: .nan, y_m: 0}
        - {time_s: 1.0, x_m: 1, y_m: 0}
""", "vessels.0.course.keys.0.x_m: expected a finite number, got `.nan`", 11),
    ("""\
      keys:
        - {time_s: 0.0, frame: 1001, x_m: 0, y_m: 0}
        - {time_s: 1.0, x_m: 1, y_m: 0}
""", "vessels.0.course.keys.0.frame: gives both time_s and frame; keep one", 11),
    ("""\
      keys:
        - {time_s: 0.0, x_m: 0, y_m: 0, heading_deg: 10}
        - {time_s: 1.0, x_m: 1, y_m: 0}
""", "vessels.0.course.keys.1: has no heading_deg while other keys have one", 12),
], ids=["non-increasing", "one key", "nan", "time and frame", "heading on some"])
def test_a_bad_keyframe_is_one_line_naming_it(tmp_path, course, fragment, line):
    messages = _messages(_preset(tmp_path, course))
    assert len(messages) == 1
    assert fragment in messages[0]
    assert messages[0].startswith(f"{tmp_path / 'boat.yaml'}:{line}: ")


def test_a_csv_course_counts_by_its_contents_and_names_a_bad_row(tmp_path, capsys):
    table = "# chase boat, one row a frame\nframe,x_m,y_m\n1001,0,0\n1002,1,0\n1003,2,0.5\n"
    path = _preset(tmp_path, "      file: run.csv\n", {"run.csv": table})
    preset = load_preset(path)
    samples = vessel_samples(preset)[0]
    np.testing.assert_array_equal(samples.times, [0.0, 1 / 24, 2 / 24])
    np.testing.assert_array_equal(samples.y, [0.0, 0.0, 0.5])
    # moved elsewhere: the same hash; edited: another
    other = tmp_path / "elsewhere"
    other.mkdir()
    moved = _preset(other, "      file: run.csv\n", {"run.csv": table})
    assert preset_hash(load_preset(moved)) == preset_hash(preset)
    (other / "run.csv").write_text(table.replace("2,0.5", "2,0.6"), encoding="utf-8")
    assert preset_hash(load_preset(moved)) != preset_hash(preset)
    # a row out of order, named by its line; exit 2 from the command line, one line
    (tmp_path / "run.csv").write_text(table.replace("1003,", "1002,"), encoding="utf-8")
    assert main(["stats", str(path)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1
    assert f"vessels.0.course.file: {tmp_path / 'run.csv'}:5: column `frame`: `1002` is not after the row before" in err[0]
    (tmp_path / "run.csv").write_text(table.replace("1003,2,", "1003,nan,"), encoding="utf-8")
    assert f"{tmp_path / 'run.csv'}:5: column `x_m`: `nan` is not a finite number" in _messages(path)[0]


def test_a_usd_prims_animated_translate_is_a_course_in_tile_metres(tmp_path):
    """A Y-up layout in centimetres: scene (X, Y, Z) = (x, z, -y) / metres_per_unit (surface.maps)."""
    pytest.importorskip("pxr")
    from pxr import Gf, Usd, UsdGeom
    layout = tmp_path / "layout.usda"
    stage = Usd.Stage.CreateNew(str(layout))
    UsdGeom.SetStageUpAxis(stage, UsdGeom.Tokens.y)
    UsdGeom.SetStageMetersPerUnit(stage, 0.01)
    stage.SetTimeCodesPerSecond(24)
    root = UsdGeom.Xform.Define(stage, "/Layout")
    root.AddTranslateOp().Set(Gf.Vec3d(100.0, 0.0, 0.0))  # a parent offset of 1 m along x
    boat = UsdGeom.Xform.Define(stage, "/Layout/Boat")
    op = boat.AddTranslateOp()
    op.Set(Gf.Vec3d(0.0, 0.0, 0.0), 1001)
    op.Set(Gf.Vec3d(500.0, 0.0, -1000.0), 1025)
    stage.GetRootLayer().Save()
    path = _preset(tmp_path, "      usd_file: layout.usda\n      prim: /Layout/Boat\n")
    samples = vessel_samples(load_preset(path))[0]
    np.testing.assert_allclose(samples.times, [0.0, 1.0])
    np.testing.assert_allclose(samples.x, [1.0, 6.0])  # (100 + 500) cm
    np.testing.assert_allclose(samples.y, [0.0, 10.0])  # -Z: 1000 cm
    missing = _messages(_preset(tmp_path, "      usd_file: layout.usda\n      prim: /Layout/Barge\n", name="b.yaml"))
    assert len(missing) == 1 and "no prim at `/Layout/Barge`" in missing[0]


def test_course_samples_refuse_a_file_changed_after_loading(tmp_path):
    path = _preset(tmp_path, "      file: run.csv\n", {"run.csv": "frame,x_m,y_m\n1,0,0\n2,1,0\n"})
    preset = load_preset(path)
    (tmp_path / "run.csv").write_text("frame,x_m,y_m\n1,0,0\n2,2,0\n", encoding="utf-8")
    with pytest.raises(ValueError, match="changed after the preset was loaded"):
        course_samples(preset.vessels[0].course, preset.time)


def test_a_usd_layout_without_units_takes_the_scenes(tmp_path):
    """No metersPerUnit or upAxis in the layout: the preset's scene section says what they are."""
    pytest.importorskip("pxr")
    from pxr import Gf, Usd, UsdGeom

    layout = tmp_path / "bare.usda"
    stage = Usd.Stage.CreateNew(str(layout))
    stage.SetTimeCodesPerSecond(24)
    op = UsdGeom.Xform.Define(stage, "/Boat").AddTranslateOp()
    op.Set(Gf.Vec3d(0.0, 0.0, 0.0), 1001)
    op.Set(Gf.Vec3d(4.0, 2.0, 0.0), 1013)
    stage.GetRootLayer().Save()
    path = _preset(tmp_path, "      usd_file: bare.usda\n      prim: /Boat\n")
    text = path.read_text(encoding="utf-8") + "scene: {up_axis: z, metres_per_unit: 0.5}\n"
    path.write_text(text, encoding="utf-8")
    samples = vessel_samples(load_preset(path))[0]
    np.testing.assert_allclose(samples.times, [0.0, 0.5])
    np.testing.assert_allclose(samples.x, [0.0, 2.0])  # Z-up: (x, y) = (X, Y) × 0.5 m
    np.testing.assert_allclose(samples.y, [0.0, 1.0])
