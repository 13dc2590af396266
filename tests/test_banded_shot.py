"""probe, float and scene on a banded sea: the joined modes of every band, summed anywhere."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from oceanfield.physics.seastate import SeaState, wind_sea
from oceanfield.surface.bands import Band, BandStack
from oceanfield.surface.probes import surface_at
from oceanfield.surface.tile import Tile

#: Both sides are exact sums of the same modes in float64; the composite is stored as
#: float32, whose rounding of values of ~1 m is 6e-8 m: sixteen times that.
FLOAT32_FIELDS = 1e-6

TWO_BANDS = """\
description: two listed bands for the shot commands' tests
sea:
  components:
    - wind_speed_mps: 8
bands:
  tiles:
    - {size_m: 60, resolution: 32, shortest_wave_m: 2.5}
    - {size_m: 19.843, resolution: 32, longest_wave_m: 2.5}
  composite_extent_m: 60
  composite_resolution: 32
maps: [displacement, normal, foam]
time:
  first_frame: 1
  last_frame: 3
"""


@pytest.mark.parametrize("bound_waves", [False, True])
def test_a_probe_on_two_bands_equals_the_composite_at_its_grid_points(bound_waves):
    sea = SeaState((wind_sea(8.0),))
    # band 1's tile is not a simple fraction of band 0's (√7/2-ish ratio): the sum does not repeat
    bands = [Band(Tile(60.0, 32), 0.0, 2.5), Band(Tile(19.843, 32), 2.5, math.inf)]
    stack = BandStack(sea, bands, seed=3, fft_workers=1, bound_waves=bound_waves)
    t, extent, resolution = 1.7, 60.0, 128  # spacing 0.47 m < band 1's 0.62 m: every wave is held
    composite = stack.composite(t, extent=extent, resolution=resolution)
    i, j = np.meshgrid(np.arange(0, resolution, 7), np.arange(0, resolution, 5), indexing="ij")
    points = surface_at(stack.modes(bound_share=1.0), j * extent / resolution, i * extent / resolution, t,
                        invert=False)
    assert np.abs(composite.height).max() > 0.5  # a sea, not a flat plane
    for got, want in ((points.displacement[..., 2], composite.height[i, j]),
                      (points.displacement[..., 0], composite.displacement_x[i, j]),
                      (points.displacement[..., 1], composite.displacement_y[i, j]),
                      (points.normal, composite.normal[i, j])):
        np.testing.assert_allclose(got, want, rtol=0, atol=FLOAT32_FIELDS)
    # the joined set is every band's modes, and band 1's lattice is not band 0's
    assert len(stack.modes()) == sum(len(o.modes()) for o in stack.oceans)


def test_the_probe_command_on_a_banded_preset_lands_on_the_composite(tmp_path, capsys):
    from oceanfield.cli import main
    from oceanfield.preset.banding import band_stack
    from oceanfield.preset.schema import load_preset

    path = tmp_path / "two.yaml"
    path.write_text(TWO_BANDS, encoding="utf-8")
    preset = load_preset(path)
    stack = band_stack(preset)
    t = preset.time.frame_time(2)
    composite = stack.composite(t, extent=60.0, resolution=128)
    row, col = 37, 90  # rest point x0 = (42.1875, 17.34375) m; ask where it lands
    x0, y0 = col * 60.0 / 128, row * 60.0 / 128
    x = x0 + float(composite.displacement_x[row, col])
    y = y0 + float(composite.displacement_y[row, col])
    assert main(["probe", str(path), "--at", f"p={x!r},{y!r}", "--frames", "2-2", "--json"]) == 0
    table = json.loads(capsys.readouterr().out)
    record = table["records"][0]
    # the landing spot is rounded to float32 (~4e-6 m at 40 m): slopes ≤ 1 keep the height within 1e-5 m
    assert record["rest_x_m"] == pytest.approx(x0, abs=1e-4)
    assert record["rest_y_m"] == pytest.approx(y0, abs=1e-4)
    assert record["height_m"] == pytest.approx(float(composite.height[row, col]), abs=1e-4)


def test_float_on_a_banded_preset_runs(tmp_path):
    from oceanfield.cli import main

    path = tmp_path / "two.yaml"
    path.write_text(TWO_BANDS, encoding="utf-8")
    out = tmp_path / "boat.json"
    body = "name=skiff,x_m=70.5,y_m=-12,length_m=6,beam_m=2.5,heave_period_s=2.5,heave_damping=0.2"
    assert main(["float", str(path), "--body", body, "--frames", "1-3", "--out", str(out)]) == 0
    table = json.loads(out.read_text())
    heave = [r["heave_m"] for r in table["records"]]
    assert len(heave) == 3 and all(math.isfinite(h) for h in heave)
    assert 0 < max(abs(h) for h in heave) < 2.0  # a 1 m sea moves a skiff by less than 2 m


def test_scene_of_a_banded_preset_reads_back(tmp_path, capsys):
    pxr = pytest.importorskip("pxr", reason="usd-core is in the test extra; install it with pip install '.[test]'")
    from pxr import Usd, UsdGeom, UsdShade  # noqa: F401

    from oceanfield.cli import main
    from oceanfield.preset.banding import band_stack
    from oceanfield.preset.schema import load_preset

    path = tmp_path / "two.yaml"
    path.write_text(TWO_BANDS, encoding="utf-8")
    out = tmp_path / "shot.usda"
    assert main(["scene", str(path), "--out", str(out), "--frames", "1-2", "--mesh-resolution", "16",
                 "--at", "p=5,6", "--maps", str(tmp_path / "maps")]) == 0
    err = capsys.readouterr().err
    assert "15x15 sea mesh" in err and "not rendered yet" in err
    assert ": 2 frames, a 15x15 sea mesh, 1 probe, 0 bodies\n" in err
    stage = Usd.Stage.Open(str(out))
    mesh = next(UsdGeom.Mesh(p) for p in stage.Traverse() if p.IsA(UsdGeom.Mesh))
    points = np.array(mesh.GetPointsAttr().Get(Usd.TimeCode(2)))
    assert points.shape == (16 * 16, 3)
    # the vertices are the composite's exact sums on a 16² grid over 60 m (scene Y-up: x → X, y → −Z)
    preset = load_preset(path)
    composite = band_stack(preset).composite(preset.time.frame_time(2), extent=60.0, resolution=16)
    rest_x = (np.arange(16) * 60.0 / 16)[None, :]
    np.testing.assert_allclose(points[:, 0].reshape(16, 16), rest_x + composite.displacement_x, atol=1e-5)
    np.testing.assert_allclose(points[:, 1].reshape(16, 16), composite.height, atol=1e-5)
    files = [p for p in stage.Traverse() if p.GetName() == "FoamTexture"]
    assert files and "composite_foam" in str(UsdShade.Shader(files[0]).GetInput("file").Get(Usd.TimeCode(1)))


def test_a_banded_scene_clamps_the_composite_textures(tmp_path):
    """The composite map covers its extent once and does not repeat (band 0 is wider): its
    textures are clamped like the wake's, so filtering at the patch's edge does not blend in
    the opposite edge's water (the tiled sea's own maps repeat)."""
    pytest.importorskip("pxr", reason="usd-core is in the test extra; install it with pip install '.[test]'")
    from pxr import Usd, UsdShade

    from oceanfield.cli import main

    path = tmp_path / "two.yaml"
    path.write_text(TWO_BANDS, encoding="utf-8")
    out = tmp_path / "shot.usda"
    assert main(["scene", str(path), "--out", str(out), "--frames", "1-2", "--mesh-resolution", "16",
                 "--maps", str(tmp_path / "maps")]) == 0
    stage = Usd.Stage.Open(str(out))
    textures = [UsdShade.Shader(p) for p in stage.Traverse() if p.GetName().endswith("Texture")]
    assert textures
    for texture in textures:
        assert "composite_" in str(texture.GetInput("file").Get(Usd.TimeCode(1)))
        assert (texture.GetInput("wrapS").Get(), texture.GetInput("wrapT").Get()) == ("clamp", "clamp")
