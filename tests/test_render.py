"""Tests for oceanfield.render (plan, job, writing): files read back, chunks, processes, Dask, resume, manifest.

Every written map is compared with the in-memory fields of the same frame,
``Ocean.from_preset(preset).frame(preset.time.frame_time(frame))`` passed through
`maps.map_channels`, read back by independent readers:

- `oceanfield.io.exr.read_exr` (the OpenEXR 3.x ``File`` API);
- the `OpenEXR` package's legacy ``InputFile`` API (raw channel bytes and pixel types);
- `_raw_header` below, which parses the header attributes and channel list straight from
  the published file layout ("OpenEXR File Layout", openexr.com), because the legacy API
  returns None for ``double`` attributes. (imageio has no EXR backend on this machine.)
"""

from __future__ import annotations

import json
import shutil
import struct
import time
from pathlib import Path

import numpy as np
import OpenEXR
import pytest

import oceanfield
from oceanfield.render import job as render_module
from oceanfield.render import workers as workers_module
from oceanfield.io.exr import exr_is_complete, read_exr, read_exr_attributes
from oceanfield.io.png import LEVELS, read_png16, sidecar_path
from oceanfield.surface.maps import map_channels
from oceanfield.preset import load_preset
from oceanfield.render import MANIFEST_NAME, plan_render, render, render_hash
from oceanfield.surface.synth import Ocean

#: Unit roundoff of IEEE 754 binary16 (11-bit significand): round-to-nearest keeps a
#: normal number within a relative 2**-11 (IEEE 754-2008, 3.6).
HALF_RTOL = 2.0**-11
#: Subnormal halves are spaced 2**-24 apart, so rounding near zero errs by at most 2**-25
#: (IEEE 754-2008, binary16).
HALF_ATOL = 2.0**-25
#: Machine epsilon of float32 (IEEE 754 binary32): 2**-23.
FLOAT32_EPS = float(np.finfo(np.float32).eps)

_ALL_MAPS = "maps=[displacement,normal,foam,height,velocity]"
#: Foam only forms where the Jacobian falls below the threshold; 0.9 gives this sea some.
_SOME_FOAM = "surface.fold_threshold=0.9"
_VECTOR_MAPS = ("displacement", "normal", "velocity")
_EXR_MAGIC = (20000630).to_bytes(4, "little")
_EXR_PIXEL_TYPES = {0: "UINT", 1: "HALF", 2: "FLOAT"}  # "OpenEXR File Layout", chlist


# -- helpers -----------------------------------------------------------------------------


def _render(preset, root: Path, *, frames: str | None = None, chunk: str | None = None, **options):
    plan = plan_render(preset, root=root, frames=frames, chunk=chunk)
    return plan, render(plan, workers=options.pop("workers", 1), **options)


def _expected_maps(preset, frame: int, ocean: Ocean | None = None) -> dict[str, dict[str, np.ndarray]]:
    """The maps of one frame computed in memory, as the render job should have written them."""
    ocean = ocean or Ocean.from_preset(preset)
    fields = ocean.frame(preset.time.frame_time(frame))
    scene = preset.scene
    return {
        name: {channel: array.copy() for channel, array in map_channels(
            fields, name, metres_per_unit=scene.metres_per_unit, up_axis=scene.up_axis).items()}
        for name in preset.maps
    }


def _legacy_read(path: Path) -> tuple[dict[str, np.ndarray], dict[str, str]]:
    """Channels (as float32) and pixel types through the legacy ``OpenEXR.InputFile`` API."""
    legacy = OpenEXR.InputFile(str(path))
    try:
        header = legacy.header()
        window = header["dataWindow"]
        shape = (window.max.y - window.min.y + 1, window.max.x - window.min.x + 1)
        types = {name: str(channel).split()[0] for name, channel in header["channels"].items()}
        dtypes = {"HALF": np.float16, "FLOAT": np.float32}
        channels = {
            name: np.frombuffer(legacy.channel(name), dtypes[kind]).reshape(shape).astype(np.float32)
            for name, kind in types.items()
        }
    finally:
        legacy.close()
    return channels, types


def _raw_header(path: Path) -> tuple[dict[str, object], dict[str, str]]:
    """Header attributes and channel pixel types parsed from the bytes of the file.

    Layout ("OpenEXR File Layout", openexr.com): magic number, 4 version bytes, then
    attributes as ``name\\0 type\\0 int32 size, value`` until a NUL byte. A ``chlist``
    value is a run of ``name\\0 int32 pixel_type, uint8 pLinear, 3 reserved, int32
    xSampling, int32 ySampling`` ended by a NUL.
    """
    data = path.read_bytes()
    assert data[:4] == _EXR_MAGIC, f"{path.name} is not an OpenEXR file"
    position, attributes, types = 8, {}, {}
    while data[position] != 0:
        name_end = data.index(b"\0", position)
        type_end = data.index(b"\0", name_end + 1)
        name, kind = data[position:name_end].decode(), data[name_end + 1:type_end].decode()
        (size,) = struct.unpack("<i", data[type_end + 1:type_end + 5])
        value = data[type_end + 5:type_end + 5 + size]
        position = type_end + 5 + size
        if kind == "string":
            attributes[name] = value.decode("utf-8")
        elif kind == "int":
            attributes[name] = struct.unpack("<i", value)[0]
        elif kind == "double":
            attributes[name] = struct.unpack("<d", value)[0]
        elif kind == "chlist":
            at = 0
            while value[at] != 0:
                end = value.index(b"\0", at)
                (pixel_type,) = struct.unpack("<i", value[end + 1:end + 5])
                types[value[at:end].decode()] = _EXR_PIXEL_TYPES[pixel_type]
                at = end + 1 + 16
    return attributes, types


def _assert_stored(read: np.ndarray, expected: np.ndarray, precision: str, what: str) -> None:
    """A channel read back equals the in-memory one as the file's pixel type stores it."""
    if precision == "float":
        np.testing.assert_array_equal(read, expected, err_msg=what)
        return
    # Half: exactly the IEEE round-to-nearest of the float32 value, hence within 2**-11.
    np.testing.assert_array_equal(read, expected.astype(np.float16).astype(np.float32), err_msg=what)
    np.testing.assert_allclose(read, expected, rtol=HALF_RTOL, atol=HALF_ATOL, err_msg=what)


def _files_under(root: Path) -> dict[str, tuple[int, int]]:
    """Every file under ``root`` (hidden ones too) → (size, modification time in ns)."""
    return {str(p.relative_to(root)): (p.stat().st_size, p.stat().st_mtime_ns)
            for p in sorted(root.rglob("*")) if p.is_file()}


def _assert_same_files(a: Path, b: Path) -> None:
    """The frame files under two roots are byte-identical; if not, say what differs."""
    names_a = sorted(p.relative_to(a) for p in a.rglob("*.exr"))
    names_b = sorted(p.relative_to(b) for p in b.rglob("*.exr"))
    assert names_a == names_b and names_a
    for name in names_a:
        if (a / name).read_bytes() == (b / name).read_bytes():
            continue
        channels_a, attributes_a = read_exr(a / name)
        channels_b, attributes_b = read_exr(b / name)
        pixels = channels_a.keys() == channels_b.keys() and all(
            np.array_equal(channels_a[c], channels_b[c]) for c in channels_a)
        differing = {k: (attributes_a.get(k), attributes_b.get(k))
                     for k in attributes_a.keys() | attributes_b.keys()
                     if attributes_a.get(k) != attributes_b.get(k)}
        pytest.fail(f"{name}: files differ; pixel data {'equal' if pixels else 'DIFFER'}; "
                    f"attributes that differ: {differing}")


def _manifest(plan) -> dict:
    return json.loads((plan.folder / MANIFEST_NAME).read_text(encoding="utf-8"))


# -- EXR maps read back --------------------------------------------------------------------

_READ_BACK_CASES = {
    # half by default, displacement as float; metres, Y-up; also the multi-layer file
    "half-metres-yup-layers": (
        "output.precision=half", "output.precision_per_map={displacement: float}",
        "output.multilayer=true", "scene.metres_per_unit=1.0", "scene.up_axis=y",
    ),
    # float by default, normal and foam as half; centimetres, Z-up
    "float-centimetres-zup": (
        "output.precision=float", "output.precision_per_map={normal: half, foam: half}",
        "scene.metres_per_unit=0.01", "scene.up_axis=z",
    ),
}


@pytest.mark.parametrize("case", list(_READ_BACK_CASES))
def test_exr_maps_read_back_equal_the_fields(tmp_path, preset_file, case):
    preset = load_preset(preset_file(), overrides=(
        _ALL_MAPS, _SOME_FOAM, "time.time_offset_s=3.5", "time.last_frame=1002", *_READ_BACK_CASES[case]))
    plan, summary = _render(preset, tmp_path)
    assert summary.ok and summary.written == [1001, 1002]
    output, scene = preset.output, preset.scene
    ocean = Ocean.from_preset(preset)
    foam_seen = False
    for frame in plan.frames:
        expected = _expected_maps(preset, frame, ocean)
        foam_seen |= bool(expected["foam"]["Y"].max() > 0)
        files = plan.files(frame)
        assert set(files) == set(preset.maps) | ({"layers"} if output.multilayer else set())
        for name, path in files.items():
            if name == "layers":
                wanted = {f"{m}.{c}": a for m, chans in expected.items() for c, a in chans.items()}
                precision = {f"{m}.{c}": output.precision_for(m) for m in expected for c in expected[m]}
            else:
                wanted = expected[name]
                precision = dict.fromkeys(wanted, output.precision_for(name))
                assert set(wanted) == ({"R", "G", "B"} if name in _VECTOR_MAPS else {"Y"})
            kinds = {c: precision[c].upper() for c in wanted}
            # Reader 1: the 3.x File API, values and pixel types.
            channels, attributes = read_exr(path)
            assert set(channels) == set(wanted), path.name
            for channel, array in wanted.items():
                _assert_stored(channels[channel], array, precision[channel], f"{path.name} {channel}")
            with OpenEXR.File(str(path), separate_channels=True) as exr:
                stored = {c: exr.channels()[c].pixels.dtype for c in wanted}
            assert stored == {c: np.dtype(np.float16 if k == "HALF" else np.float32) for c, k in kinds.items()}
            # Reader 2: the legacy InputFile API.
            legacy, legacy_kinds = _legacy_read(path)
            assert legacy_kinds == kinds, path.name
            for channel, array in wanted.items():
                _assert_stored(legacy[channel], array, precision[channel], f"legacy {path.name} {channel}")
            # Header attributes, through read_exr and from the raw bytes.
            raw, raw_kinds = _raw_header(path)
            assert raw_kinds == kinds
            want = {
                "oceanfield.version": oceanfield.__version__,
                "oceanfield.map": name,
                "oceanfield.frame": frame,
                "oceanfield.time_s": 3.5 + (frame - 1001) / 24.0,
                "oceanfield.fps": 24.0,
                "oceanfield.tile_size": 128.0 / scene.metres_per_unit,  # scene units
                "oceanfield.metres_per_unit": scene.metres_per_unit,
                "oceanfield.up_axis": scene.up_axis,
                "oceanfield.seed": 4,
                "oceanfield.preset_hash": render_hash(preset),
                "oceanfield.preset": "tiny",
            }
            for key, value in want.items():
                for source, got in (("read_exr", attributes), ("raw header", raw)):
                    if isinstance(value, float):
                        assert got[key] == pytest.approx(value, rel=1e-15), (source, key)
                    else:
                        assert got[key] == value, (source, key)
    assert foam_seen, "the fold threshold should give this sea some foam to compare"


def test_axis_mapping_and_scene_units(tmp_path, preset_file):
    """Y-up: displacement G is the height; Z-up: B. Centimetres are metres × 100."""
    path = preset_file()
    common = ("maps=[displacement,height]", "output.precision=float", "time.last_frame=1001")
    metres_y = load_preset(path, overrides=(*common, "scene.up_axis=y", "scene.metres_per_unit=1.0"))
    centimetres_z = load_preset(path, overrides=(*common, "scene.up_axis=z", "scene.metres_per_unit=0.01"))
    fields = Ocean.from_preset(metres_y).frame(metres_y.time.frame_time(1001))
    plan_y, _ = _render(metres_y, tmp_path / "y")
    plan_z, _ = _render(centimetres_z, tmp_path / "z")
    y, _ = read_exr(plan_y.files(1001)["displacement"])
    z, _ = read_exr(plan_z.files(1001)["displacement"])
    height_y, _ = read_exr(plan_y.files(1001)["height"])
    height_z, _ = read_exr(plan_z.files(1001)["height"])
    # Y-up maps internal (x, y, z) to scene (x, z, -y) (DEVELOPERS.md, scene axes); file
    # rows run from the tile's last row down to y = 0 (surface.maps, image rows).
    np.testing.assert_array_equal(y["G"], fields.height[::-1])
    np.testing.assert_array_equal(y["R"], fields.displacement_x[::-1])
    np.testing.assert_array_equal(y["B"], -fields.displacement_y[::-1])
    np.testing.assert_array_equal(height_y["Y"], y["G"])
    # Z-up keeps the axes; lengths divided by 0.01 m per unit: one float32 rounding each.
    for channel, internal in (("R", fields.displacement_x), ("G", fields.displacement_y), ("B", fields.height)):
        np.testing.assert_allclose(z[channel], internal[::-1].astype(np.float64) / 0.01, rtol=FLOAT32_EPS)
    np.testing.assert_array_equal(height_z["Y"], z["B"])
    np.testing.assert_allclose(z["B"], 100.0 * y["G"].astype(np.float64), rtol=FLOAT32_EPS)
    assert np.abs(z["B"]).max() > 10.0  # centimetres: this 1 m sea spans tens of units


# -- PNG -------------------------------------------------------------------------------------


def test_png_sequence_reads_back_within_a_quantisation_step(tmp_path, preset_file):
    preset = load_preset(preset_file(), overrides=(
        "output.format=png", _ALL_MAPS, _SOME_FOAM, "time.last_frame=1003"))
    plan, summary = _render(preset, tmp_path)
    assert summary.ok and len(summary.written) == 3
    ocean = Ocean.from_preset(preset)
    ranges: dict[str, set] = {}
    for frame in plan.frames:
        expected = _expected_maps(preset, frame, ocean)
        for name, path in plan.files(frame).items():
            data = path.read_bytes()
            # PNG signature and IHDR (PNG spec, 5.2 and 11.2.2): bit depth at byte 24,
            # colour type at byte 25 (0 grey, 2 RGB).
            assert data[:8] == b"\x89PNG\r\n\x1a\n" and data[12:16] == b"IHDR"
            assert data[24] == 16
            assert data[25] == (2 if name in _VECTOR_MAPS else 0)
            assert sidecar_path(path).is_file()
            values, (lo, hi) = read_png16(path)
            ranges.setdefault(name, set()).add((lo, hi))
            chans = expected[name]
            want = np.stack([chans[c] for c in "RGB"], axis=-1) if name in _VECTOR_MAPS else chans["Y"]
            assert lo <= want.min() and want.max() <= hi, f"{path.name}: the range clips the data"
            # Linear 16-bit quantisation: within half a step, plus float32 rounding of the
            # value read back (oceanfield.io.png module notes).
            tolerance = (hi - lo) / LEVELS / 2 + FLOAT32_EPS * max(abs(lo), abs(hi))
            assert np.abs(values.astype(np.float64) - want).max() <= tolerance, path.name
    # One fixed range per map over the whole sequence.
    assert {name: len(found) for name, found in ranges.items()} == dict.fromkeys(preset.maps, 1)
    assert ranges["normal"] == {(-1.0, 1.0)} and ranges["foam"] == {(0.0, 1.0)}
    for name in ("displacement", "height", "velocity"):
        ((lo, hi),) = ranges[name]
        assert lo == -hi and hi > 0
    # A damaged PNG (truncated) or a lost sidecar makes its frame be redone.
    damaged = plan.files(1002)["normal"]
    damaged.write_bytes(damaged.read_bytes()[:100])
    sidecar_path(plan.files(1003)["foam"]).unlink()
    again = render(plan, workers=1)
    assert (again.written, again.skipped) == ([1002, 1003], [1001])
    values, _ = read_png16(damaged)
    assert values.shape == (64, 64, 3)


# -- chunks, processes, Dask -----------------------------------------------------------------


def test_chunks_and_worker_processes_give_identical_files(tmp_path, preset_file):
    preset = load_preset(preset_file(settings={"time": {"last_frame": 1024}}))
    frames = list(range(1001, 1025))
    _, whole = _render(preset, tmp_path / "whole")
    assert whole.written == frames
    for index in range(3):
        plan, summary = _render(preset, tmp_path / "chunks", chunk=f"{index + 1}/3")
        assert summary.written == frames[index * 8:(index + 1) * 8]
    assert _manifest(plan)["frames_done"] == frames  # merged across the chunk runs
    _, parallel = _render(preset, tmp_path / "processes", workers=2)
    assert parallel.written == frames and not parallel.failed
    _assert_same_files(tmp_path / "whole", tmp_path / "chunks")
    _assert_same_files(tmp_path / "whole", tmp_path / "processes")


def test_dask_cluster_renders_the_same_files(tmp_path, preset_file):
    distributed = pytest.importorskip("distributed")
    from oceanfield.cli import main

    path = preset_file()  # six frames
    preset = load_preset(path)
    _, local = _render(preset, tmp_path / "local")
    assert local.ok
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=":0") as cluster, distributed.Client(cluster) as client:
        _, on_cluster = _render(preset, tmp_path / "client", scheduler=client)
        status = main(["render", str(path), "--out", str(tmp_path / "address"),
                       "--scheduler", cluster.scheduler_address])
    assert on_cluster.written == list(range(1001, 1007)) and not on_cluster.failed
    assert status == 0
    _assert_same_files(tmp_path / "local", tmp_path / "client")
    _assert_same_files(tmp_path / "local", tmp_path / "address")


_ORIGINAL_DASK_FRAMES = workers_module._dask_frames


def _dask_frames_failing_on_1001(plan, frames, threads, overwrite, stop_event=None):
    """A cluster task that dies for the group holding frame 1001, and dies last."""
    if 1001 in frames:
        time.sleep(1.0)
        raise RuntimeError("simulated worker crash")
    return _ORIGINAL_DASK_FRAMES(plan, frames, threads, overwrite, stop_event)


def test_a_failed_cluster_task_fails_its_own_frames(tmp_path, preset_file, monkeypatch):
    distributed = pytest.importorskip("distributed")
    monkeypatch.setattr(workers_module, "_dask_frames", _dask_frames_failing_on_1001)
    preset = load_preset(preset_file())
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False,
                                  dashboard_address=":0") as cluster, distributed.Client(cluster) as client:
        _, summary = _render(preset, tmp_path, scheduler=client)
    assert list(summary.failed) == [1001]
    assert "simulated worker crash" in summary.failed[1001]
    assert summary.written == [1002, 1003, 1004, 1005, 1006]
    assert not summary.ok


# -- resume and manifest ---------------------------------------------------------------------


def test_resume_redoes_damaged_frames_and_skips_complete_ones(tmp_path, preset_file):
    path = preset_file()
    preset = load_preset(path)
    plan, first = _render(preset, tmp_path / "out")
    assert first.ok and len(first.written) == 6
    originals = {p: p.read_bytes() for p in plan.folder.glob("*.exr")}
    truncated = plan.files(1002)["displacement"]
    truncated.write_bytes(originals[truncated][: len(originals[truncated]) // 2])
    assert not exr_is_complete(truncated, decode=False)
    plan.files(1004)["foam"].unlink()
    # A whole file from another seed has another render hash in its header.
    other, _ = _render(load_preset(path, overrides=("seed=99",)), tmp_path / "other", frames="1005")
    shutil.copyfile(other.files(1005)["normal"], plan.files(1005)["normal"])

    second = render(plan, workers=1)
    assert second.written == [1002, 1004, 1005]
    assert second.skipped == [1001, 1003, 1006]
    assert not second.failed and second.ok
    assert second.line().startswith("3 written, 3 skipped (already complete), 0 failed of 6 frames")
    assert {p: p.read_bytes() for p in plan.folder.glob("*.exr")} == originals

    third = render(plan, workers=1)
    assert (third.written, third.skipped) == ([], list(range(1001, 1007)))


def test_manifest_records_the_render_and_guards_the_folder(tmp_path, preset_file):
    path = preset_file()
    preset = load_preset(path, overrides=("time.last_frame=1004",))
    for chunk in ("1/2", "2/2"):
        plan, _ = _render(preset, tmp_path, chunk=chunk)
    manifest = _manifest(plan)
    assert manifest["preset_name"] == "tiny"
    assert manifest["render_hash"] == render_hash(preset)
    assert manifest["render_hash"] == read_exr_attributes(plan.files(1003)["normal"])["oceanfield.preset_hash"]
    assert manifest["frames_done"] == [1001, 1002, 1003, 1004]
    assert manifest["maps"] == ["displacement", "normal", "foam"]
    # The recorded preset is the resolved one: it loads back to the same render hash.
    recorded = tmp_path / "recorded.yaml"
    recorded.write_text(manifest["preset"], encoding="utf-8")
    assert render_hash(load_preset(recorded)) == render_hash(preset)

    # Extending the sequence keeps the frames already rendered.
    longer = load_preset(path)
    assert render_hash(longer) == render_hash(preset)
    plan, extended = _render(longer, tmp_path)
    assert (extended.written, extended.skipped) == ([1005, 1006], [1001, 1002, 1003, 1004])
    assert _manifest(plan)["frames_done"] == list(range(1001, 1007))

    # Another sea into the same folder is refused and writes nothing.
    reseeded = load_preset(path, overrides=("seed=5",))
    assert render_hash(reseeded) != render_hash(preset)
    before = _files_under(tmp_path)
    with pytest.raises(ValueError, match=r"holds frames rendered from tiny .*--overwrite"):
        _render(reseeded, tmp_path)
    assert _files_under(tmp_path) == before

    # ... unless overwrite: the frames asked for are redone and the old settings' other
    # frames removed (a sequence never mixes two settings), said in one line.
    said: list[str] = []
    plan, replaced = _render(reseeded, tmp_path, frames="1001-1003", overwrite=True, announce=said.append)
    assert replaced.written == [1001, 1002, 1003]
    assert said == [f"--overwrite: removed 6 frames (1001–1006) rendered from tiny with different settings "
                    f"from {plan.folder}"]
    assert sorted(p.name for p in plan.folder.glob("*.exr")) == sorted(
        f"{m}.{f}.exr" for m in ("displacement", "normal", "foam") for f in (1001, 1002, 1003))
    manifest = _manifest(plan)
    assert manifest["render_hash"] == render_hash(reseeded)
    assert manifest["frames_done"] == [1001, 1002, 1003]
    assert manifest["frame_hashes"] == {str(f): render_hash(reseeded) for f in (1001, 1002, 1003)}


def test_frames_a_killed_run_left_unrecorded_still_guard_the_folder(tmp_path, preset_file):
    """A run killed before it recorded its frames leaves them unlisted in the manifest:
    their headers still name their settings, so other settings are refused, and
    ``overwrite`` removes them."""
    path = preset_file()
    plan, first = _render(load_preset(path), tmp_path, frames="1001-1004")
    assert first.ok
    manifest = _manifest(plan)
    manifest.update(frames_done=[], frame_hashes={})  # as a SIGKILLed first run leaves it
    (plan.folder / MANIFEST_NAME).write_text(json.dumps(manifest), encoding="utf-8")
    reseeded = load_preset(path, overrides=("seed=5",))
    with pytest.raises(ValueError, match=r"holds frames rendered from tiny with different settings "
                                         r"\(4 frames \(1001–1004\)\).*--overwrite"):
        _render(reseeded, tmp_path, frames="1005-1006")
    plan, second = _render(reseeded, tmp_path, frames="1005-1006", overwrite=True)
    assert second.written == [1005, 1006]
    assert sorted({p.name.split(".")[1] for p in plan.folder.glob("*.exr")}) == ["1005", "1006"]


# -- tiling and looping ----------------------------------------------------------------------


_SEAM_RMS_LIMIT = 1.5


def _seam_ratio(array: np.ndarray, axis: int) -> tuple[float, float]:
    """(largest seam step / largest interior step, RMS seam step / RMS interior step)."""
    interior = np.abs(np.diff(array.astype(np.float64), axis=axis))
    seam = np.abs(np.take(array, 0, axis=axis).astype(np.float64) - np.take(array, -1, axis=axis))
    rms = float(np.sqrt(np.mean(seam**2)) / np.sqrt(np.mean(interior**2)))
    return float(seam.max() / interior.max()), rms


def test_written_displacement_tiles_seamlessly(tmp_path, preset_file):
    """Across the tile's edge the maps step no more than between neighbouring texels.

    A periodic, statistically uniform field steps across its seam like anywhere else, so
    the seam's RMS step matches the interior's (bounds 0.5-1.5: common practice, the seam
    holds only a few independent wavelengths; measured 0.66-1.09 here), and its largest
    step stays within the interior's largest. A crop of the same map, which is not
    periodic, fails the check (measured 2.3).
    """
    preset = load_preset(preset_file(), overrides=("maps=[displacement]", "output.precision=float",
                                                   "time.last_frame=1001"))
    plan, _ = _render(preset, tmp_path)
    channels, _ = read_exr(plan.files(1001)["displacement"])
    for name, array in channels.items():
        for axis in (0, 1):
            largest, rms = _seam_ratio(array, axis)
            assert largest <= 1.0, (name, axis, largest)
            assert 0.5 < rms < _SEAM_RMS_LIMIT, (name, axis, rms)
    crop = channels["G"][:, : 3 * 64 // 4]  # Y-up: G is the height
    assert _seam_ratio(crop, 1)[1] > _SEAM_RMS_LIMIT


def test_looping_sequence_repeats_after_its_period(tmp_path, preset_file):
    """With a 2 s loop at 24 fps, frame first + 48 holds the pixels of frame first.

    The two frames are synthesised at t and t + T with every ω a multiple of 2π/T, so
    they differ only by float32 rounding in the kernels and transforms: within 8 float32
    ulps of the map's largest value (common practice), and a half channel within one
    further half ulp (2**-10 relative, IEEE 754 binary16).
    """
    preset = load_preset(preset_file(), overrides=(
        "time.loop_period_s=2.0", "time.last_frame=1049", "output.precision=half",
        "output.precision_per_map={displacement: float}"))
    plan, summary = _render(preset, tmp_path, frames="1001,1025,1049")
    assert summary.ok
    for name in preset.maps:
        first, _ = read_exr(plan.files(1001)[name])
        looped, _ = read_exr(plan.files(1049)[name])
        halfway, _ = read_exr(plan.files(1025)[name])
        for channel, array in first.items():
            peak = float(np.abs(array).max())
            if peak == 0.0:
                continue  # foam may be empty on this gentle sea
            half = preset.output.precision_for(name) == "half"
            tolerance = peak * (8 * FLOAT32_EPS + (2.0**-10 if half else 0.0))
            assert np.abs(looped[channel] - array).max() <= tolerance, (name, channel)
            # Half a period on, the sea has moved: the check can fail.
            assert np.abs(halfway[channel] - array).max() > 10 * tolerance, (name, channel)


# -- default workers -------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("resolution", "frames", "cores", "memory", "expected"),
    [
        # measured on 2 cores (render.job's table): short jobs on one process, long ones on two
        (256, 96, 2, None, 1),
        (256, 480, 2, None, 2),
        (512, 48, 2, None, 1),
        (512, 240, 2, None, 2),
        (1024, 24, 2, None, 1),
        (1024, 96, 2, None, 2),
        (2048, 8, 2, None, 1),
        (2048, 32, 2, None, 1),
        (512, 200, 16, None, 3),    # 40 + 9·4 = 76 frames a further worker
        (1024, 200, 16, None, 5),   # 49 frames a further worker
        (2048, 200, 16, None, 5),   # 42.25
        (512, 10, 16, None, 1),     # too few frames to repay a second process's start
        (1024, 200, 16, 2 * 72 * 1024**2, 2),  # memory for two workers only
    ],
)
def test_default_workers_follow_the_job_and_the_machine(preset_file, resolution, frames, cores, memory, expected):
    preset = load_preset(preset_file(), overrides=(f"tile.resolution={resolution}",
                                                   f"time.last_frame={1000 + frames}"))
    plan = plan_render(preset, root=Path("unused"))
    assert render_module.default_workers(plan, cores=cores, memory=memory) == expected


def test_a_new_file_layout_makes_old_frames_stale(monkeypatch):
    """Frames laid out another way (e.g. rows in the other order) must never count as done."""
    import oceanfield.render.plan as plan_module

    preset = load_preset("moderate_breeze")
    now = render_hash(preset)
    monkeypatch.setattr(plan_module, "FILE_LAYOUT", plan_module.FILE_LAYOUT - 1)
    assert render_hash(preset) != now


def test_a_banded_render_hash_changes_with_how_its_foam_is_shared(monkeypatch):
    """Frames whose foam was shared among bands another way are never taken as done
    (plan.BAND_FOAM is in a banded preset's hash); a single tile's hash ignores it."""
    from oceanfield.render import plan as plan_module

    banded, single = load_preset("open_ocean_horizon"), load_preset("moderate_breeze")
    before = render_hash(banded), render_hash(single)
    monkeypatch.setattr(plan_module, "BAND_FOAM", plan_module.BAND_FOAM + 1)
    assert render_hash(banded) != before[0]
    assert render_hash(single) == before[1]


def test_a_composite_render_hash_changes_with_how_the_composite_is_summed(monkeypatch):
    """Composite maps summed another way (exact chirp z before non-uniform FFTs: the same to
    1e-6 σ, not the same bits) are never mixed with new ones (plan.COMPOSITE_SUMS is in the
    hash of a banded preset that writes a composite); bands without one keep their hash."""
    from oceanfield.render import plan as plan_module

    composite = load_preset("open_ocean_horizon")
    bands_only = load_preset("open_ocean_horizon", overrides=["bands.composite_extent_m=null"])
    before = render_hash(composite), render_hash(bands_only)
    monkeypatch.setattr(plan_module, "COMPOSITE_SUMS", plan_module.COMPOSITE_SUMS + 1)
    assert render_hash(composite) != before[0]
    assert render_hash(bands_only) == before[1]
