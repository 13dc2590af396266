"""Writing a frame's files: encode its fields, then write them while the next frame computes.

After ``synth`` computes a frame, :func:`encode_frame` turns its ``Fields`` into
:class:`FileJob` s (scene axes, scene units, pixel types, header attributes); a writer
(a *sink*) writes them with :func:`write_jobs`, each file atomically, and reports the
frame as a :class:`FrameResult`. The sink is a thread of the rendering process: the
OpenEXR binding releases Python's lock while it compresses on its own threads. Which
frames to render, where and by whom is the render job's business (``job``); which files a frame has is the plan's
(``plan``). It knows nothing of formulas.
"""

from __future__ import annotations

import errno
import math
import os
import queue
import threading
import time
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable, Iterable

import numpy as np

from .plan import ATTRIBUTE_PREFIX, LAYERS_MAP, RenderPlan

__all__ = [
    "FrameResult",
    "FileJob",
    "encode_frame",
    "write_jobs",
    "render_frame_files",
]

_PNG_RANGE_HEIGHTS = 2.5  # PNG value range: ± this many Hs (common practice: crests rarely pass 1.3 Hs)
#: A wake's PNG value range: ± this many of the deepest draft (common practice: a hull at
#: rest sinks the water by its draft, and the linear wake's crests stay within a draft or two).
_PNG_RANGE_DRAFTS = 4.0



@dataclass(frozen=True)
class FrameResult:
    """What happened to one frame: ``written``, ``skipped`` (already complete) or ``failed``.

    ``fatal`` marks a failure no later frame can escape (the disk is full or read-only):
    the worker that meets one stops rendering.
    """

    frame: int
    status: str
    seconds: float = 0.0
    error: str = ""
    fatal: bool = False


# -- one frame's files -------------------------------------------------------------------------


def _attributes(plan: RenderPlan, frame: int, map_name: str, tile_size: float | None = None) -> dict[str, Any]:
    from .. import __version__

    preset = plan.preset
    p = ATTRIBUTE_PREFIX
    size = preset.tile.size_m if tile_size is None else tile_size
    return {
        f"{p}version": __version__,
        f"{p}map": map_name,
        f"{p}frame": int(frame),
        f"{p}time_s": float(preset.time.frame_time(frame)),
        f"{p}fps": float(preset.time.fps),
        f"{p}tile_size": float(size / preset.scene.metres_per_unit),
        f"{p}metres_per_unit": float(preset.scene.metres_per_unit),
        f"{p}up_axis": preset.scene.up_axis,
        f"{p}seed": int(preset.seed) if preset.seed < 2**31 else str(preset.seed),
        f"{p}preset_hash": plan.hash,
        f"{p}preset": preset.name,
    }


def _png_range(plan: RenderPlan, map_name: str, scale: dict[str, float], *, wake: bool = False) -> tuple[float, float]:
    """A fixed value range for a PNG map over the whole sequence (stored in its sidecar);
    ``wake``: a wake map's (``wake_<map>``), from the vessels' drafts, not the sea's Hs."""
    if map_name == "normal":
        return (-1.0, 1.0)
    if map_name == "foam":
        return (0.0, 1.0)
    reach = scale[("wake_" if wake else "") + ("velocity" if map_name == "velocity" else "length")]
    return (-reach, reach)


def _png_scales(preset) -> dict[str, float]:
    from ..preset.schema import to_sea_state

    stats = to_sea_state(preset).statistics()
    lateral = max(1.0, preset.surface.lateral_factor)
    length = _PNG_RANGE_HEIGHTS * stats.hs * lateral / preset.scene.metres_per_unit
    scales = {"length": length, "velocity": length * 2.0 * math.pi / stats.tm02}
    if preset.vessels:
        wake = _PNG_RANGE_DRAFTS * max(v.draft_m for v in preset.vessels) * lateral / preset.scene.metres_per_unit
        scales.update(wake_length=max(wake, 1e-3 / preset.scene.metres_per_unit),
                      wake_velocity=max(wake, 1e-3 / preset.scene.metres_per_unit) * 2.0 * math.pi / stats.tm02)
    return scales


@dataclass(frozen=True)
class FileJob:
    """One file of a frame, encoded and ready to write (no physics left to do).

    For EXR, ``channels`` holds each channel already in its pixel type (float16 or
    float32); for PNG, one float32 array under the key ``""`` and its ``value_range``.
    """

    kind: str
    path: Path
    channels: dict[str, np.ndarray]
    compression: str = "zip"
    attributes: dict[str, Any] | None = None
    value_range: tuple[float, float] | None = None


def encode_frame(plan: RenderPlan, frame: int, fields, png_scales: dict[str, float] | None = None) -> list[FileJob]:
    """Every file of one frame as :class:`FileJob` s: scene axes, scene units, pixel types."""
    from ..io.exr import to_pixels
    from ..surface.maps import map_channels, map_sources

    preset = plan.preset
    output, scene = preset.output, preset.scene
    jobs = []
    wake = _wake_fields(plan, fields)
    if wake is not None:
        fields = fields.sea
    banded = _banded_fields(plan, fields)
    for file_name, path in plan.files(frame).items():
        name, tile_size = file_name, None
        if wake is not None and file_name in wake:  # wake_<map>: the wake's fields on its region
            fields, name, tile_size = wake[file_name]
        elif banded is not None:  # band<b>_<map> or composite_<map>: that band's fields and size
            fields, name, tile_size = banded[file_name]
        if output.format == "exr":
            # Views into the frame, converted to pixels in one pass each (no float32 copies).
            layers = preset.maps if name == LAYERS_MAP else (name,)
            pixels = {}
            for layer in layers:
                sources = map_sources(fields, layer, metres_per_unit=scene.metres_per_unit, up_axis=scene.up_axis)
                for channel, source in sources.items():
                    channel = f"{layer}.{channel}" if name == LAYERS_MAP else channel
                    pixels[channel] = to_pixels(channel, source.array, output.precision_for(layer),
                                                negate=source.negate, divisor=source.divisor)
            attributes = _attributes(plan, frame, name, tile_size)
            if wake is not None and file_name in wake:
                attributes.update(_wake_attributes(plan))
            elif banded is not None:
                attributes[f"{ATTRIBUTE_PREFIX}band"] = file_name.split("_")[0]  # band<b> or composite
            jobs.append(FileJob("exr", path, pixels, output.compression, attributes))
        else:
            channels = map_channels(fields, name, metres_per_unit=scene.metres_per_unit, up_axis=scene.up_axis)
            arrays = list(channels.values())
            array = np.stack(arrays, axis=-1) if len(arrays) > 1 else arrays[0]
            scales = png_scales if png_scales is not None else _png_scales(preset)
            is_wake = wake is not None and file_name in wake
            jobs.append(FileJob("png", path, {"": array}, value_range=_png_range(plan, name, scales, wake=is_wake)))
    return jobs


def _banded_fields(plan: RenderPlan, frame_fields) -> dict[str, tuple[Any, str, float]] | None:
    """For a banded preset: file map name → (that band's fields, map, tile size in metres)."""
    if not plan.preset.bands.active:
        return None
    from ..preset.banding import band_map_names

    out = {}
    for file_name, band, name in band_map_names(plan.preset):
        if band is None:
            out[file_name] = (frame_fields.composite, name, frame_fields.composite_extent)
        else:
            out[file_name] = (frame_fields.bands[band], name, frame_fields.sizes[band])
    return out


def _wake_fields(plan: RenderPlan, frame_fields) -> dict[str, tuple[Any, str, float]] | None:
    """For a preset with vessels: wake file map name → (the wake's fields, map, region size in metres)."""
    if not plan.preset.vessels:
        return None
    from ..preset.vessels import wake_map_names, wake_region

    size = wake_region(plan.preset)[2]
    return {file_name: (frame_fields.wake, name, size) for file_name, name in wake_map_names(plan.preset, LAYERS_MAP)}


def _wake_attributes(plan: RenderPlan) -> dict[str, Any]:
    """Where a wake file lies over the tiled sea: its corner in tile axes and scene units
    (``wake_origin_x``, ``wake_origin_y``: the point of texel (0, 0), the file's bottom-left,
    where the tile's own texel (0, 0) is at 0, 0), its side (``tile_size``, ``wake_size``)
    and texels per side (``wake_resolution``); ``map`` is the map (``displacement``, ...), ``band`` is ``wake``."""
    from ..preset.vessels import wake_region

    x0, y0, size, resolution = wake_region(plan.preset)
    unit = plan.preset.scene.metres_per_unit
    p = ATTRIBUTE_PREFIX
    return {
        f"{p}wake_origin_x": float(x0 / unit),
        f"{p}wake_origin_y": float(y0 / unit),
        f"{p}wake_size": float(size / unit),
        f"{p}wake_resolution": int(resolution),
        f"{p}wake_lookback_s": float(plan.preset.wake.lookback_s),
        f"{p}wake_vessels": ",".join(v.name for v in plan.preset.vessels),
        f"{p}band": "wake",  # which part of the sea the file holds, as band<b> and composite do
    }


def write_jobs(jobs: Iterable[FileJob]) -> list[Path]:
    """Write encoded files, each atomically and all at once; returns the paths written.

    A frame's files go out on threads of their own: the file libraries release Python's
    lock, so one file's serial steps (opening, syncing, renaming, checking) overlap the
    others' compression (1024², three ZIP half files on 2 cores: 78 ms against 87 ms one
    after another). On failure every other file is still finished or cleaned up (each is
    atomic) and the first failure, in the order given, is raised.
    """
    jobs = list(jobs)
    if len(jobs) <= 1:
        return [_write_job(job) for job in jobs]
    futures = [_file_threads().submit(_write_job, job) for job in jobs]
    errors = [future.exception() for future in futures]
    for error in errors:
        if error is not None:
            raise error
    return [future.result() for future in futures]


def _write_job(job: FileJob) -> Path:
    from ..io.exr import write_exr
    from ..io.png import write_png16

    job.path.parent.mkdir(parents=True, exist_ok=True)
    if job.kind == "exr":
        precision = {c: ("half" if a.dtype == np.float16 else "float") for c, a in job.channels.items()}
        write_exr(job.path, job.channels, precision=precision, compression=job.compression,
                  attributes=job.attributes)
    else:
        write_png16(job.path, job.channels[""], value_range=job.value_range)
    return job.path


_FILE_THREADS: list[ThreadPoolExecutor] = []
_FILE_THREADS_LOCK = threading.Lock()


def _forget_file_threads() -> None:
    """In a forked child: none of the parent's threads exist there, nor its lock's holder."""
    global _FILE_THREADS_LOCK
    _FILE_THREADS_LOCK = threading.Lock()
    _FILE_THREADS.clear()


if hasattr(os, "register_at_fork"):
    os.register_at_fork(after_in_child=_forget_file_threads)


def _file_threads() -> ThreadPoolExecutor:
    """The process's file-writing threads (made on first use; a frame has a handful of files,
    and cluster tasks on threads of one process share them)."""
    with _FILE_THREADS_LOCK:
        if not _FILE_THREADS:
            _FILE_THREADS.append(ThreadPoolExecutor(max_workers=4, thread_name_prefix="oceanfield-file"))
        return _FILE_THREADS[0]


def render_frame_files(plan: RenderPlan, frame: int, fields, png_scales: dict[str, float] | None = None) -> list[Path]:
    """Write every file of one frame from its fields; returns the paths written."""
    return write_jobs(encode_frame(plan, frame, fields, png_scales))


# -- the writers ------------------------------------------------------------------------------


#: Write failures that every later frame would meet too: no space, quota, read-only.
_FATAL_ERRNOS = frozenset(getattr(errno, name) for name in ("ENOSPC", "EDQUOT", "EROFS") if hasattr(errno, name))


def _write_result(frame: int, jobs: list[FileJob], started: float,
                  write: Callable[[list[FileJob]], Any]) -> FrameResult:
    """Write one frame's files with ``write`` (:func:`write_jobs`) and say how it went."""
    try:
        write(jobs)
        return FrameResult(frame, "written", time.perf_counter() - started)
    except OSError as error:
        fatal = error.errno in _FATAL_ERRNOS
        return FrameResult(frame, "failed", time.perf_counter() - started, str(error), fatal)
    except ValueError as error:
        return FrameResult(frame, "failed", time.perf_counter() - started, str(error))
    except Exception as error:  # noqa: BLE001 - a bug must fail the frame, not hang the render
        return FrameResult(frame, "failed", time.perf_counter() - started, f"{type(error).__name__}: {error}")


class _ThreadSink:
    """Writes encoded frames on a thread of this process (one frame queued at a time).

    The OpenEXR binding releases Python's lock while it writes and compresses a file's
    chunks on its own pool (``io.exr.set_encoder_threads``), so this thread overlaps the
    next frame's compute. Measured on 2 cores (1024², 24 frames, one worker): 4.3 s with
    this thread against 7.7 s for a writer process fed through shared memory, which paid
    for its start and a copy of every frame; the process was removed.

    ``write`` writes one frame's jobs: :func:`write_jobs`, passed in by the caller under the
    name it imports, so a stand-in there (a test's filling disk) reaches this thread too.
    """

    def __init__(self, report, write: Callable[[list[FileJob]], Any]) -> None:
        self.report = report
        self.write = write
        self.pending: queue.Queue = queue.Queue(maxsize=1)
        self.error: BaseException | None = None  # the first exception ``report`` raised
        self.thread = threading.Thread(target=self._run, name="oceanfield-writer", daemon=True)
        self.thread.start()

    def submit(self, frame: int, jobs: list[FileJob], started: float) -> None:
        self._raise_reported()
        self.pending.put((frame, jobs, started))

    def _run(self) -> None:
        # This thread must outlive whatever ``report`` raises: a dead writer left the
        # render waiting for ever on its queue (a progress line meeting a closed pipe).
        while True:
            item = self.pending.get()
            if item is None:
                return
            if self.error is not None:
                continue  # the render stops at its next submit or close: drop the rest
            try:
                self.report(_write_result(*item, self.write))
            except BaseException as error:  # noqa: BLE001 - handed to the render's thread
                self.error = error

    def _raise_reported(self) -> None:
        if self.error is not None:
            raise self.error

    def close(self, *, abort: bool = False) -> None:
        """Wait for the frames queued to be written; with ``abort``, only for the one
        being written now (each file is atomic, so a dropped frame leaves nothing)."""
        if abort:
            try:
                while True:
                    self.pending.get_nowait()
            except queue.Empty:
                pass
        self.pending.put(None)
        self.thread.join()
        if not abort:
            self._raise_reported()
