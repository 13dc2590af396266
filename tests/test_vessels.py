"""Tests for oceanfield.preset.vessels: the vessels and wake sections, the region, the report."""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path

import numpy as np
import pytest
import yaml

from oceanfield.cli import main
from oceanfield.physics.constants import GRAVITY
from oceanfield.preset import PresetError, dump_preset, load_preset, preset_hash, preset_warnings
from oceanfield.preset.vessels import KELVIN_HALF_ANGLE, vessel_samples, wake_region

#: A launch running straight along +x at 8 m/s for 20 s (160 m), on a small moderate_breeze tile.
STRAIGHT = {
    "tile": {"resolution": 32},
    "time": {"first_frame": 1001, "last_frame": 1004},
    "vessels": [{"name": "launch", "length_m": 10.0, "beam_m": 3.0, "draft_m": 0.5,
                 "course": {"keys": [{"time_s": -18.0, "x_m": 0.0, "y_m": 0.0},
                                     {"time_s": 2.0, "x_m": 160.0, "y_m": 0.0}]}}],
    "wake": {"lookback_s": 20.0},
}


def test_a_derived_region_holds_the_trail_and_its_kelvin_wedge(preset_file):
    """The region is the course's box widened by tan(19.47°) × the trail (Kelvin 1887), or half
    a transverse wavelength 2πU²/g, or four hull lengths, whichever is most."""
    preset = load_preset(preset_file("straight", settings=STRAIGHT))
    x0, y0, size, resolution = wake_region(preset)
    # from one look-back before the first frame (at rest at x = 0 until -18 s) to the last
    # frame (3/24 s): the launch has come 8 m/s × 18.125 s = 145 m
    trail = 8.0 * (18.0 + 3.0 / 24.0)
    margin = max(math.tan(KELVIN_HALF_ANGLE) * trail, 0.5 * 2 * math.pi * 8.0**2 / GRAVITY, 4 * 10.0)
    assert margin == pytest.approx(trail / (2 * math.sqrt(2)), rel=1e-12)  # tan(asin(1/3)) = 1/(2√2)
    assert size == math.ceil(trail + 2 * margin)
    assert x0 <= 0.0 - margin + 1 and x0 + size >= trail + margin - 1
    assert y0 <= -margin + 1 and y0 + size >= margin - 1
    # texels: a quarter hull (2.5 m) and a twentieth of 2πU²/g = 41 m (2.05 m): 2.05 m wins
    assert size / resolution <= 2.0 * math.pi * 64.0 / GRAVITY / 20.0 + 1e-9
    assert resolution % 16 == 0


def test_an_explicit_region_must_hold_every_course(preset_file, capsys):
    path = preset_file("out", settings={**STRAIGHT, "wake": {"origin_x_m": -10, "origin_y_m": -50, "size_m": 100}})
    with pytest.raises(PresetError) as caught:
        load_preset(path)
    assert len(caught.value.messages) == 1
    message = caught.value.messages[0]
    assert "wake.size_m: vessel `launch` leaves the region at the last frame (t 0.125 s, x 145 m" in message
    assert "x -10 to 90 m" in message
    assert main(["render", str(path), "--out", "unused"]) == 2
    assert len(capsys.readouterr().err.strip().splitlines()) == 1


@pytest.mark.parametrize("wake, fragment", [
    ({"origin_x_m": 0.0}, "wake.origin_y_m: needs a value: origin_x_m, origin_y_m and size_m place the region together"),
    ({"resolution": 63}, "wake.resolution: `63` is odd"),
    ({"lookback_s": 0}, "wake.lookback_s: `0` is out of range"),
])
def test_bad_wake_keys_are_one_line_each(preset_file, wake, fragment):
    with pytest.raises(PresetError) as caught:
        load_preset(preset_file("bad", settings={**STRAIGHT, "wake": wake}))
    assert len(caught.value.messages) == 1 and fragment in caught.value.messages[0]


def test_vessel_keys_are_checked(preset_file):
    vessel = {**STRAIGHT["vessels"][0], "beam_m": 12.0, "name": "two words"}
    with pytest.raises(PresetError) as caught:
        load_preset(preset_file("bad", settings={**STRAIGHT, "vessels": [vessel]}))
    text = "\n".join(caught.value.messages)
    assert "vessels.0.beam_m: `12` is wider than the hull is long (10 m)" in text
    assert "vessels.0.name: `two words` is not a name" in text


def test_resolve_writes_the_vessels_and_loads_back_equal(preset_file, tmp_path):
    preset = load_preset(preset_file("straight", settings=STRAIGHT))
    text = dump_preset(preset)
    tree = yaml.safe_load(text)
    assert tree["vessels"][0]["course"] == {"interpolation": "smooth", "keys": [
        {"time_s": -18.0, "x_m": 0.0, "y_m": 0.0}, {"time_s": 2.0, "x_m": 160.0, "y_m": 0.0}]}
    assert tree["wake"]["lookback_s"] == 20.0 and tree["wake"]["size_m"] is None
    again = tmp_path / "again.yaml"
    again.write_text(text, encoding="utf-8")
    reloaded = load_preset(again)
    assert reloaded == preset
    assert preset_hash(reloaded) == preset_hash(preset)
    # every key written is documented in the reference (its vessels are a commented example)
    documented = (Path(__file__).resolve().parent.parent / "presets" / "reference.yaml").read_text(encoding="utf-8")
    for key in ("name", "length_m", "beam_m", "draft_m", "course", "interpolation", "keys", "time_s", "frame",
                "x_m", "y_m", "heading_deg", "file", "usd_file", "prim", "sha256",
                "origin_x_m", "origin_y_m", "size_m", "resolution", "lookback_s"):
        assert f"{key}:" in documented, key


def test_the_hash_changes_with_the_course(preset_file):
    first = load_preset(preset_file("a", settings=STRAIGHT))
    moved = {**STRAIGHT, "vessels": [{**STRAIGHT["vessels"][0], "draft_m": 0.6}]}
    assert preset_hash(load_preset(preset_file("b", settings=moved))) != preset_hash(first)


def test_the_wake_notes_are_warnings_naming_the_vessel(preset_file):
    """A 10 m launch at 8 m/s: hull Froude number 8/√(9.80665·10) = 0.81, past the linear range."""
    warnings = preset_warnings(load_preset(preset_file("straight", settings=STRAIGHT)))
    froude = [w for w in warnings if "hull Froude" in w]
    assert len(froude) == 1 and froude[0].startswith("wake: vessel `launch`:")


def test_stats_reports_speeds_froude_numbers_and_the_region(preset_file, capsys):
    path = preset_file("straight", settings={**STRAIGHT, "sea": {"depth_m": 20.0}})
    assert main(["stats", str(path), "--json"]) == 0
    report = json.loads(capsys.readouterr().out)["wake"]
    launch = report["vessels"][0]
    assert launch["top_speed_mps"] == pytest.approx(8.0, rel=1e-9)
    assert launch["top_speed_knots"] == pytest.approx(8.0 * 3600 / 1852, rel=1e-9)  # 1 kn = 1852 m/h
    assert launch["hull_froude"] == pytest.approx(8.0 / math.sqrt(GRAVITY * 10.0), rel=1e-9)
    assert launch["depth_froude"] == pytest.approx(8.0 / math.sqrt(GRAVITY * 20.0), rel=1e-9)
    assert launch["transverse_wavelength_m"] == pytest.approx(2 * math.pi * 64.0 / GRAVITY, rel=1e-9)
    assert launch["half_angle_deg"] > 19.47  # finite depth widens the wedge (Havelock 1908)
    assert report["region"]["derived"] is True and report["region"]["lookback_s"] == 20.0
    assert main(["stats", str(path)]) == 0
    text = capsys.readouterr().out
    assert "vessel launch: 10 × 3 m, draft 0.5 m" in text and "wake region:" in text


def test_the_preview_draws_the_wake_region(preset_file, tmp_path):
    from oceanfield.preset.preview import preview_figure

    figure = preview_figure(load_preset(preset_file("straight", settings=STRAIGHT)))
    titles = [axes.get_title() for axes in figure.axes]
    assert "sea + wake height\nover the wake region" in titles
    assert any(title.startswith("the wake alone") for title in titles)
    import matplotlib.pyplot as plt

    plt.close(figure)


def test_a_usd_course_without_usd_core_is_one_line(preset_file, tmp_path, monkeypatch):
    (tmp_path / "layout.usda").write_text("#usda 1.0\n", encoding="utf-8")
    vessel = {**STRAIGHT["vessels"][0], "course": {"usd_file": "layout.usda", "prim": "/Boat"}}
    path = preset_file("usd", settings={**STRAIGHT, "vessels": [vessel]})
    monkeypatch.setitem(sys.modules, "pxr", None)  # as if usd-core were not installed
    with pytest.raises(PresetError) as caught:
        load_preset(path)
    assert len(caught.value.messages) == 1
    assert "pip install 'oceanfield[usd]'" in caught.value.messages[0]
    assert "vessels.0.course.usd_file:" in caught.value.messages[0]


def test_samples_of_a_straight_course_are_its_two_keys(preset_file):
    samples = vessel_samples(load_preset(preset_file("straight", settings=STRAIGHT)))[0]
    np.testing.assert_array_equal(samples.times, [-18.0, 2.0])  # two keys: smooth is the line itself


def test_a_wake_section_without_vessels_is_refused(preset_file):
    """A key with no effect is an error (DEVELOPERS.md), not silently ignored."""
    with pytest.raises(PresetError) as caught:
        load_preset(preset_file("bare", settings={"tile": {"resolution": 32}, "wake": {"lookback_s": 10}}))
    assert len(caught.value.messages) == 1 and "wake: has no effect: the preset has no vessels" in caught.value.messages[0]


def test_the_readme_example_loads(tmp_path):
    """The YAML under README's "Boats and their wakes" is a preset that loads as written."""
    import re

    text = (Path(__file__).resolve().parent.parent / "README.md").read_text(encoding="utf-8")
    section = text[text.index("### Boats and their wakes"):]
    block = re.search(r"```yaml\n(.*?)```", section, re.S).group(1)
    path = tmp_path / "example.yaml"
    path.write_text(block, encoding="utf-8")
    preset = load_preset(path)
    assert [v.name for v in preset.vessels] == ["lead"] and preset.wake.lookback_s == 60.0


def test_a_region_too_coarse_for_a_vessels_waves_is_warned_about(preset_file):
    """A slow launch (1.5 m/s: transverse waves 2πU²/g = 1.44 m) on a region of 6.25 m texels:
    its Kelvin waves are shorter than two texels and cannot be drawn; one warning names the
    vessel, both lengths and the resolution that would carry them. The derived region does not
    warn."""
    slow = {**STRAIGHT["vessels"][0], "course": {"keys": [{"time_s": -18.0, "x_m": 0.0, "y_m": 0.0},
                                                           {"time_s": 2.0, "x_m": 30.0, "y_m": 0.0}]}}
    coarse = {**STRAIGHT, "vessels": [slow],
              "wake": {"lookback_s": 20.0, "origin_x_m": -50.0, "origin_y_m": -100.0, "size_m": 200.0,
                       "resolution": 32}}
    warnings = [w for w in preset_warnings(load_preset(preset_file("coarse", settings=coarse)))
                if "transverse" in w and "texels" in w]
    assert len(warnings) == 1
    assert warnings[0].startswith("wake: vessel `launch`: its 1.44 m transverse waves are shorter than two of "
                                  "the region's 6.25 m texels")
    assert "wake.resolution of at least 278" in warnings[0]
    derived = {**coarse, "wake": {"lookback_s": 20.0}}
    assert not [w for w in preset_warnings(load_preset(preset_file("derived", settings=derived)))
                if "shorter than two of the region's" in w]


def test_a_name_given_to_two_vessels_is_one_line_saying_what_is_allowed(preset_file):
    twice = {**STRAIGHT, "vessels": [STRAIGHT["vessels"][0], {**STRAIGHT["vessels"][0], "draft_m": 0.4}]}
    with pytest.raises(PresetError) as caught:
        load_preset(preset_file("twice", settings=twice))
    assert len(caught.value.messages) == 1
    assert caught.value.messages[0].endswith(
        "vessels.1.name: `launch` names two vessels (allowed: a name of its own for each vessel)")
