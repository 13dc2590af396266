"""The render room with vessels: wake_<map> sequences, their headers, farm determinism."""

from __future__ import annotations

import filecmp
from pathlib import Path

import numpy as np
import pytest

from oceanfield.cli import main
from oceanfield.io.exr import read_exr, read_exr_attributes
from oceanfield.preset import load_preset
from oceanfield.preset.vessels import preset_wake, wake_region
from oceanfield.render import frame_is_complete, plan_render, render

#: A boat crossing a small region on a curve; moderate_breeze on a 32² tile, four frames.
BOAT = {
    "tile": {"resolution": 32},
    "time": {"first_frame": 1001, "last_frame": 1004},
    "vessels": [{
        "name": "tender", "length_m": 6.0, "beam_m": 2.0, "draft_m": 0.4,
        "course": {"keys": [{"time_s": -8.0, "x_m": -30.0, "y_m": -10.0},
                            {"time_s": -3.0, "x_m": 0.0, "y_m": 0.0},
                            {"time_s": 2.0, "x_m": 25.0, "y_m": 12.0}]},
    }],
    "wake": {"origin_x_m": -48.0, "origin_y_m": -40.0, "size_m": 96.0, "resolution": 64, "lookback_s": 10.0},
}


@pytest.fixture
def boat(preset_file):
    return preset_file("boat", settings=BOAT)


def _files(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p.suffix == ".exr")


def _same_files(a: Path, b: Path, names=None) -> None:
    names = _files(a) if names is None else names
    assert names and set(names) <= set(_files(b))
    for name in names:
        assert filecmp.cmp(a / name, b / name, shallow=False), name


def test_the_wake_is_its_own_sequences_with_its_region_in_the_header(tmp_path, boat):
    preset = load_preset(boat)
    summary = render(plan_render(preset, root=tmp_path), workers=1)
    assert summary.ok
    folder = tmp_path / "boat"
    names = _files(folder)
    for name in ("displacement", "normal", "foam"):
        assert f"{name}.1001.exr" in names and f"wake_{name}.1004.exr" in names
    attributes = read_exr_attributes(folder / "wake_displacement.1003.exr")
    x0, y0, size, resolution = wake_region(preset)
    assert (x0, y0, size, resolution) == (-48.0, -40.0, 96.0, 64)
    assert attributes["oceanfield.wake_origin_x"] == -48.0
    assert attributes["oceanfield.wake_origin_y"] == -40.0
    assert attributes["oceanfield.wake_size"] == 96.0 == attributes["oceanfield.tile_size"]
    assert attributes["oceanfield.wake_resolution"] == 64
    assert attributes["oceanfield.band"] == "wake" and attributes["oceanfield.map"] == "displacement"
    # the file holds Wake.frame's height, y = 0 in the bottom row, Y-up: G is the height
    channels, _ = read_exr(folder / "wake_displacement.1003.exr")
    fields = preset_wake(preset).frame(preset.time.frame_time(1003))
    assert channels["G"].shape == (64, 64)
    np.testing.assert_allclose(channels["G"][::-1], fields.height, atol=2e-3 * float(np.abs(fields.height).max()))
    assert float(np.abs(fields.height).max()) > 1e-3  # a wake is there (metres)
    foam, _ = read_exr(folder / "wake_foam.1003.exr")
    assert float(next(iter(foam.values())).max()) > 0.1  # the trail behind the stern


def test_a_missing_wake_file_makes_its_frame_incomplete(tmp_path, boat):
    plan = plan_render(load_preset(boat), root=tmp_path)
    render(plan, workers=1)
    assert frame_is_complete(plan, 1002)
    (tmp_path / "boat" / "wake_normal.1002.exr").unlink()
    assert not frame_is_complete(plan, 1002)
    again = render(plan, workers=1)
    assert again.written == [1002] and again.skipped == [1001, 1003, 1004]


def test_any_frame_alone_any_chunk_and_workers_give_the_same_bytes(tmp_path, boat):
    """A farm renders the wake in any order: frames alone, chunks and two local workers
    write byte-identical files to one full run (the wake is a pure function of time)."""
    preset = load_preset(boat)
    render(plan_render(preset, root=tmp_path / "full"), workers=1)
    for frame in (1003, 1001):  # out of order, each alone
        render(plan_render(preset, root=tmp_path / "alone", frames=str(frame)), workers=1)
    for chunk in ("2/2", "1/2"):
        assert main(["render", str(boat), "--chunk", chunk, "--out", str(tmp_path / "chunks"), "--workers", "1"]) == 0
    render(plan_render(preset, root=tmp_path / "workers"), workers=2)
    full = tmp_path / "full" / "boat"
    _same_files(tmp_path / "alone" / "boat", full)
    _same_files(full, tmp_path / "chunks" / "boat")
    _same_files(full, tmp_path / "workers" / "boat")


def test_dask_tasks_write_the_same_wake(tmp_path, boat):
    distributed = pytest.importorskip("distributed")
    preset = load_preset(boat)
    render(plan_render(preset, root=tmp_path / "full"), workers=1)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False,
                                  dashboard_address=":0") as cluster, distributed.Client(cluster) as client:
        summary = render(plan_render(preset, root=tmp_path / "dask"), scheduler=client)
    assert summary.ok
    _same_files(tmp_path / "full" / "boat", tmp_path / "dask" / "boat")


def test_the_sea_under_the_wake_is_the_sea_without_vessels(tmp_path, boat, preset_file):
    """Adding vessels adds files; the sea's own maps keep their pixels."""
    render(plan_render(load_preset(boat), root=tmp_path / "with"), workers=1)
    bare = preset_file("bare", settings={**BOAT, "vessels": [], "wake": {}})
    render(plan_render(load_preset(bare), root=tmp_path / "without"), workers=1)
    for name in ("displacement.1002.exr", "foam.1004.exr"):
        with_vessels, _ = read_exr(tmp_path / "with" / "boat" / name)
        without, _ = read_exr(tmp_path / "without" / "bare" / name)
        for channel in without:
            np.testing.assert_array_equal(with_vessels[channel], without[channel])
    assert not any(name.startswith("wake_") for name in _files(tmp_path / "without" / "bare"))


def test_analyze_on_a_folder_with_a_wake_takes_the_sea(tmp_path, boat):
    """`oceanfield analyze FOLDER` picks the sea's displacement, not wake_displacement."""
    from oceanfield.io.sequence import folder_sequence

    render(plan_render(load_preset(boat), root=tmp_path), workers=1)
    assert Path(folder_sequence(str(tmp_path / "boat"))).name == "displacement.####.exr"


def test_the_estimate_counts_the_wake(boat):
    """The up-front estimate adds the wake's padded lattice to each worker's memory."""
    import dataclasses

    from oceanfield.render.estimate import _WAKE_BYTES_PER_TEXEL, estimate_work

    preset = load_preset(boat)
    with_wake = estimate_work(preset, 4, 1, 1)
    sea_only = estimate_work(dataclasses.replace(preset, vessels=()), 4, 1, 1)
    lattice = preset_wake(preset).lattice_size
    assert with_wake.memory_bytes - sea_only.memory_bytes == lattice**2 * _WAKE_BYTES_PER_TEXEL
    assert with_wake.total_seconds > 0


def test_png_wake_maps_take_a_range_from_the_drafts(tmp_path, preset_file):
    """A calm sea's PNG range (±2.5 Hs) would clip a boat's wake: the wake's is ±4 drafts."""
    from oceanfield.io.png import read_png16

    boat = preset_file("calm", settings={**BOAT, "extends": "glassy_calm", "output": {"format": "png"}})
    preset = load_preset(boat)
    render(plan_render(preset, root=tmp_path, frames="1003"), workers=1)
    height, value_range = read_png16(tmp_path / "calm" / "wake_displacement.1003.png")
    assert value_range == pytest.approx((-4 * 0.4, 4 * 0.4))
    exact = preset_wake(preset).frame(preset.time.frame_time(1003)).height
    assert float(np.abs(exact).max()) < 4 * 0.4  # nothing clipped
    np.testing.assert_allclose(height[..., 1][::-1], exact, atol=2 * 1.6 / 65535 + 1e-6)  # G: the height, 16 bits
