"""The shot commands (render/shot.py, io/usd.py, io/table.py): probes against the maps,
floating bodies, the USD stage read back, and one-line errors."""

from __future__ import annotations

import json
import math
import re
import sys
from pathlib import Path

import numpy as np
import pytest

from oceanfield.cli import main
from oceanfield.io.exr import read_exr
from oceanfield.io.table import format_csv
from oceanfield.preset.schema import load_preset
from oceanfield.surface.maps import map_channels, scene_axes
from oceanfield.surface.synth import Ocean

HALF_EPSILON = 2.0**-11  # relative rounding of a half float (11-bit significand, IEEE 754-2008)

#: Centimetre scene, Y up: the probes must come out in the maps' units and axes.
SHOT = {"maps": ["displacement", "normal", "foam"], "scene": {"metres_per_unit": 0.01, "up_axis": "y"},
        "output": {"precision": "half"}}


def _texels_that_do_not_fold(preset, t: float, count: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(iy, ix) of texels well away from folds, and their displaced positions in metres."""
    ocean = Ocean.from_preset(preset, velocity=False, foam_memory=0.0)
    fields = ocean.frame(t)
    rng = np.random.default_rng(4)
    n = preset.tile.resolution
    iy, ix = rng.integers(0, n, count * 4), rng.integers(0, n, count * 4)
    keep = fields.jacobian[iy, ix] > 0.5
    iy, ix = iy[keep][:count], ix[keep][:count]
    spacing = preset.tile.size_m / n
    x = ix * spacing + fields.displacement_x[iy, ix].astype(np.float64)
    y = iy * spacing + fields.displacement_y[iy, ix].astype(np.float64)
    return np.stack([iy, ix], axis=1), x, y


def test_a_probe_at_a_texel_returns_the_maps_values(tmp_path, preset_file, capsys):
    """Issue check: displacement and normal maps (written as half floats, cm, Y up) at a
    texel equal the probe above the texel's displaced position, to half-float precision."""
    path = preset_file(settings=SHOT)
    maps = tmp_path / "maps"
    assert main(["render", str(path), "--frames", "1003", "--out", str(maps), "--workers", "1"]) == 0
    preset = load_preset(path)
    texels, x, y = _texels_that_do_not_fold(preset, preset.time.frame_time(1003), 12)
    out = tmp_path / "probes.json"
    at = [item for i in range(len(x)) for item in ("--at", f"t{i}={float(x[i])!r},{float(y[i])!r}")]
    assert main(["probe", str(path), "--frames", "1003", "--out", str(out), *at]) == 0
    records = json.loads(out.read_text())["records"]
    displacement, _ = read_exr(maps / "tiny" / "displacement.1003.exr")
    normal, _ = read_exr(maps / "tiny" / "normal.1003.exr")
    spacing = preset.tile.size_m / preset.tile.resolution
    worst_d = worst_n = 0.0
    rows = preset.tile.resolution - 1  # file row r holds the tile's texel row N − 1 − r
    for record, (iy, ix) in zip(records, texels):
        assert record["rest_x_m"] == pytest.approx(ix * spacing, abs=1e-5)
        assert record["rest_y_m"] == pytest.approx(iy * spacing, abs=1e-5)
        for axis, channel in zip("XYZ", "RGB"):
            on_map = float(displacement[channel][rows - iy, ix])
            got = record[f"displacement_{axis}_cm"]
            assert abs(got - on_map) <= HALF_EPSILON * abs(on_map) + 1e-4
            worst_d = max(worst_d, abs(got - on_map) / max(abs(on_map), 1e-3))
            on_map = float(normal[channel][rows - iy, ix])
            assert abs(record[f"normal_{axis}"] - on_map) <= HALF_EPSILON * abs(on_map) + 1e-6
            worst_n = max(worst_n, abs(record[f"normal_{axis}"] - on_map))
        assert record["residual_m"] < 1e-3
        # the position is the probe's own horizontal position, with the height, in cm and Y up
        assert record["position_X_cm"] == pytest.approx(record["at_x_m"] * 100, rel=1e-12)
        assert record["position_Z_cm"] == pytest.approx(-record["at_y_m"] * 100, rel=1e-12)
        assert record["position_Y_cm"] == record["height_cm"] == record["displacement_Y_cm"]
    print(f"worst relative displacement difference {worst_d:.2e}, worst normal difference {worst_n:.2e}")


def test_probe_csv_names_every_column_with_its_unit(preset_file, capsys):
    path = preset_file(settings=SHOT)
    assert main(["probe", str(path), "--frames", "1001-1002", "--at", "3,4", "--at", "buoy=-10,500"]) == 0
    lines = capsys.readouterr().out.splitlines()
    header = lines[0].split(",")
    assert header[:5] == ["frame", "time_s", "probe", "at_x_m", "at_y_m"]
    assert "height_cm" in header and "velocity_Y_cmps" in header and "residual_m" in header
    assert len(lines) == 1 + 2 * 2
    assert lines[2].split(",")[2] == "buoy"


def test_scene_units_positions_land_where_tile_metres_do(preset_file, capsys):
    path = preset_file(settings=SHOT)
    assert main(["probe", str(path), "--frames", "1001", "--at", "3,4", "--json"]) == 0
    metres = json.loads(capsys.readouterr().out)["records"][0]
    # Y up: scene (X, Z) = (x, −y), in cm
    assert main(["probe", str(path), "--frames", "1001", "--at", "300,-400", "--scene-units", "--json"]) == 0
    scene = json.loads(capsys.readouterr().out)["records"][0]
    assert scene["at_x_m"] == pytest.approx(3.0) and scene["at_y_m"] == pytest.approx(4.0)
    assert scene["height_cm"] == pytest.approx(metres["height_cm"], abs=1e-9)


def test_float_writes_position_and_rotation_in_scene_axes(tmp_path, preset_file):
    path = preset_file(settings=SHOT)
    out = tmp_path / "boat.csv"
    body = "name=boat,x_m=20,y_m=30,length_m=12,beam_m=4,heading_deg=30,roll_period_s=5,roll_damping=0.3"
    assert main(["float", str(path), "--frames", "1001-1003", "--body", body, "--out", str(out)]) == 0
    lines = out.read_text().splitlines()
    header = lines[0].split(",")
    row = dict(zip(header, lines[1].split(",")))
    assert row["body"] == "boat" and float(row["position_X_cm"]) == pytest.approx(2000.0)
    assert float(row["position_Z_cm"]) == pytest.approx(-3000.0)
    q = np.array([float(row[f"orientation_{a}"]) for a in "wXYZ"])
    assert np.linalg.norm(q) == pytest.approx(1.0, abs=1e-12)


def test_a_body_longer_than_the_tile_is_warned_of(tmp_path, preset_file, capsys):
    """The sea repeats with the tile: a hull longer than it would have bow and stern on the
    same water, so `float` says so (one warning line) and still writes its table."""
    path = preset_file(settings={"tile": {"size_m": 20.0, "resolution": 32}})
    out = tmp_path / "long.csv"
    assert main(["float", str(path), "--frames", "1001", "--body", "name=barge,x_m=0,y_m=0,length_m=30,beam_m=8",
                 "--body", "name=dinghy,x_m=5,y_m=0,length_m=4,beam_m=2", "--out", str(out)]) == 0
    warnings = [line for line in capsys.readouterr().err.splitlines() if "warning" in line]
    assert warnings == ["oceanfield: warning: body 'barge' is 30 m long, more than the 20 m tile: the sea "
                        "repeats under it, so parts of it ride the same water; use a larger tile.size_m (or bands)"]
    assert len(out.read_text().splitlines()) == 3


@pytest.fixture
def usd():
    return pytest.importorskip("pxr", reason="usd-core is in the test extra; install it with pip install '.[test]'")


def test_the_usd_stage_reads_back(tmp_path, preset_file, capsys, usd):
    """Issue check: metadata, time codes, point counts, the points of a frame equal the
    displaced grid sampled from the maps, transforms equal the probe and float output."""
    from pxr import Sdf, Usd, UsdGeom, UsdShade

    path = preset_file(settings=SHOT)
    maps = tmp_path / "renders"
    stage_path = tmp_path / "shot" / "shot.usda"
    body = "name=boat,x_m=20,y_m=30,length_m=12,beam_m=4,heading_deg=30"
    assert main(["scene", str(path), "--frames", "1001-1003", "--out", str(stage_path), "--maps", str(maps),
                 "--render-maps", "--mesh-resolution", "16", "--at", "buoy=5,6", "--body", body]) == 0
    stage = Usd.Stage.Open(str(stage_path))
    assert UsdGeom.GetStageMetersPerUnit(stage) == pytest.approx(0.01)
    assert UsdGeom.GetStageUpAxis(stage) == UsdGeom.Tokens.y
    assert stage.GetTimeCodesPerSecond() == 24.0 and stage.GetFramesPerSecond() == 24.0
    assert (stage.GetStartTimeCode(), stage.GetEndTimeCode()) == (1001.0, 1003.0)
    mesh = UsdGeom.Mesh(stage.GetPrimAtPath("/Shot/Sea"))
    assert mesh.GetPointsAttr().GetTimeSamples() == [1001.0, 1002.0, 1003.0]
    points = np.array(mesh.GetPointsAttr().Get(1002.0))
    assert points.shape == (17 * 17, 3) and len(mesh.GetFaceVertexCountsAttr().Get()) == 16 * 16

    # the displaced grid from the maps: every 4th texel of the 64² half-float map, cm, Y up
    preset = load_preset(path)
    displacement, _ = read_exr(maps / "tiny" / "displacement.1002.exr")
    grid = np.stack([displacement[c][::-1][::4, ::4] for c in "RGB"], axis=-1)  # y = 0 is the bottom row
    grid = np.pad(grid, ((0, 1), (0, 1), (0, 0)), mode="wrap")
    spacing = preset.tile.size_m / 16
    index = np.arange(17) * spacing
    rest = np.stack(np.broadcast_arrays(index[None, :], 0.0 * index[:, None], -index[:, None]), axis=-1) * 100
    expected = (rest + grid).reshape(-1, 3)
    assert np.max(np.abs(points - expected)) <= HALF_EPSILON * np.max(np.abs(expected)) + 1e-3

    # texel centres: u = (x + ½ texel)/L, v = (y + ½ texel)/L (y = 0 in the bottom row)
    st = np.array(UsdGeom.PrimvarsAPI(mesh.GetPrim()).GetPrimvar("st").Get())
    assert st[0] == pytest.approx([0.5 / 64, 0.5 / 64]) and st[17 + 1] == pytest.approx([4.5 / 64, 4.5 / 64])

    # the material's foam texture follows the frames and resolves to the rendered files
    foam = UsdShade.Shader(stage.GetPrimAtPath("/Shot/Looks/SeaMaterial/FoamTexture"))
    files = foam.GetInput("file").GetAttr()
    assert files.GetTimeSamples() == [1001.0, 1002.0, 1003.0]
    resolved = Path(stage.GetRootLayer().ComputeAbsolutePath(files.Get(1002.0).path))
    assert resolved == (maps / "tiny" / "foam.1002.exr").resolve() and resolved.is_file()
    assert UsdShade.MaterialBindingAPI(mesh.GetPrim()).ComputeBoundMaterial()[0].GetPath() == \
        Sdf.Path("/Shot/Looks/SeaMaterial")

    # transforms equal the probe and float commands' output
    out = tmp_path / "buoy.json"
    assert main(["probe", str(path), "--frames", "1001-1003", "--at", "buoy=5,6", "--out", str(out)]) == 0
    buoy = UsdGeom.Xformable(stage.GetPrimAtPath("/Shot/Probes/buoy"))
    for record in json.loads(out.read_text())["records"]:
        moved = buoy.ComputeLocalToWorldTransform(record["frame"]).ExtractTranslation()
        assert list(moved) == pytest.approx([record[f"position_{a}_cm"] for a in "XYZ"], abs=1e-9)
    out = tmp_path / "boat.json"
    assert main(["float", str(path), "--frames", "1001-1003", "--body", body, "--out", str(out)]) == 0
    boat = UsdGeom.Xformable(stage.GetPrimAtPath("/Shot/Bodies/boat"))
    for record in json.loads(out.read_text())["records"]:
        matrix = boat.ComputeLocalToWorldTransform(record["frame"])
        assert list(matrix.ExtractTranslation()) == pytest.approx([record[f"position_{a}_cm"] for a in "XYZ"], abs=1e-9)
        q = matrix.ExtractRotationQuat()
        got = np.array([q.GetReal(), *q.GetImaginary()])
        want = np.array([record[f"orientation_{a}"] for a in "wXYZ"])
        assert min(np.abs(got - want).max(), np.abs(got + want).max()) < 1e-9


def test_the_stage_passes_usds_own_validators(tmp_path, preset_file, usd):
    """The material follows the UsdPreviewSurface specification as USD checks it: the
    primvar reader's `varname` is a string (a token before USD 21.11; today's validators
    reject the token as an error, and renderers may then drop the texture coordinates)."""
    from pxr import Sdf, Usd, UsdShade

    stage_path = tmp_path / "shot.usda"
    assert main(["scene", str(preset_file(settings=SHOT)), "--frames", "1001-1002", "--out", str(stage_path),
                 "--maps", str(tmp_path / "renders"), "--render-maps", "--mesh-resolution", "8", "--at", "buoy=5,6"]) == 0
    stage = Usd.Stage.Open(str(stage_path))
    reader = UsdShade.Shader(stage.GetPrimAtPath("/Shot/Looks/SeaMaterial/TextureCoordinates"))
    assert reader.GetInput("varname").GetTypeName() == Sdf.ValueTypeNames.String
    assert reader.GetInput("varname").Get() == "st"
    try:
        from pxr import UsdValidation
    except ImportError:  # usd-core before 24.11 has no validation framework: the type check above stands
        return
    registry = UsdValidation.ValidationRegistry()
    errors = UsdValidation.ValidationContext(registry.GetOrLoadAllValidators()).Validate(stage)
    assert not errors, [f"{e.GetName()}: {e.GetMessage()}" for e in errors]


def test_scene_axes_are_the_maps_axes():
    fields = Ocean.from_preset(load_preset("moderate_breeze", overrides=("tile.resolution=32",))).frame(1.0)
    for up in ("y", "z"):
        channels = map_channels(fields, "displacement", up_axis=up)
        internal = np.stack([fields.displacement_x, fields.displacement_y, fields.height], axis=-1)
        mapped = internal @ scene_axes(up).T
        for index, channel in enumerate("RGB"):  # channels are in file row order: y = 0 last
            assert np.array_equal(mapped[::-1, :, index].astype(np.float32), channels[channel])


@pytest.mark.parametrize(
    "arguments, needle",
    [
        (["probe", "{preset}", "--at", "1e6,0", "--out", "{out}.csv"], "--at"),
        (["probe", "{preset}", "--at", "nan,0", "--out", "{out}.csv"], "finite"),
        (["probe", "{preset}", "--at", "3", "--out", "{out}.csv"], "X,Y"),
        (["probe", "{preset}", "--at", "3,4", "--frames", "1005-1001", "--out", "{out}.csv"], "backwards"),
        (["probe", "{preset}", "--at", "3,4", "--out", "{out}.txt"], ".csv or .json"),
        (["float", "{preset}", "--body", "x_m=0,y_m=0,length_m=0,beam_m=2", "--out", "{out}.csv"], "length_m"),
        (["float", "{preset}", "--body", "x_m=0,y_m=0,length_m=5", "--out", "{out}.csv"], "beam_m"),
        (["float", "{preset}", "--body", "x_m=0,y_m=0,length_m=5,beam_m=2,roll_period_s=4", "--out", "{out}.csv"],
         "roll_damping"),
        (["float", "{preset}", "--body", "x_m=0,y_m=0,length_m=5,beam_m=2,lenght_m=3", "--out", "{out}.csv"],
         "did you mean length_m"),
        (["scene", "{preset}", "--out", "{out}.usda", "--mesh-resolution", "7"], "--mesh-resolution"),
        (["scene", "{preset}", "--out", "{out}.abc"], ".usda"),
    ],
)
def test_bad_input_is_one_line_and_exit_2_with_no_file(tmp_path, preset_file, capsys, arguments, needle):
    path = preset_file(settings=SHOT)
    out = tmp_path / "out"
    argv = [a.format(preset=path, out=out) for a in arguments]
    assert main(argv) == 2
    error = capsys.readouterr().err.strip().splitlines()
    assert len(error) == 1 and needle in error[0], error
    assert [p.name for p in tmp_path.iterdir()] == [path.name]


@pytest.mark.parametrize("command", ["probe", "float", "scene"])
@pytest.mark.parametrize("where", ["under a file", "a folder"])
def test_an_unwritable_out_is_one_line_and_exit_2_before_any_work(tmp_path, preset_file, capsys, monkeypatch,
                                                                   command, where):
    """--out in a folder that cannot be made (a file stands in its way), or naming a
    folder: one line naming --out and the path, exit 2, and said before the sea is built
    (a probe or a scene can take minutes to compute)."""
    import oceanfield.render.shot as shot

    def no_work(preset):
        raise AssertionError("the sea was built before --out was checked")

    monkeypatch.setattr(shot, "_ocean", no_work)
    path = preset_file(settings=SHOT)
    suffix = ".usda" if command == "scene" else ".csv"
    (tmp_path / "taken").write_text("a file, not a folder")
    out = tmp_path / "taken" / f"table{suffix}" if where == "under a file" else tmp_path / f"folder{suffix}"
    if where == "a folder":
        out.mkdir()
    item = {"probe": ["--at", "3,4"], "float": ["--body", "x_m=0,y_m=0,length_m=5,beam_m=2"], "scene": []}[command]
    assert main([command, str(path), "--frames", "1001", *item, "--out", str(out)]) == 2
    error = capsys.readouterr().err.strip().splitlines()
    assert len(error) == 1 and error[0].startswith("oceanfield: error: --out:") and str(out) in error[0], error


def test_the_render_a_scene_advises_makes_the_maps_its_material_names(tmp_path, preset_file, capsys, usd):
    """A scene written before its maps says which render makes them; that command, run as
    printed, must make exactly those files, with the scene's own settings (its --set
    options too: without them the maps came out at the preset file's resolution)."""
    import shlex

    from pxr import Usd, UsdShade

    path = preset_file(settings=SHOT)
    stage_path, maps = tmp_path / "shot.usda", tmp_path / "maps dir"
    assert main(["scene", str(path), "--frames", "1001-1002", "--out", str(stage_path), "--maps", str(maps),
                 "--set", "tile.resolution=32", "--set", "seed=11"]) == 0
    advice = re.search(r"render them with `([^`]*)`", capsys.readouterr().err)
    assert advice, "no render command advised"
    command = shlex.split(advice.group(1))
    assert command[:2] == ["oceanfield", "render"]
    assert main(command[1:]) == 0
    stage = Usd.Stage.Open(str(stage_path))
    files = [Path(shader.GetInput("file").Get(Usd.TimeCode(1002)).resolvedPath)
             for shader in (UsdShade.Shader(p) for p in stage.Traverse() if p.GetName().endswith("Texture"))]
    assert files and all(f.is_file() for f in files), files
    channels, attributes = read_exr(files[0])
    assert next(iter(channels.values())).shape[0] == 32 and attributes["oceanfield.seed"] == 11


def test_usd_core_missing_is_one_line_naming_the_extra(tmp_path, preset_file, capsys, monkeypatch):
    monkeypatch.setitem(sys.modules, "pxr", None)  # import pxr now raises ImportError
    path = preset_file(settings=SHOT)
    assert main(["scene", str(path), "--out", str(tmp_path / "shot.usda")]) == 2
    error = capsys.readouterr().err.strip().splitlines()
    assert len(error) == 1 and "pip install 'oceanfield[usd]'" in error[0]
    assert not (tmp_path / "shot.usda").exists()


def test_csv_cells_keep_full_precision():
    text = format_csv(["a_m", "name"], [[1.0 / 3.0, "x"], [float("nan"), "y"]])
    assert text.splitlines() == ["a_m,name", "0.3333333333333333,x", ",y"]
    assert math.isnan(float("nan"))


@pytest.mark.parametrize("up_axis", ["z", "y"])
@pytest.mark.parametrize("file_format", ["exr", "png"])
def test_every_documented_reading_of_the_maps_agrees_with_the_probe(tmp_path, preset_file, capsys, up_axis,
                                                                     file_format):
    """Issue 24: a probe above a texel's displaced position against the rendered maps read
    each way the README documents — the file's rows (row r holds tile row N − 1 − r), the
    sequence reader (row 0 = y = 0) and the analyzer's ``--crop X,Y,SIZE`` region with its
    channel layout for the up axis — agree to half-float precision (EXR; IEEE 754-2008's
    11-bit significand) or to the 16-bit PNG's step (its sidecar's range over 65535), for
    Z-up and Y-up scenes, in metres."""
    from oceanfield.io.png import read_png16
    from oceanfield.io.sequence import choose_layout, parse_crop, read_channels

    settings = {"maps": ["displacement"], "scene": {"metres_per_unit": 1.0, "up_axis": up_axis},
                "output": {"precision": "half", "format": file_format}}
    path = preset_file(settings=settings)
    maps = tmp_path / "maps"
    assert main(["render", str(path), "--frames", "1003", "--out", str(maps), "--workers", "1"]) == 0
    preset = load_preset(path)
    n = preset.tile.resolution
    texels, x, y = _texels_that_do_not_fold(preset, preset.time.frame_time(1003), 10)
    out = tmp_path / "probes.json"
    at = [item for i in range(len(x)) for item in ("--at", f"t{i}={float(x[i])!r},{float(y[i])!r}")]
    assert main(["probe", str(path), "--frames", "1003", "--out", str(out), *at]) == 0
    capsys.readouterr()
    records = json.loads(out.read_text())["records"]
    file = maps / "tiny" / f"displacement.1003.{file_format}"
    if file_format == "exr":
        raw, _ = read_exr(file)
        raw = np.stack([raw[c] for c in "RGB"], axis=-1)
        step = 0.0
    else:
        raw, (low, high) = read_png16(file)
        step = (high - low) / 65535.0
    relative = HALF_EPSILON if file_format == "exr" else 0.0
    channels, attributes = read_channels(file)
    layout = choose_layout(channels, attributes, channel=None, up_axis=up_axis, path=file)  # as the analyzer does
    x_name, x_sign, y_name, y_sign = layout.lateral
    crop_x, crop_y, side = parse_crop(f"{n // 4},{n // 2},{n // 2}", n, n, min_size=16)
    region = (slice(crop_y, crop_y + side), slice(crop_x, crop_x + side))
    cropped = {name: channels[name][region] for name in (layout.height, x_name, y_name)}
    axes = scene_axes(up_axis)  # internal (x, y, z) → scene (X, Y, Z)
    checked = 0
    for record, (iy, ix) in zip(records, texels):
        probe = np.array([record[f"displacement_{axis}_m"] for axis in "XYZ"])
        readings = {
            "file rows": raw[n - 1 - iy, ix],
            "sequence reader": np.array([channels[c][iy, ix] for c in "RGB"]),
        }
        for name, value in readings.items():
            for axis in range(3):
                tolerance = relative * abs(value[axis]) + step + 1e-6
                assert abs(probe[axis] - value[axis]) <= tolerance, (name, axis, probe, value)
        # the analyzer's crop and layout: height, and the lateral displacement in internal axes
        if crop_y <= iy < crop_y + side and crop_x <= ix < crop_x + side:
            row, col = iy - crop_y, ix - crop_x
            internal = axes.T @ probe  # scene → internal (the axis map is orthogonal)
            got = (cropped[layout.height][row, col], x_sign * cropped[x_name][row, col],
                   y_sign * cropped[y_name][row, col])
            for want, value in zip((internal[2], internal[0], internal[1]), got):
                assert abs(want - value) <= relative * abs(value) + step + 1e-6
            checked += 1
    assert len(records) == 10
    assert checked >= 1  # the crop holds some of the probed texels
