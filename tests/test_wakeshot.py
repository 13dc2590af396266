"""Probes, floating bodies and the USD scene of a preset with vessels (render.wakeshot)."""

from __future__ import annotations

import csv
import io
import math

import numpy as np
import pytest

from oceanfield.cli import main
from oceanfield.preset import load_preset
from oceanfield.preset.vessels import preset_wake
from oceanfield.surface.riding import ride, standing_course
from oceanfield.surface.bodies import Body
from oceanfield.surface.synth import Ocean

from test_render_wake import BOAT

#: A second boat on a parallel course 12 m to port of the first, so each rides the other's wake.
TWO_BOATS = {**BOAT, "vessels": [BOAT["vessels"][0], {
    "name": "chaser", "length_m": 5.0, "beam_m": 1.8, "draft_m": 0.3,
    "course": {"interpolation": "linear",
               "keys": [{"time_s": -8.0, "x_m": -30.0, "y_m": 2.0}, {"time_s": 2.0, "x_m": 20.0, "y_m": 14.0}]},
}]}


def _table(capsys) -> list[dict[str, str]]:
    return list(csv.DictReader(io.StringIO(capsys.readouterr().out)))


def test_a_probe_reads_the_sea_plus_the_wake(preset_file, capsys):
    boat = preset_file("boat", settings=BOAT)
    bare = preset_file("bare", settings={**BOAT, "vessels": [], "wake": {}})
    at = ["--at", "behind=-5,-3", "--frames", "1002-1003"]
    assert main(["probe", str(boat), *at]) == 0
    with_wake = _table(capsys)
    assert main(["probe", str(bare), *at]) == 0
    sea = _table(capsys)
    preset = load_preset(boat)
    wake = preset_wake(preset, velocity=False)
    for row, plain in zip(with_wake, sea):
        t = float(row["time_s"])
        rest = float(plain["rest_x_m"]), float(plain["rest_y_m"])  # the sea's rest point under the probe
        added = wake.surface_at(rest[0], rest[1], t).displacement[2]
        # height adds (metres; both read at the sea's rest point, surface.wake.combine)
        assert float(row["height_m"]) == pytest.approx(float(plain["height_m"]) + added, abs=1e-9)
    assert any(abs(float(a["height_m"]) - float(b["height_m"])) > 1e-4 for a, b in zip(with_wake, sea))


def test_vessels_float_on_their_courses_riding_the_others_wakes(preset_file, capsys):
    path = preset_file("two", settings=TWO_BOATS)
    assert main(["float", str(path), "--frames", "1001-1003"]) == 0
    rows = _table(capsys)
    assert [r["body"] for r in rows[:2]] == ["tender", "chaser"]
    preset = load_preset(path)
    wake = preset_wake(preset, velocity=False)
    for row in rows:
        index = [v.name for v in preset.vessels].index(row["body"])
        course = wake.vessels[index][1]
        t = float(row["time_s"])
        x, y = course.position(np.array([t]))
        # Y-up scene (metres): X = x, Z = -y (surface.maps.scene_axes)
        assert float(row["position_X_m"]) == pytest.approx(float(x[0]), abs=1e-9)
        assert float(row["position_Z_m"]) == pytest.approx(-float(y[0]), abs=1e-9)
        heading = math.degrees(float(course.heading_at(np.array([t]))[0]))
        assert float(row["heading_deg"]) == pytest.approx((heading + 180) % 360 - 180, abs=1e-9)
    # each rides the sea plus the other's wake, not its own
    ocean = Ocean.from_preset(preset, velocity=False, foam_memory=0.0)
    times = np.array([preset.time.frame_time(f) for f in (1001, 1002, 1003)])
    hull, course = wake.vessels[1]
    chaser = Body(0.0, 0.0, hull.length, hull.beam, name="chaser")
    spacing = ocean.tile.spacing
    own_excluded = ride(ocean.modes(), chaser, times, spacing=spacing, course=course, wake=wake, exclude=1)
    heave = [float(r["heave_m"]) for r in rows if r["body"] == "chaser"]
    np.testing.assert_allclose(heave, own_excluded.heave, atol=1e-12)
    sea_only = ride(ocean.modes(), chaser, times, spacing=spacing, course=course)
    assert np.max(np.abs(own_excluded.heave - sea_only.heave)) > 1e-5  # the tender's wake reaches it


def test_one_vessel_alone_rides_the_sea_as_if_it_made_no_wake(preset_file):
    """Its own wake is left out: with one vessel, its motion is the sea's alone, exactly."""
    preset = load_preset(preset_file("boat", settings=BOAT))
    wake = preset_wake(preset, velocity=False)
    ocean = Ocean.from_preset(preset, velocity=False, foam_memory=0.0)
    hull, course = wake.vessels[0]
    body = Body(0.0, 0.0, hull.length, hull.beam)
    times = np.array([0.0, 0.5])
    alone = ride(ocean.modes(), body, times, spacing=ocean.tile.spacing, course=course, wake=wake, exclude=0)
    sea = ride(ocean.modes(), body, times, spacing=ocean.tile.spacing, course=course)
    np.testing.assert_allclose(alone.heave, sea.heave, atol=1e-12)
    np.testing.assert_allclose(alone.pitch, sea.pitch, atol=1e-12)


def test_a_standing_body_rides_as_body_motion_does_without_a_wake(preset_file):
    """ride() on a course that stays put is body_motion's plane, to rounding."""
    from oceanfield.surface.bodies import body_motion

    preset = load_preset(preset_file("boat", settings=BOAT))
    ocean = Ocean.from_preset(preset, velocity=False, foam_memory=0.0)
    body = Body(3.0, -4.0, 4.0, 2.0, heading=0.7)
    times = np.array([0.0, 0.3, 0.9])
    fixed = body_motion(ocean.modes(), body, times, spacing=ocean.tile.spacing)
    riding = ride(ocean.modes(), body, times, spacing=ocean.tile.spacing, course=standing_course(body, 0.0, 1.0))
    np.testing.assert_allclose(riding.heave, fixed.heave, atol=1e-12)
    np.testing.assert_allclose(riding.rotation, fixed.rotation, atol=1e-12)
    np.testing.assert_allclose(riding.position, fixed.position, atol=1e-12)


def test_float_refuses_a_body_named_like_a_vessel(preset_file, capsys):
    path = preset_file("boat", settings=BOAT)
    assert main(["float", str(path), "--body", "name=tender,x_m=0,y_m=0,length_m=2,beam_m=1"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "'tender' is used twice" in err[0]


def test_the_scene_has_the_vessels_and_a_wake_patch_wired_to_the_wake_maps(tmp_path, preset_file, capsys):
    pytest.importorskip("pxr")
    from pxr import Usd, UsdGeom, UsdShade

    path = preset_file("boat", settings=BOAT)
    out = tmp_path / "shot.usda"
    assert main(["scene", str(path), "--out", str(out), "--maps", str(tmp_path / "maps"), "--frames", "1001-1002"]) == 0
    stage = Usd.Stage.Open(str(out))
    boat = stage.GetPrimAtPath("/Shot/Bodies/tender")
    assert boat.IsValid() and len(UsdGeom.Xformable(boat).GetTimeSamples()) == 2
    patch = UsdGeom.Mesh(stage.GetPrimAtPath("/Shot/Wake"))
    points = np.array(patch.GetPointsAttr().Get(1001))
    preset = load_preset(path)
    # the patch spans the wake region: X from -48 to 48 - one texel, Z = -y from 40 down
    assert points[:, 0].min() == pytest.approx(-48.0, abs=1.0) and points[:, 0].max() == pytest.approx(46.5, abs=1.0)
    assert -points[:, 2].min() == pytest.approx(preset.wake.origin_y_m + 96.0 - 1.5, abs=1.0)
    material = UsdShade.MaterialBindingAPI(patch.GetPrim()).ComputeBoundMaterial()[0]
    assert material.GetPath() == "/Shot/Looks/WakeMaterial"
    texture = UsdShade.Shader(stage.GetPrimAtPath("/Shot/Looks/WakeMaterial/FoamTexture"))
    assert texture.GetInput("file").Get(1002).path.endswith("boat/wake_foam.1002.exr")
    assert texture.GetInput("wrapS").Get() == "clamp"
    assert "wake patch" in capsys.readouterr().err


def test_outside_the_region_there_is_no_wake(preset_file):
    """The wake's sums run on a padded periodic lattice: beyond the region they would read a
    periodic image of the wake. Probes and bodies see what the maps hold: nothing there."""
    wake = preset_wake(load_preset(preset_file("boat", settings=BOAT)), velocity=False)
    period = wake.region.spacing * wake.lattice_size
    inside = wake.surface_at(-5.0, -3.0, 0.5)
    assert abs(float(inside.displacement[2])) > 1e-3  # the wake is there, 5 m behind the hull's track
    ghost = wake.surface_at(np.array([-5.0 + period, -5.0]), np.array([-3.0, -3.0]), 0.5)
    np.testing.assert_array_equal(ghost.displacement[0], [0.0, 0.0, 0.0])
    np.testing.assert_array_equal(ghost.normal[0], [0.0, 0.0, 1.0])
    assert ghost.jacobian[0] == 1.0 and ghost.rise_rate[0] == 0.0
    np.testing.assert_array_equal(ghost.displacement[1], inside.displacement)  # inside: untouched
