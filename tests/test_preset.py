"""Tests for oceanfield.preset: reading, merging, overriding, validating and writing presets."""

from __future__ import annotations

import dataclasses
import math
import os
import re
import subprocess
import sys
import tempfile
from pathlib import Path

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from oceanfield.surface.maps import MAPS
from oceanfield.preset import (
    Preset,
    PresetError,
    dump_preset,
    list_presets,
    load_preset,
    preset_hash,
    preset_warnings,
    to_sea_state,
)
from oceanfield.physics.seastate import wind_sea

REPOSITORY = Path(__file__).resolve().parent.parent


def _write(folder: Path, files: dict[str, str]) -> Path:
    """Write ``files`` into ``folder``; return the path of the first."""
    for name, text in files.items():
        (folder / name).write_text(text, encoding="utf-8")
    return folder / next(iter(files))


def _problems(tmp_path: Path, text: str, *, overrides=(), extra=None, **options) -> list[str]:
    path = _write(tmp_path, {"bad.yaml": text, **(extra or {})})
    with pytest.raises(PresetError) as caught:
        load_preset(path, overrides=overrides, **options)
    return caught.value.messages


_ONE_WIND_SEA = "sea:\n  components:\n    - wind_speed_mps: 10\n"

def _case(name, text, fragment, where, *, overrides=(), extra=None):
    """One malformed preset: its text, the message fragment expected, and where.

    ``where`` is a line of bad.yaml, a "file:line" of another file, or None for an override.
    """
    return pytest.param(text, tuple(overrides), extra or {}, fragment, where, id=name)


MALFORMED = [
    _case("unknown key with suggestion",
          "sea:\n  components:\n    - wind_sped_mps: 10\n",
          "unknown key `wind_sped_mps` in sea.components.0 — did you mean `wind_speed_mps`?", 3),
    _case("unknown top-level key",
          "descripton: a sea\n",
          "did you mean `description`?", 1),
    _case("key in the wrong section",
          "resolution: 512\n",
          "`resolution` in the top level — it belongs in tile", 1),
    _case("wrong type: list for a number",
          "tile:\n  resolution: [512]\n",
          "tile.resolution: expected a whole number, got a list", 2),
    _case("negative depth",
          "sea:\n  depth_m: -5\n",
          "sea.depth_m: `-5` is out of range (allowed: deep, or 0.01 to 20000)", 2),
    _case("text where a number belongs",
          "sea:\n  components:\n    - wind_speed_mps: fast\n",
          "wind_speed_mps: expected a number, got the text 'fast'", 3),
    _case("YAML boolean where a number belongs",
          "seed: yes\n",
          "seed: expected a whole number, got `yes` (a boolean in YAML)", 1),
    _case("NaN where a finite number belongs",
          "tile:\n  size_m: .nan\n",
          "tile.size_m: expected a finite number, got `.nan`", 2),
    _case("infinity where a finite number belongs",
          "sea:\n  gravity_mps2: .inf\n",
          "sea.gravity_mps2: expected a finite number, got `.inf` (allowed: 0.1 to 100)", 2),
    _case("empty file",
          "",
          "the file is empty", 1),
    _case("comments only",
          "# nothing here\n",
          "the file is empty", 1),
    _case("list where the preset mapping belongs",
          "- tile\n- sea\n",
          "a preset is a mapping of keys, got a list", 1),
    _case("list where a section belongs",
          "seed: 1\ntile:\n  - 256\n",
          "tile: expected a mapping of keys, got a list", 3),
    _case("invalid YAML syntax",
          "tile:\n  size_m: 64\n   resolution: 128\n",
          "invalid YAML: mapping values are not allowed here", 3),
    _case("unclosed flow list",
          "seed: 1\nmaps: [height, normal\n",
          "invalid YAML", 3),
    _case("duplicate key",
          "seed: 1\nseed: 2\n",
          "key `seed` is given twice", 2),
    _case("unsafe tag on a list",
          "seed: 1\ntile: !!python/object/apply:os.system [echo hi]\n",
          "the tag tag:yaml.org,2002:python/object/apply:os.system is not allowed in a preset", 2),
    _case("unsafe tag on a value",
          "seed: !!python/name:os.system\n",
          "invalid YAML: could not determine a constructor for the tag", 1),
    _case("unreadable typed value",
          "seed: !!int twelve\n",
          "cannot read `twelve` as tag:yaml.org,2002:int", 1),
    _case("extends cycle",
          "extends: other.yaml\nseed: 1\n",
          "extends: the chain loops: bad.yaml → other.yaml → bad.yaml",
          "other.yaml:2", extra={"other.yaml": "seed: 2\nextends: bad.yaml\n"}),
    _case("missing extends file",
          "seed: 1\nextends: nowhere.yaml\n",
          "extends: no preset file `nowhere.yaml`", 2),
    _case("shipped preset named with .yaml",
          "seed: 1\nextends: long_swell.yaml\n",
          "extends: no preset file `long_swell.yaml` (looked for ", 2),
    _case("shipped preset named with .yaml, the advice",
          "seed: 1\nextends: long_swell.yaml\n",
          "long_swell.yaml); the shipped preset of that name is `long_swell`, without .yaml", 2),
    _case("missing shipped preset",
          "extends: long_swel\n",
          "no shipped preset named `long_swel` — did you mean `long_swell`?", 1),
    _case("extends a file that is not YAML",
          "extends: ./notes.txt\n",
          "`./notes.txt` is not a .yaml or .yml file", 1),
    _case("output folder escaping the root",
          "output:\n  folder: ../elsewhere\n",
          "output.folder: `../elsewhere` leaves the output root", 2),
    _case("absolute output folder",
          "output:\n  folder: /srv/renders/sea\n",
          "output.folder: `/srv/renders/sea` leaves the output root", 2),
    _case("escaping pattern",
          "output:\n  pattern: ../../{map}.####.{ext}\n",
          "output.pattern: `../../{map}.####.{ext}` leaves", 2),
    _case("two sizings at once",
          "sea:\n  components:\n    - wind_speed_mps: 12\n      beaufort: 6\n",
          "sea.components.0.beaufort: the component is sized twice (wind_speed_mps and beaufort); keep one",
          4),
    _case("no sizing",
          "sea:\n  components:\n    - label: nothing\n",
          "sea.components.0: size the component with one of", 3),
    _case("height without period",
          "sea:\n  components:\n    - significant_height_m: 2\n",
          "significant_height_m: needs peak_period_s too", 3),
    _case("empty component list",
          "sea:\n  components: []\n",
          "sea.components: expected a list of one or more components, got an empty list", 2),
    _case("fetch with height and period",
          "sea:\n  components:\n    - significant_height_m: 2\n      peak_period_s: 9\n      fetch_km: 50\n",
          "fetch_km: applies to a component sized by wind_speed_mps or beaufort", 5),
    _case("tma in deep water",
          "sea:\n  components:\n    - spectrum: tma\n      wind_speed_mps: 10\n",
          "spectrum: tma needs a finite sea.depth_m", 3),
    _case("phillips sized by height",
          "sea:\n  components:\n    - spectrum: phillips\n      significant_height_m: 1\n      peak_period_s: 6\n",
          "phillips is sized by the wind", 3),
    _case("misspelt spectrum",
          "sea:\n  components:\n    - spectrum: jonswop\n      wind_speed_mps: 8\n",
          "the text 'jonswop' is not allowed — did you mean `jonswap`?", 3),
    _case("spread with a wind-driven spreading",
          "sea:\n  components:\n    - wind_speed_mps: 8\n      spreading: mitsuyasu\n      spread_deg: 20\n",
          "spread_deg: applies to spreading cos2s only", 5),
    _case("peak enhancement on a fully developed sea",
          "sea:\n  components:\n    - wind_speed_mps: 8\n      peak_enhancement: 5\n",
          "peak_enhancement: has no effect here", 4),
    _case("cut-off that removes the peak",
          "sea:\n  components:\n    - wind_speed_mps: 10\n      small_wave_cutoff_m: 50\n",
          "small_wave_cutoff_m: `50` m removes over 99 % of the variance at this component's peak (wavelength 87.7 m)",
          4),
    _case("Beaufort force out of range",
          "sea:\n  components:\n    - beaufort: 13\n",
          "beaufort: `13` is out of range (allowed: a whole number, 1 to 12", 3),
    _case("bad map name",
          "maps: [height, nromal]\n",
          "maps.1: the text 'nromal' is not a map — did you mean `normal`?", 1),
    _case("map listed twice",
          "maps:\n  - height\n  - height\n",
          "maps.1: `height` is listed twice", 3),
    _case("bad up axis",
          "scene:\n  up_axis: x\n",
          "scene.up_axis: the text 'x' is not allowed (allowed: y, z)", 2),
    _case("odd resolution",
          "tile:\n  size_m: 100\n  resolution: 513\n",
          "tile.resolution: `513` is odd", 3),
    _case("resolution too small",
          "tile:\n  resolution: 8\n",
          "`8` is out of range (allowed: a whole number, 16 to 16384)", 2),
    _case("fps zero",
          "time:\n  fps: 0\n",
          "time.fps: `0` is out of range (allowed: above 0, up to 1000)", 2),
    _case("last frame before first",
          "time:\n  first_frame: 10\n  last_frame: 5\n",
          "time.last_frame: `5` is before first_frame 10", 3),
    _case("loop shorter than a frame",
          "time:\n  fps: 24\n  loop_period_s: 0.01\n",
          "time.loop_period_s: `0.01` s is not longer than one frame", 3),
    _case("pattern without frame number",
          'output:\n  pattern: "{map}.{ext}"\n',
          "needs exactly one run of # for the frame number (found 0)", 2),
    _case("pattern without map",
          "maps: [height, normal]\noutput:\n  pattern: frame.####.exr\n",
          "the 2 maps would overwrite each other", 3),
    _case("unknown placeholder",
          'output:\n  folder: "{shot}"\n',
          "`{shot}` is not a placeholder", 2),
    _case("multilayer png",
          "output:\n  format: png\n  multilayer: true\n",
          "output.multilayer: layered files are EXR only", 3),
    _case("precision of an unknown map",
          "output:\n  precision_per_map:\n    displacment: float\n",
          "unknown key `displacment` in output.precision_per_map — did you mean `displacement`?", 3),
    _case("patching a missing inherited item",
          "extends: base.yaml\nsea:\n  components:\n    3:\n      wind_speed_mps: 9\n",
          "sea.components.3: no item 3 to change; the inherited list has 1 item(s)",
          4, extra={"base.yaml": _ONE_WIND_SEA}),
    _case("override with a bad value",
          _ONE_WIND_SEA,
          "--set tile.resolution=abc: tile.resolution: expected a whole number, got the text 'abc'",
          None, overrides=("tile.resolution=abc",)),
    _case("override without =",
          _ONE_WIND_SEA,
          "--set tile.resolution: expected key=value", None, overrides=("tile.resolution",)),
    _case("override with invalid YAML",
          _ONE_WIND_SEA,
          "--set maps=[height: invalid YAML", None, overrides=("maps=[height",)),
    _case("override of text YAML cannot read, with the quoting that passes it",
          _ONE_WIND_SEA,
          """invalid YAML: expected '<document start>', but found '<scalar>'; if the value is text, quote it: """
          """--set 'output.pattern="{map}_####.{ext}"'""", None, overrides=("output.pattern={map}_####.{ext}",)),
    _case("override of an unknown key",
          _ONE_WIND_SEA,
          "--set tile.resolutoin=1024: unknown key `resolutoin` in tile — did you mean `resolution`?",
          None, overrides=("tile.resolutoin=1024",)),
    _case("override past the list",
          _ONE_WIND_SEA,
          "sea.components is a list of 1 item(s); `2` is not one of its numbers",
          None, overrides=("sea.components.2.wind_speed_mps=14",)),
    _case("override into a single value",
          _ONE_WIND_SEA,
          "--set sea.components.0.wind_speed_mps.max=3: sea.components.0.wind_speed_mps is a single value",
          None, overrides=("sea.components.0.wind_speed_mps.max=3",)),
    _case("override of extends",
          _ONE_WIND_SEA,
          "extends cannot be changed by an override", None, overrides=("extends=long_swell",)),
]


@pytest.mark.parametrize("text, overrides, extra, fragment, line", MALFORMED)
def test_malformed_preset_names_the_problem_and_its_line(tmp_path, text, overrides, extra, fragment, line):
    messages = _problems(tmp_path, text, overrides=overrides, extra=extra)
    matching = [m for m in messages if fragment in m]
    assert matching, f"no message contains {fragment!r}: {messages}"
    if line is None:
        assert matching[0].startswith(f"--set {overrides[0]}: ")
    else:
        place = line if isinstance(line, str) else f"bad.yaml:{line}"
        assert any(f"/{place}: " in m for m in matching), matching


def test_at_least_twenty_malformed_cases():
    assert len(MALFORMED) >= 20


def test_every_message_is_one_line_with_a_location(tmp_path):
    text = "sea:\n  depth_m: shallow\n  components:\n    - wind_speed_mps: -1\ntile: {size_m: 0}\n"
    messages = _problems(tmp_path, text, overrides=("seed=-4",))
    assert len(messages) == 4
    for message in messages:
        assert "\n" not in message
        assert re.match(r"^(--set seed=-4|.*bad\.yaml:\d+): ", message), message


def test_several_mistakes_are_reported_together(tmp_path):
    text = (
        "seed: 1\n"
        "tile:\n"
        "  size_m: -64\n"  # line 3
        "  resolution: 100\n"
        "time:\n"
        "  fps: zero\n"  # line 6
        "scene:\n"
        "  up_axsi: z\n"  # line 8
    )
    path = _write(tmp_path, {"bad.yaml": text})
    with pytest.raises(PresetError) as caught:
        load_preset(path, overrides=("maps=[heigth]",))
    error = caught.value
    assert len(error.messages) == 4
    assert "bad.yaml:3: tile.size_m" in error.messages[0]
    assert "bad.yaml:6: time.fps" in error.messages[1]
    assert "bad.yaml:8: unknown key `up_axsi` in scene — did you mean `up_axis`?" in error.messages[2]
    assert error.messages[3].startswith("--set maps=[heigth]: maps.0")
    text = str(error)
    assert text.startswith("4 problems in the preset:\n")
    assert isinstance(error, ValueError)


def test_a_single_problem_is_one_line(tmp_path):
    messages = _problems(tmp_path, "seed: -1\n")
    assert len(messages) == 1
    path = _write(tmp_path, {"bad.yaml": "seed: -1\n"})
    with pytest.raises(PresetError) as caught:
        load_preset(path)
    assert "\n" not in str(caught.value)


def test_missing_file_and_unknown_name(tmp_path):
    with pytest.raises(PresetError, match="no such preset file"):
        load_preset(tmp_path / "absent.yaml")
    with pytest.raises(PresetError, match="no shipped preset named `storm_force_tenn` — did you mean `storm_force_ten`"):
        load_preset("storm_force_tenn")
    # a shipped preset's name with .yaml added, in a folder without that file
    with pytest.raises(PresetError) as caught:
        load_preset(tmp_path / "fresh_chop.yaml")
    assert str(caught.value).endswith(
        "fresh_chop.yaml: no such preset file (the shipped preset of that name is `fresh_chop`, without .yaml)")


# -- random documents ----------------------------------------------------------------------

_KNOWN_KEYS = sorted(
    {
        "description", "extends", "seed", "sea", "tile", "surface", "maps", "time", "output", "scene",
        "depth_m", "gravity_mps2", "surface_tension_npm", "density_kgpm3", "components", "label", "spectrum",
        "wind_speed_mps", "fetch_km", "significant_height_m", "peak_period_s", "beaufort", "peak_enhancement",
        "towards_deg", "spreading", "spread_deg", "suppress_opposing", "small_wave_cutoff_m", "size_m",
        "resolution", "lateral_factor", "fold_threshold", "fps", "first_frame", "last_frame", "loop_period_s",
        "time_offset_s", "folder", "pattern", "format", "precision", "precision_per_map", "compression",
        "multilayer", "metres_per_unit", "up_axis", "bands", "reach_m", "shortest_wave_m", "max_resolution",
        "tiles", "composite_extent_m", "composite_resolution", *MAPS,
    }
)
_WORDS = ["deep", "jonswap", "tma", "phillips", "cos2s", "mitsuyasu", "exr", "png", "half", "y", "z",
          "{map}.####.{ext}", "../x", "/abs", "long_swell", "fresh_chop.yaml"]
_TEXT = st.text(st.characters(blacklist_categories=("Cs",)), max_size=10)
_SCALARS = st.one_of(
    st.none(), st.booleans(), st.integers(-(2**70), 2**70), st.floats(), _TEXT, st.sampled_from(_WORDS),
    st.integers(0, 2048), st.floats(0.0, 100.0),
)
_KEYS = st.one_of(st.sampled_from(_KNOWN_KEYS), _TEXT, st.integers(0, 3))
_VALUES = st.recursive(
    _SCALARS, lambda inner: st.lists(inner, max_size=4) | st.dictionaries(_KEYS, inner, max_size=5), max_leaves=30
)
_DOCUMENTS = st.one_of(st.dictionaries(_KEYS, _VALUES, max_size=8), _VALUES)


def _load_text(text: str):
    """Load ``text`` as a preset file; return the Preset or the PresetError, let anything else out."""
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "random.yaml"
        path.write_text(text, encoding="utf-8")
        try:
            return load_preset(path)
        except PresetError as error:
            return error


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_DOCUMENTS)
def test_random_documents_give_a_preset_or_a_preset_error(document):
    result = _load_text(yaml.safe_dump(document, allow_unicode=True))
    assert isinstance(result, (Preset, PresetError))
    if isinstance(result, PresetError):
        assert result.messages and all(isinstance(m, str) and m for m in result.messages)


@settings(max_examples=100, deadline=None)
@given(st.text(st.characters(blacklist_categories=("Cs",)), max_size=80))
def test_random_text_gives_a_preset_or_a_preset_error(text):
    assert isinstance(_load_text(text), (Preset, PresetError))


def _leaf_paths(tree, prefix=()):
    if isinstance(tree, dict):
        return [p for key, value in tree.items() for p in _leaf_paths(value, prefix + (key,))] or [prefix]
    if isinstance(tree, list):
        return [p for index, value in enumerate(tree) for p in _leaf_paths(value, prefix + (index,))] + [prefix]
    return [prefix]


_VALID_TREE = yaml.safe_load(dump_preset(load_preset("swell_under_wind_sea")))


@settings(max_examples=200, deadline=None)
@given(st.sampled_from(_leaf_paths(_VALID_TREE)), _SCALARS)
def test_one_changed_value_gives_a_preset_whose_sea_builds_or_a_preset_error(path, value):
    """Whatever one key is set to, the preset loads and converts cleanly, or says why not."""
    tree = yaml.safe_load(yaml.safe_dump(_VALID_TREE))
    node = tree
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value
    result = _load_text(yaml.safe_dump(tree, allow_unicode=True))
    assert isinstance(result, (Preset, PresetError))
    if isinstance(result, Preset):
        to_sea_state(result)  # a PresetError here would fail the test: validation must catch it first


def test_alias_bomb_is_refused(tmp_path):
    lines = ["a0: &a0 [x, x, x, x, x, x, x, x, x, x]"]
    lines += [f"a{i}: &a{i} [*a{i - 1}, *a{i - 1}, *a{i - 1}, *a{i - 1}, *a{i - 1}, *a{i - 1}, *a{i - 1}, *a{i - 1}]" for i in range(1, 9)]
    messages = _problems(tmp_path, "\n".join(lines) + "\n")
    assert any("too large or too deeply nested" in m for m in messages)


# -- round trip, hash ----------------------------------------------------------------------


@pytest.mark.parametrize("name", [name for name, _, _ in list_presets()])
def test_dump_then_load_gives_an_equal_preset(tmp_path, name):
    preset = load_preset(name)
    path = tmp_path / f"{name}.yaml"
    path.write_text(dump_preset(preset), encoding="utf-8")
    again = load_preset(path)
    assert again == preset
    assert preset_hash(again) == preset_hash(preset)
    assert "extends" not in yaml.safe_load(path.read_text(encoding="utf-8"))


def test_dump_writes_every_key_and_the_reference_documents_every_key():
    """Every key of a resolved preset appears in presets/reference.yaml, at the same level."""

    def keys(tree, prefix=""):
        found = set()
        if isinstance(tree, dict):
            for key, value in tree.items():
                found |= {f"{prefix}{key}"} | keys(value, f"{prefix}{key}.")
        elif isinstance(tree, list):
            for item in tree:
                found |= keys(item, f"{prefix}*.")
        return found

    dumped = keys(yaml.safe_load(dump_preset(load_preset("swell_under_wind_sea"))))
    documented = keys(yaml.safe_load((REPOSITORY / "presets" / "reference.yaml").read_text(encoding="utf-8")))
    assert dumped <= documented
    assert documented - dumped == {"extends"}


def test_reference_preset_shows_the_defaults(tmp_path):
    """reference.yaml writes out every default: it equals a preset that gives no keys at all."""
    reference = load_preset("reference")
    bare = load_preset(_write(tmp_path, {"bare.yaml": f"description: {reference.description!r}\n"}))
    assert bare == reference


def test_hash_ignores_description_and_name_but_not_the_seed(tmp_path):
    base = load_preset("moderate_breeze")
    renamed = dataclasses.replace(base, description="another line", name="other")
    reseeded = load_preset("moderate_breeze", overrides=("seed=5",))
    assert preset_hash(renamed) == preset_hash(base)
    assert preset_hash(reseeded) != preset_hash(base)
    assert len(preset_hash(base)) == 64


def test_hash_is_stable_across_processes():
    code = "from oceanfield.preset import load_preset, preset_hash; print(preset_hash(load_preset('storm_force_ten')))"
    seen = set()
    for seed in ("1", "2"):
        env = {**os.environ, "PYTHONHASHSEED": seed, "PYTHONPATH": str(REPOSITORY)}
        result = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True, check=True)
        seen.add(result.stdout.strip())
    assert seen == {preset_hash(load_preset("storm_force_ten"))}


# -- extends and overrides -----------------------------------------------------------------

_BASE = """\
description: base sea
seed: 1
sea:
  depth_m: 30
  surface_tension_npm: 0.07
  components:
    - label: swell
      significant_height_m: 2.0
      peak_period_s: 12.0
      towards_deg: 45
    - label: wind
      wind_speed_mps: 8
tile:
  size_m: 300
  resolution: 128
maps: [height, normal, foam]
"""


def test_extends_merges_mappings_and_replaces_lists(tmp_path):
    child = "extends: base.yaml\ntile:\n  resolution: 256\nsea:\n  density_kgpm3: 1000\nmaps: [normal]\n"
    preset = load_preset(_write(tmp_path, {"child.yaml": child, "base.yaml": _BASE}))
    assert preset.tile.resolution == 256
    assert preset.tile.size_m == 300.0  # kept from the base
    assert preset.sea.depth_m == 30.0 and preset.sea.surface_tension_npm == 0.07
    assert preset.sea.density_kgpm3 == 1000.0
    assert preset.maps == ("normal",)  # a list is replaced whole
    assert preset.description == "base sea" and preset.seed == 1
    assert [c.label for c in preset.sea.components] == ["swell", "wind"]
    assert preset.name == "child"


def test_extends_can_change_one_list_item(tmp_path):
    child = "extends: base.yaml\nsea:\n  components:\n    1:\n      wind_speed_mps: 14\n      fetch_km: 80\n"
    preset = load_preset(_write(tmp_path, {"child.yaml": child, "base.yaml": _BASE}))
    swell, wind = preset.sea.components
    assert (swell.significant_height_m, swell.towards_deg) == (2.0, 45.0)
    assert (wind.label, wind.wind_speed_mps, wind.fetch_km) == ("wind", 14.0, 80.0)


def test_extends_a_shipped_preset_by_name(tmp_path):
    preset = load_preset(_write(tmp_path, {"mine.yaml": "extends: long_swell\nseed: 99\n"}))
    shipped = load_preset("long_swell")
    assert preset == dataclasses.replace(shipped, seed=99)


def test_an_extends_chain_of_three(tmp_path):
    files = {
        "c.yaml": "extends: sub/b.yaml\ntile: {resolution: 64}\n",
        "sub/b.yaml": "extends: ../base.yaml\ntile: {size_m: 50}\n",
        "base.yaml": _BASE,
    }
    (tmp_path / "sub").mkdir()
    preset = load_preset(_write(tmp_path, files))
    assert (preset.tile.size_m, preset.tile.resolution, preset.seed) == (50.0, 64, 1)


def test_overrides_beat_the_file_and_apply_in_order(tmp_path):
    path = _write(tmp_path, {"child.yaml": "extends: base.yaml\ntile:\n  resolution: 256\n", "base.yaml": _BASE})
    preset = load_preset(
        path,
        overrides=(
            "tile.resolution=1024",
            "sea.components.1.wind_speed_mps=14",
            "maps=[height,normal]",
            "seed=7",
            "seed=8",
            "surface.lateral_factor=0",
        ),
    )
    assert preset.tile.resolution == 1024
    assert preset.sea.components[1].wind_speed_mps == 14.0
    assert preset.sea.components[0].significant_height_m == 2.0
    assert preset.maps == ("height", "normal")
    assert preset.seed == 8
    assert preset.surface.lateral_factor == 0.0


def test_override_can_create_a_section_and_replace_a_list(tmp_path):
    path = _write(tmp_path, {"p.yaml": _ONE_WIND_SEA})
    preset = load_preset(
        path,
        overrides=(
            "output.precision_per_map={displacement: float}",
            "sea.components=[{significant_height_m: 1, peak_period_s: 8}]",
        ),
    )
    assert preset.output.precision_for("displacement") == "float"
    assert preset.output.precision_for("normal") == "half"
    assert preset.sea.components[0].significant_height_m == 1.0


def test_the_quoting_an_override_error_advises_reads_the_text(tmp_path):
    """The advice of an unreadable --set value works as written (the shell passes what is
    inside its single quotes)."""
    path = _write(tmp_path, {"p.yaml": _ONE_WIND_SEA})
    preset = load_preset(path, overrides=('output.pattern="{map}_####.{ext}"',))
    assert preset.output.relative_path("p", "height", 1001) == "p/height_1001.exr"


def test_outside_output_is_allowed_when_asked(tmp_path):
    path = _write(tmp_path, {"p.yaml": _ONE_WIND_SEA})
    preset = load_preset(path, overrides=("output.folder=/srv/renders/{preset}",), allow_outside_output=True)
    assert preset.output.relative_path("p", "height", 1001) == "/srv/renders/p/height.1001.exr"


# -- resolved values -----------------------------------------------------------------------


def test_defaults_follow_the_sizing(tmp_path):
    text = (
        "sea:\n  depth_m: 20\n  components:\n"
        "    - wind_speed_mps: 12\n      fetch_km: 30\n"
        "    - significant_height_m: 1\n      peak_period_s: 11\n"
        "    - spectrum: pierson_moskowitz\n      beaufort: 3\n"
    )
    wind, swell, developed = load_preset(_write(tmp_path, {"p.yaml": text})).sea.components
    assert (wind.label, wind.spreading, wind.spread_deg, wind.peak_enhancement) == ("wind sea", "mitsuyasu", None, 3.3)
    assert (swell.label, swell.spreading, swell.spread_deg, swell.peak_enhancement) == ("wave system", "cos2s", 25.0, 3.3)
    assert (developed.spreading, developed.peak_enhancement) == ("mitsuyasu", None)


def test_relative_path_pads_the_frame_number():
    output = load_preset("reference").output
    assert output.relative_path("reference", "normal", 7) == "reference/normal.0007.exr"
    assert output.relative_path("reference", "foam", 12345) == "reference/foam.12345.exr"


def test_frame_times():
    time = load_preset("reference").time
    assert list(time.frames)[:2] == [1001, 1002] and len(time.frames) == 48
    assert time.frame_time(1001) == 0.0
    assert time.frame_time(1025) == pytest.approx(1.0, abs=1e-12)


def test_load_by_name_and_by_path_agree():
    by_name = load_preset("fresh_chop")
    by_path = load_preset(REPOSITORY / "presets" / "fresh_chop.yaml")
    assert by_name == by_path and by_name.name == by_path.name == "fresh_chop"


def test_list_presets_lists_the_library():
    listed = list_presets()
    names = [name for name, _, _ in listed]
    assert names == sorted(names) and len(names) >= 10 and "reference" in names
    for name, path, description in listed:
        assert path.is_file() and path.stem == name
        assert description and not description.startswith("(does not load")


# -- conversion to a sea state -------------------------------------------------------------


def test_to_sea_state_converts_units(tmp_path):
    text = (
        "sea:\n  depth_m: 40\n  gravity_mps2: 9.7\n  surface_tension_npm: 0.07\n  density_kgpm3: 1000\n"
        "  components:\n    - wind_speed_mps: 15\n      fetch_km: 100\n      towards_deg: 90\n"
    )
    sea = to_sea_state(load_preset(_write(tmp_path, {"p.yaml": text})))
    assert (sea.depth, sea.gravity, sea.surface_tension, sea.density) == (40.0, 9.7, 0.07, 1000.0)
    expected = wind_sea(15.0, fetch=100_000.0, depth=40.0, direction=math.pi / 2, gravity=9.7)
    assert sea.components[0] == expected
    # The mean direction of travel comes out where towards_deg points (to 1e-3 rad).
    assert sea.statistics().mean_direction == pytest.approx(math.pi / 2, abs=1e-3)


def test_to_sea_state_deep_is_infinite_and_spread_is_radians(tmp_path):
    text = "sea:\n  components:\n    - significant_height_m: 2\n      peak_period_s: 10\n      spread_deg: 20\n"
    sea = to_sea_state(load_preset(_write(tmp_path, {"p.yaml": text})))
    assert sea.depth == math.inf
    # cos-2s exponent s = 2/σ² − 1 (Kuik et al. 1988, eq. 33), σ in radians.
    assert sea.components[0].spread_s == pytest.approx(2.0 / math.radians(20.0) ** 2 - 1.0, rel=1e-12)
    assert sea.statistics().hs == pytest.approx(2.0, rel=1e-6)


# -- warnings ------------------------------------------------------------------------------


def _warnings(tmp_path, text):
    return preset_warnings(load_preset(_write(tmp_path, {"w.yaml": text})))


def test_no_warnings_for_a_sensible_preset():
    assert preset_warnings(load_preset("reference")) == []


@pytest.mark.parametrize(
    "text, fragment",
    [
        ("tile: {size_m: 100, resolution: 512}\n", "under twice the peak wavelength of `wind sea` (87.7 m)"),
        ("tile: {size_m: 60, resolution: 512}\n", "in waves longer than the tile (60 m)"),
        ("tile: {size_m: 4096, resolution: 64}\n", "in waves shorter than two texels (128 m)"),
        ("sea:\n  depth_m: 4\n  components:\n    - significant_height_m: 2\n      peak_period_s: 8\n",
         "significant height 2 m is 0.50 of the depth 4 m"),
        ("sea:\n  components:\n    - significant_height_m: 0.05\n      peak_period_s: 0.5\ntile: {size_m: 2, resolution: 512}\n",
         "surface tension changes wave speed by more than 5 %"),
        ("sea:\n  components:\n    - wind_speed_mps: 10\n      small_wave_cutoff_m: 10\n",
         "small_wave_cutoff_m 10 m of `wind sea` removes"),
        ("output: {compression: dwaa}\n", "dwaa is lossy and would blur the values of displacement"),
        ("sea:\n  components:\n    - wind_speed_mps: 10\n      fetch_km: 3000\n",
         "fetch_km 3000 km is more than the wind of `wind sea` needs: the sea is fully developed"),
        # a loop of a fractional number of frames is not seamless in a frame sequence
        ("time: {loop_period_s: 10.01}\n", "time.loop_period_s 10.01 s is 240.24 frames at 24 fps"),
        # a loop rounds every frequency to a multiple of 2π/T: 12 s puts the 7.49 s peak at 6 s
        ("time: {loop_period_s: 12}\n", "rounds the peak period of `wind sea` from 7.49 s to 6 s"),
        # ... and 2 s rounds it to frequency 0: the peak waves stand still
        ("time: {loop_period_s: 2}\n", "the peak waves of `wind sea` (7.49 s period) are rounded to frequency 0"),
    ],
)
def test_each_warning_fires(tmp_path, text, fragment):
    found = _warnings(tmp_path, text)
    assert any(fragment in w for w in found), found


def test_foam_memory_key_defaults_checks_and_reaches_the_ocean(tmp_path):
    """surface.foam_memory_s: default 0, range 0–60 s, and it reaches the synthesiser."""
    from oceanfield.surface.synth import Ocean

    assert load_preset("moderate_breeze").surface.foam_memory_s == 0.0
    preset = load_preset("moderate_breeze", overrides=("surface.foam_memory_s=1.5", "tile.resolution=32"))
    assert preset.surface.foam_memory_s == 1.5
    assert Ocean.from_preset(preset).foam_memory == 1.5
    with pytest.raises(PresetError, match=r"foam_memory_s.*-2"):
        load_preset("moderate_breeze", overrides=("surface.foam_memory_s=-2",))


def test_bound_waves_key_defaults_checks_and_reaches_the_ocean():
    """surface.bound_waves: auto (default), true or false; it reaches the synthesiser."""
    from oceanfield.surface.synth import Ocean

    assert load_preset("moderate_breeze").surface.bound_waves == "auto"
    preset = load_preset("fresh_chop", overrides=("surface.bound_waves=false", "tile.resolution=32"))
    assert preset.surface.bound_waves is False
    assert Ocean.from_preset(preset).bound is None
    preset = load_preset("fresh_chop", overrides=("surface.bound_waves=true", "tile.resolution=64"))
    assert Ocean.from_preset(preset).bound is not None
    with pytest.raises(PresetError, match=r"bound_waves: expected auto, true or false, got .*maybe"):
        load_preset("moderate_breeze", overrides=("surface.bound_waves=maybe",))


def test_a_preset_builds_its_sea_once():
    """``Preset.sea_state()`` is built once, so warnings, estimates and the Ocean share one
    SeaState and its statistics; a changed copy builds its own."""
    preset = load_preset("moderate_breeze")
    sea = preset.sea_state()
    assert preset.sea_state() is sea
    calmer = dataclasses.replace(preset, sea=dataclasses.replace(
        preset.sea, components=(dataclasses.replace(preset.sea.components[0], beaufort=3),)))
    assert calmer.sea_state() is not sea
    assert calmer.sea_state().statistics().hs < sea.statistics().hs
    assert calmer == calmer and preset_hash(calmer) != preset_hash(preset)
