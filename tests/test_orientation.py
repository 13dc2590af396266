"""The map orientation end to end, on rendered files read the way a 3D package reads them.

The convention (README, "Image orientation"; `oceanfield.surface.maps`): a file's first
row is the image's top row (OpenEXR scanlines run from the top of the data window down);
the tile's y = 0 is the image's bottom row. A package whose UV origin is the bottom-left
corner puts texel (row r, column c) of an N² image at u = (c + ½)/N, v = 1 − (r + ½)/N.
Laid on a Z-up plane with u along +X and v along +Y, or on a Y-up ground plane with u
along +X and v along −Z, the tile must land so that

- a wave sea travelling towards ``towards_deg`` moves that way in the scene (counter-
  clockwise from +X seen from above), and
- the lateral displacement in the map points the same way as the wave's own motion:
  for h = A cos φ the offset is −λA sin φ k̂ (Tessendorf 2001, eq. 29), so its component
  along the direction of travel follows the height's slope along it, +λ/k · ∂h/∂s.

The scene plane is sampled on the (u, v) grid; each file is read by the OpenEXR binding.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield.cli import main
from oceanfield.io.exr import read_exr
from oceanfield.preset import load_preset
from oceanfield.render.plan import plan_render
from oceanfield.surface.synth import Ocean

#: Mean direction of travel measured on 64² texels of a 10°-spread sea, degrees: the
#: lattice's realisation moves it by a degree or two.
DIRECTION_TOLERANCE_DEG = 5.0
#: Correlation of the along-travel lateral displacement with the along-travel slope: a
#: narrow sea is nearly one wave, so close to 1 (opposite sense or a mirror gives ≤ 0).
MIN_CORRELATION = 0.8

_PRESET = """\
description: a narrow swell for the orientation test
seed: 4
sea:
  components:
    - significant_height_m: 1.0
      peak_period_s: 4.0
      towards_deg: {towards}
      spreading: cos2s
      spread_deg: 10
tile:
  size_m: 100.0
  resolution: 64
surface:
  lateral_factor: 1.0
maps: [displacement]
time:
  fps: 24
  first_frame: 1001
  last_frame: 1002
output:
  precision: float
scene:
  up_axis: {up}
"""


def _plane(channels: dict, up_axis: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Height and the lateral displacement along the plane's (u, v) axes, on the (v, u) grid.

    Grid index [j, i] is the texel at u = (i + ½)/N, v = (j + ½)/N: file row N − 1 − j.
    """
    on_grid = {name: array[::-1] for name, array in channels.items()}  # v up: last file row first
    if up_axis == "z":  # u along +X, v along +Y: (R, G, B) = (X, Y, Z)
        return on_grid["B"], on_grid["R"], on_grid["G"]
    # Y-up ground plane: u along +X, v along −Z; (R, G, B) = (X, Y, Z), height in G
    return on_grid["G"], on_grid["R"], -on_grid["B"]


def _travel_direction(before: np.ndarray, after: np.ndarray) -> float:
    """Energy-weighted direction (radians from +u towards +v) the pattern moves, from the
    phase change of each Fourier mode: e^{i(k·x − ωt)} runs along +k, and numpy's forward
    transform gives its coefficient at +k a phase that falls by ωΔt."""
    n = before.shape[0]
    a, b = np.fft.fft2(before), np.fft.fft2(after)
    ku = np.fft.fftfreq(n)[None, :] * np.ones((n, 1))
    kv = np.fft.fftfreq(n)[:, None] * np.ones((1, n))
    energy = np.abs(a) ** 2
    falling = -np.sign(np.angle(b * np.conj(a)))  # +1 where the mode runs along +k
    norm = np.hypot(ku, kv)
    norm[0, 0] = 1.0
    du = np.sum(energy * falling * ku / norm)
    dv = np.sum(energy * falling * kv / norm)
    return math.atan2(dv, du)


@pytest.mark.parametrize("up_axis", ["y", "z"])
@pytest.mark.parametrize("towards", [60.0, 200.0])
def test_waves_travel_towards_towards_deg_through_a_bottom_left_uv(tmp_path, capsys, up_axis, towards):
    path = tmp_path / "narrow.yaml"
    path.write_text(_PRESET.format(towards=towards, up=up_axis), encoding="utf-8")
    assert main(["render", str(path), "--out", str(tmp_path / "out"), "--workers", "1"]) == 0
    capsys.readouterr()
    plan = plan_render(load_preset(path), root=tmp_path / "out")
    first, _ = read_exr(plan.files(1001)["displacement"])
    second, _ = read_exr(plan.files(1002)["displacement"])
    h0, du, dv = _plane(first, up_axis)
    h1, _, _ = _plane(second, up_axis)

    moved = math.degrees(_travel_direction(h0, h1))
    assert abs(math.remainder(moved - towards, 360.0)) < DIRECTION_TOLERANCE_DEG

    # lateral displacement along the travel direction follows the slope along it
    n, size = h0.shape[0], 100.0
    d = np.array([math.cos(math.radians(towards)), math.sin(math.radians(towards))])
    k = 2.0 * np.pi * np.fft.fftfreq(n, d=size / n)
    spectrum = np.fft.fft2(h0)
    slope = np.real(np.fft.ifft2(1j * (d[0] * k[None, :] + d[1] * k[:, None]) * spectrum))
    along = d[0] * du + d[1] * dv
    correlation = np.corrcoef(along.ravel(), slope.ravel())[0, 1]
    assert correlation > MIN_CORRELATION


def test_row_zero_of_the_tile_is_the_last_row_of_the_file(tmp_path, capsys):
    path = tmp_path / "narrow.yaml"
    path.write_text(_PRESET.format(towards=30.0, up="z"), encoding="utf-8")
    assert main(["render", str(path), "--out", str(tmp_path / "out"), "--workers", "1"]) == 0
    capsys.readouterr()
    preset = load_preset(path)
    channels, _ = read_exr(plan_render(preset, root=tmp_path / "out").files(1001)["displacement"])
    fields = Ocean.from_preset(preset).frame(preset.time.frame_time(1001))
    np.testing.assert_array_equal(channels["B"][-1], fields.height[0])  # y = 0: the bottom row
    np.testing.assert_array_equal(channels["B"][0], fields.height[-1])
