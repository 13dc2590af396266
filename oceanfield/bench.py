"""Benchmark: oceanfield against the bare work it cannot avoid, timed side by side.

Knows nothing of formulas: it times the package's public entry points.

Run ``python -m oceanfield.bench`` (``--help`` for options). Every figure is a ratio
measured in the same run on the same machine, because absolute times on shared machines
drift: a full frame against the bare inverse FFTs it must do (same library, sizes,
precision and threads), and peak memory per texel of a frame beyond what was allocated
before it.
"""

from __future__ import annotations

import argparse
import math
import os
import statistics
import time
import tracemalloc
from pathlib import Path
from typing import Callable

import numpy as np

__all__ = ["main", "time_call", "frame_benchmark", "composite_benchmark", "probe_benchmark", "look_benchmark",
           "wake_benchmark"]

#: The sections ``--only`` may pick, in the order they run.
_SECTIONS = ("look", "wake", "frames", "composite", "probes", "bands", "bound", "render", "workers", "analyze")


def time_call(function: Callable[[], object], *, repeat: int, warmup: int = 1) -> float:
    """Median wall time in seconds of ``function()`` over ``repeat`` calls after ``warmup``."""
    for _ in range(warmup):
        function()
    samples = []
    for _ in range(repeat):
        start = time.perf_counter()
        function()
        samples.append(time.perf_counter() - start)
    return statistics.median(samples)


def _demo_ocean(resolution: int, workers: int, bound_waves: bool = False):
    from .physics.seastate import SeaState, wind_sea
    from .surface.synth import Ocean
    from .surface.tile import Tile

    sea = SeaState((wind_sea(12.0, fetch=80e3, direction=math.radians(30)),))
    return Ocean(sea, Tile(400.0, resolution), seed=1, lateral_factor=1.0, fft_workers=workers,
                 bound_waves=bound_waves)


def frame_benchmark(resolution: int, workers: int, repeat: int, *, bound_waves: bool = False) -> dict[str, float]:
    """Time one full frame and the four bare complex64 inverse FFTs of its size (the linear
    frame's transforms, also when ``bound_waves`` adds the second-order waves)."""
    import scipy.fft

    ocean = _demo_ocean(resolution, workers, bound_waves)
    counter = iter(range(10**9))
    reused = ocean.new_buffer()

    def full_frame() -> None:
        ocean.frame(0.04 * next(counter), buffer=reused)

    def allocating_frame() -> None:
        ocean.frame(0.04 * next(counter))

    buffer = np.zeros((4, resolution, resolution), dtype=np.complex64)
    buffer[:, 1, 1] = 1.0

    def bare_ffts() -> None:
        scipy.fft.ifft2(buffer, axes=(-2, -1), norm="forward", overwrite_x=True, workers=workers)

    # Interleave so drift in machine load hits both alike.
    frame_times, fft_times, allocating_times = [], [], []
    full_frame()
    bare_ffts()
    for _ in range(repeat):
        frame_times.append(time_call(full_frame, repeat=1, warmup=0))
        fft_times.append(time_call(bare_ffts, repeat=1, warmup=0))
        allocating_times.append(time_call(allocating_frame, repeat=1, warmup=0))
    frame_time = statistics.median(frame_times)
    fft_time = statistics.median(fft_times)
    allocating_time = statistics.median(allocating_times)

    del ocean, buffer
    tracemalloc.start()
    tracemalloc.reset_peak()
    before, _ = tracemalloc.get_traced_memory()
    ocean = _demo_ocean(resolution, workers, bound_waves)
    fields = ocean.frame(1.0)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    del fields, ocean
    return {
        "resolution": resolution,
        "frame_s": frame_time,
        "fft_s": fft_time,
        "ratio": frame_time / fft_time,
        "allocating_ratio": allocating_time / fft_time,
        "bytes_per_texel": (peak - before) / resolution**2,
    }


def _timed_pair(first: Callable[[], object], second: Callable[[], object], repeat: int) -> tuple[float, ...]:
    """Median wall and process CPU seconds of ``first`` and ``second``, interleaved so
    drift in machine load hits both alike: (wall 1, wall 2, CPU 1, CPU 2)."""
    first()
    second()
    samples: list[list[float]] = [[], [], [], []]
    for _ in range(repeat):
        for index, function in enumerate((first, second)):
            wall, cpu = time.perf_counter(), time.process_time()
            function()
            samples[index].append(time.perf_counter() - wall)
            samples[2 + index].append(time.process_time() - cpu)
    return tuple(statistics.median(values) for values in samples)


def band_benchmark(reach: float, resolution: int, composite: int, workers: int, repeat: int) -> dict[str, float]:
    """Time a band stack's frame against the bare inverse FFTs of all its bands (the four
    complex64 transforms of every band, each on ``workers`` threads), with its automatic
    bound waves and without any (the linear frame), and the composite (exact sums onto one
    map) against the bare FFTs of a map of its size. Wall and process CPU time both."""
    import scipy.fft

    from .physics.seastate import SeaState, wind_sea
    from .surface.bands import BandStack, layout_bands

    sea = SeaState((wind_sea(10.0, spectrum="elfouhaily", spreading="elfouhaily", suppress_opposing=True),),
                   surface_tension=0.0728)
    layout = layout_bands(sea, reach=reach, shortest_wavelength=0.01, resolution=resolution,
                          max_resolution=2 * resolution)
    stack = BandStack(sea, layout.bands, seed=1, fft_workers=workers)
    linear = BandStack(sea, layout.bands, seed=1, fft_workers=workers, bound_waves=False)
    buffers = stack.new_buffers()
    bare = []
    for band in layout.bands:
        array = np.zeros((4, band.tile.resolution, band.tile.resolution), dtype=np.complex64)
        array[:, 1, 1] = 1.0
        bare.append(array)
    counter = iter(range(10**9))

    def stack_frame() -> None:
        stack.frames(0.04 * next(counter), buffers=buffers)

    def linear_frame() -> None:
        linear.frames(0.04 * next(counter), buffers=buffers)

    def bare_ffts() -> None:
        for array in bare:
            scipy.fft.ifft2(array, axes=(-2, -1), norm="forward", overwrite_x=True, workers=workers)

    square = np.zeros((4, composite, composite), dtype=np.complex64)
    square[:, 1, 1] = 1.0

    def composite_frame() -> None:
        stack.composite(0.04 * next(counter), extent=reach, resolution=composite)

    def composite_ffts() -> None:
        scipy.fft.ifft2(square, axes=(-2, -1), norm="forward", overwrite_x=True, workers=workers)

    frame_time, fft_time, frame_cpu, fft_cpu = _timed_pair(stack_frame, bare_ffts, repeat)
    linear_time, linear_fft_time, linear_cpu, linear_fft_cpu = _timed_pair(linear_frame, bare_ffts, repeat)
    composite_time = time_call(composite_frame, repeat=max(1, repeat // 3))
    square_time = time_call(composite_ffts, repeat=max(1, repeat // 3))
    return {
        "bands": len(layout.bands),
        "bound_bands": sum(ocean.bound is not None for ocean in stack.oceans),
        "texels": sum(b.tile.resolution**2 for b in layout.bands),
        "frame_s": frame_time,
        "fft_s": fft_time,
        "ratio": frame_time / fft_time,
        "cpu_ratio": frame_cpu / fft_cpu if fft_cpu > 0 else math.nan,
        "linear_s": linear_time,
        "linear_ratio": linear_time / linear_fft_time,
        "linear_cpu_ratio": linear_cpu / linear_fft_cpu if linear_fft_cpu > 0 else math.nan,
        "composite_s": composite_time,
        "composite_ratio": composite_time / square_time,
    }


def composite_benchmark(preset_name: str, workers: int, repeat: int) -> dict[str, float]:
    """The composite map of a banded preset at its own extent and resolution: exact sums
    (chirp z, as before non-uniform FFTs) and non-uniform FFTs (today's default), each
    against the bare FFTs of one frame of the composite's size (four complex64 inverse
    transforms on ``workers`` threads), interleaved."""
    import scipy.fft

    from .preset.banding import band_stack
    from .preset.schema import load_preset

    preset = load_preset(preset_name)
    stack = band_stack(preset, fft_workers=workers)
    extent, n = preset.bands.composite_extent_m, preset.bands.composite_resolution
    square = np.zeros((4, n, n), dtype=np.complex64)
    square[:, 1, 1] = 1.0
    counter = iter(range(10**9))

    def bare() -> None:
        scipy.fft.ifft2(square, axes=(-2, -1), norm="forward", overwrite_x=True, workers=workers)

    def nufft() -> None:
        stack.composite(0.04 * next(counter), extent=extent, resolution=n)

    def exact() -> None:
        stack.composite(0.04 * next(counter), extent=extent, resolution=n, exact=True)

    fast, bare_fast, *_ = _timed_pair(nufft, bare, repeat)
    slow, bare_slow, *_ = _timed_pair(exact, bare, max(1, repeat // 3))
    return {"resolution": n, "extent": extent, "bare_s": bare_fast, "nufft_s": fast, "exact_s": slow,
            "nufft_ratio": fast / bare_fast, "exact_ratio": slow / bare_slow}


def probe_benchmark(preset_name: str, points: int, repeat: int, *, exact_points: int = 10) -> dict[str, float]:
    """Probes on a preset's sea (``oceanfield probe``'s modes: every bound wave), one frame:
    one probe and ``points`` probes, with the exact sums (before) and the automatic choice
    (after: exact for few points, the frame's sampled grids for many). The exact sums of
    ``points`` probes are timed on ``exact_points`` of them and scaled (they cost the same
    per point; the full run takes minutes)."""
    from .preset.banding import band_stack
    from .preset.schema import load_preset
    from .surface.probes import surface_at
    from .surface.synth import Ocean

    preset = load_preset(preset_name)
    banded = preset.bands.active
    ocean = band_stack(preset, foam_memory=0.0) if banded else Ocean.from_preset(preset, foam_memory=0.0)
    modes = ocean.modes(bound_share=1.0)
    rng = np.random.default_rng(7)
    extent = (preset.bands.composite_extent_m or ocean.largest_tile.size) if banded else ocean.tile.size
    x, y = rng.uniform(0.0, extent, points), rng.uniform(0.0, extent, points)
    counter = iter(range(10**9))
    exact_points = min(exact_points, points)

    def run(count: int, method: str) -> Callable[[], object]:
        return lambda: surface_at(modes, x[:count], y[:count], 0.04 * next(counter), method=method)

    one_exact, one_auto, *_ = _timed_pair(run(1, "exact"), run(1, "auto"), repeat)
    many_exact, many_auto, *_ = _timed_pair(run(exact_points, "exact"), run(points, "auto"), max(1, repeat // 2))
    return {"modes": len(modes), "points": points, "exact_points": exact_points,
            "one_exact_s": one_exact, "one_auto_s": one_auto,
            "many_exact_s": many_exact * points / exact_points, "many_auto_s": many_auto}


_RENDER_OVERRIDES = (
    "time.first_frame=1001",
    "maps=[displacement, normal, foam]",
    "output.format=exr",
    "output.precision=half",
    "output.precision_per_map={}",
    "output.compression=zip",
    "output.multilayer=false",
)


def _render_command(root: Path, resolution: int, frames: int, *extra: str) -> list[str]:
    """``oceanfield render`` of moderate_breeze as a user runs it (a fresh interpreter)."""
    import sys

    sets = [*_RENDER_OVERRIDES, f"tile.resolution={resolution}", f"time.last_frame={1000 + frames}"]
    command = [sys.executable, "-m", "oceanfield.cli", "render", "moderate_breeze", "--out", str(root), "--overwrite"]
    for item in sets:
        command += ["--set", item]
    return command + list(extra)


def _timed_run(command: list[str], env: dict[str, str] | None = None) -> float:
    import subprocess

    start = time.perf_counter()
    result = subprocess.run(command, capture_output=True, text=True, env=env, check=False)
    elapsed = time.perf_counter() - start
    if result.returncode != 0:
        raise RuntimeError(f"{' '.join(command[:6])} … failed: {result.stderr.strip()[-400:]}")
    return elapsed


#: Runs of each timed fresh-process render (their median counts).
_PROCESS_RUNS = 3


def render_benchmark(resolution: int, frames: int, cores: int, *, cold: bool = True) -> dict[str, float]:
    """A whole render against its floors: bare FFTs plus bare OpenEXR writes of the same data.

    The render writes displacement, normal and foam maps as ZIP half-float EXR, end to end
    as a user runs it: ``oceanfield render`` in a fresh process with default workers. The
    write floor writes the same channels of a real frame, converted to half beforehand,
    straight through the OpenEXR binding with its encoder pool on every core (no
    temporary, no checks); the FFT floor is the four complex inverse transforms of every
    frame on every core. Start-up: a one-frame job of the same size, warm (kernels
    cached) against that frame's own compute and write, and cold (an empty kernel cache,
    as on the first run after install). The render and the warm job are each the median
    of three runs.
    """
    import shutil
    import tempfile

    import OpenEXR
    import scipy.fft

    from .io.exr import set_encoder_threads
    from .preset.schema import load_preset
    from .render.job import default_workers, plan_render
    from .surface.maps import map_channels
    from .surface.synth import Ocean

    preset = load_preset("moderate_breeze", overrides=(*_RENDER_OVERRIDES, f"tile.resolution={resolution}",
                                                       f"time.last_frame={1000 + frames}"))
    root = Path(tempfile.mkdtemp(prefix="oceanfield-bench-"))
    try:
        ocean = Ocean.from_preset(preset, fft_workers=cores)
        buffer = ocean.new_buffer()
        fields = ocean.frame(0.5, buffer=buffer)
        files = {
            name: {c: a.astype(np.float16) for c, a in map_channels(fields, name).items()}
            for name in preset.maps
        }
        header = {"compression": OpenEXR.ZIP_COMPRESSION, "type": OpenEXR.scanlineimage}
        set_encoder_threads(cores)

        def bare_writes() -> None:
            for name, channels in files.items():
                OpenEXR.File(header, channels).write(str(root / f"floor_{name}.exr"))

        fft_buffer = np.zeros((4, resolution, resolution), dtype=np.complex64)

        def bare_ffts() -> None:
            scipy.fft.ifft2(fft_buffer, axes=(-2, -1), norm="forward", overwrite_x=True, workers=cores)

        counter = iter(range(10**9))
        write_one = time_call(bare_writes, repeat=5)
        fft_one = time_call(bare_ffts, repeat=5)
        frame_one = time_call(lambda: ocean.frame(0.04 * next(counter), buffer=buffer), repeat=5)
        del ocean, buffer, fields
        workers = default_workers(plan_render(preset, root=root), cores=cores)
        # Medians of three fresh processes: one run of a few seconds drifts with the machine.
        end_to_end = statistics.median(_timed_run(_render_command(root / "job", resolution, frames))
                                       for _ in range(_PROCESS_RUNS))
        _timed_run(_render_command(root / "one", resolution, 1))  # kernels cached for what follows
        one_frame = statistics.median(_timed_run(_render_command(root / "one", resolution, 1))
                                      for _ in range(_PROCESS_RUNS))
        cold_one = float("nan")
        if cold:
            env = dict(os.environ, NUMBA_CACHE_DIR=str(root / "empty-kernel-cache"))
            cold_one = _timed_run(_render_command(root / "cold", resolution, 1), env=env)
    finally:
        shutil.rmtree(root, ignore_errors=True)
    floor = (fft_one + write_one) * frames
    return {
        "fft_floor_s": fft_one * frames,
        "write_floor_s": write_one * frames,
        "workers": workers,
        "end_to_end_s": end_to_end,
        "ratio": end_to_end / floor,
        "one_frame_job_s": one_frame,
        "one_frame_own_s": frame_one + write_one,
        "one_frame_overhead_s": one_frame - (frame_one + write_one),
        "cold_one_frame_job_s": cold_one,
    }


#: Frames of each default-workers render, by resolution: a few seconds of work each.
_WORKERS_FRAMES = {256: 96, 512: 48, 1024: 24, 2048: 8}


def workers_benchmark(resolution: int, cores: int, *, frames: int | None = None, tries: int = 2) -> dict[str, object]:
    """The same render with 1 … ``cores`` worker processes, and the count chosen by default.

    Each count renders ``frames`` frames of ``resolution``² (as a user runs it, a fresh
    process) ``tries`` times, interleaved so drift in machine load hits every count alike;
    its best time counts. Returns the times by count, the default count and how much slower
    the default is than the best (1.0 when it is the best).
    """
    import shutil
    import tempfile

    from .preset.schema import load_preset
    from .render.job import default_workers, plan_render

    frames = frames or _WORKERS_FRAMES.get(resolution, 16)
    preset = load_preset("moderate_breeze", overrides=(*_RENDER_OVERRIDES, f"tile.resolution={resolution}",
                                                       f"time.last_frame={1000 + frames}"))
    root = Path(tempfile.mkdtemp(prefix="oceanfield-bench-"))
    try:
        chosen = default_workers(plan_render(preset, root=root), cores=cores)
        times: dict[int, float] = {}
        for _ in range(tries):
            for count in range(1, cores + 1):
                seconds = _timed_run(_render_command(root / f"w{count}", resolution, frames, "--workers", str(count)))
                times[count] = min(times.get(count, math.inf), seconds)
    finally:
        shutil.rmtree(root, ignore_errors=True)
    best = min(times.values())
    return {"frames": frames, "times": times, "default": chosen, "default_over_best": times[chosen] / best}


def analyzer_benchmark(resolution: int, frames: int, workers: int) -> dict[str, float]:
    """Time the analyzer streaming ``frames`` height frames of ``resolution``² and measuring them.

    Frames are synthesised in memory first (not timed), so the figure is the analyzer's
    own cost per frame plus its final measurement, without file reading.
    """
    from .analysis.measure import SequenceAccumulator

    ocean = _demo_ocean(resolution, workers)
    fps = 24.0
    heights = [ocean.frame(i / fps).height.copy() for i in range(frames)]
    accumulator = SequenceAccumulator(frames, resolution, ocean.tile.size, fps, fft_workers=workers)
    start = time.perf_counter()
    for height in heights:
        accumulator.add(height)
    streamed = time.perf_counter() - start
    start = time.perf_counter()
    accumulator.finish()
    finished = time.perf_counter() - start
    return {"per_frame_s": streamed / frames, "finish_s": finished, "total_s": streamed + finished}


def look_benchmark(preset_name: str, size: str, repeat: int) -> dict[str, float]:
    """`oceanfield look PRESET --size size` as the command renders it, in this process:
    median wall and CPU seconds of a still (frame, pyramid, march and shading; kernels
    warm), each part's share, and the ocean's build."""
    from argparse import Namespace

    from .look.writing import look_from_arguments
    from .preset.schema import load_preset

    options = dict(size=size, camera_height=None, heading=None, pitch=None, fov=None, sun_elevation=None,
                   sun_azimuth=None, turbidity=None, exposure=None, flat_sea=False, clear_air=False)
    started = time.perf_counter()
    look = look_from_arguments(load_preset(preset_name), Namespace(**options))
    build = time.perf_counter() - started
    look.picture(look.render())  # warm: kernels loaded, caption font cached
    walls, cpus, parts = [], [], []
    for _ in range(repeat):
        look.seconds = dict.fromkeys(look.seconds, 0.0)
        wall, cpu = time.perf_counter(), time.process_time()
        look.picture(look.render())
        walls.append(time.perf_counter() - wall)
        cpus.append(time.process_time() - cpu)
        parts.append(dict(look.seconds))
    middle = sorted(range(repeat), key=walls.__getitem__)[repeat // 2]
    row = {"wall_s": walls[middle], "cpu_s": cpus[middle], "build_s": build}
    row.update({f"{name}_s": seconds for name, seconds in parts[middle].items()})
    return row


def _demo_course(region_size: float, lookback: float, fps: float, speed: float, *, straight: bool = False):
    """A boat weaving round the region's centre, sampled every frame (an invented chase);
    or running straight across it."""
    from .surface.wake import Course

    radius = 0.3 * region_size
    duration = lookback + 2.0
    t = np.arange(0.0, duration + 0.5 / fps, 1.0 / fps)
    if straight:
        return Course(times=t, x=0.9 * region_size - speed * (duration - t), y=0.5 * region_size + 0.0 * t)
    # an ellipse whose radius breathes: curvature and speed change all the time
    phase = speed * t / radius
    r = radius * (1.0 + 0.15 * np.sin(0.37 * phase))
    return Course(times=t, x=0.5 * region_size + r * np.cos(phase), y=0.5 * region_size + 0.8 * r * np.sin(phase))


def wake_benchmark(resolution: int, lookback: float, fps: float, workers: int, repeat: int, *,
                   straight: bool = False) -> dict[str, float]:
    """One wake frame on a ``resolution``² region (0.5 m texels; a 10 m boat at 12 m/s on a
    curving per-frame course) against the bare real inverse FFTs it needs (eight of its padded
    lattice), and against four complex64 ones of the region's own size (a sea frame's)."""
    import scipy.fft

    from .surface.wake import Hull, Wake, WakeRegion

    size = 0.5 * resolution
    course = _demo_course(size, lookback, fps, 12.0, straight=straight)
    wake = Wake([(Hull(10.0, 3.5, 0.6), course)], WakeRegion(0.0, 0.0, size, resolution),
                lookback=lookback, fft_workers=workers)
    m = wake.lattice_size
    half = np.zeros((8, m, m // 2 + 1), dtype=np.complex64)
    half[:, 1, 1] = 1.0
    region = np.zeros((4, resolution, resolution), dtype=np.complex64)
    region[:, 1, 1] = 1.0
    t_end = float(course.times[-1])
    counter = iter(range(10**9))

    def frame() -> None:
        wake.frame(t_end - (next(counter) % 24) / fps)

    def padded_ffts() -> None:
        scipy.fft.irfft2(half, s=(m, m), axes=(-2, -1), norm="forward", workers=workers)

    def region_ffts() -> None:
        scipy.fft.ifft2(region, axes=(-2, -1), norm="forward", overwrite_x=True, workers=workers)

    frame_s, padded_s, frame_cpu, padded_cpu = _timed_pair(frame, padded_ffts, repeat)
    _, region_s, _, _ = _timed_pair(frame, region_ffts, max(1, repeat // 2))
    pieces = len(wake._piece_arrays(t_end)[0])
    return {"frame_s": frame_s, "padded_fft_s": padded_s, "region_fft_s": region_s, "lattice": m,
            "pieces": pieces, "samples": int(course.times.size), "ratio": frame_s / padded_s,
            "cpu_ratio": frame_cpu / padded_cpu,
            "region_ratio": frame_s / region_s}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m oceanfield.bench", description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="256,512,1024,2048", help="comma-separated resolutions")
    parser.add_argument("--workers", type=int, default=os.cpu_count() or 1, help="FFT and kernel threads")
    parser.add_argument("--repeat", type=int, default=7, help="timed repeats per figure (median)")
    parser.add_argument("--render-frames", type=int, default=48, help="frames of the end-to-end render (0 = skip)")
    parser.add_argument("--render-size", type=int, default=1024, help="resolution of the end-to-end render")
    parser.add_argument("--skip-cold", action="store_true", help="skip the cold start (it compiles every kernel)")
    parser.add_argument("--workers-sizes", default="512,1024,2048",
                        help="resolutions at which renders with 1 … cores workers are timed against the "
                             "default count (empty = skip)")
    parser.add_argument("--analyze-frames", type=int, default=240, help="frames the analyzer streams (0 = skip)")
    parser.add_argument("--analyze-size", type=int, default=512, help="resolution of the analyzed frames")
    parser.add_argument("--bands-reach", type=float, default=2000.0, help="reach in metres of the band stack (0 = skip)")
    parser.add_argument("--bands-size", type=int, default=512, help="resolution of band 0")
    parser.add_argument("--bands-composite", type=int, default=1024, help="texels per side of the composite map")
    parser.add_argument("--composite-preset", default="open_ocean_horizon",
                        help="banded preset whose composite map and probes are timed")
    parser.add_argument("--probes", type=int, default=1000, help="probes of the many-probes figure")
    parser.add_argument("--look-sizes", default="1280x720,640x360",
                        help="picture sizes of the `look fresh_chop` row (empty = skip)")
    parser.add_argument("--look-only", action="store_true", help="run only the `look` row (as --only look)")
    parser.add_argument("--only", default=",".join(_SECTIONS),
                        help=f"comma-separated sections to run, of: {', '.join(_SECTIONS)}")
    parser.add_argument("--wake-size", type=int, default=1024,
                        help="texels per side of the wake benchmark's region (0 = skip)")
    parser.add_argument("--wake-lookback", type=float, default=60.0, help="look-back of the wake benchmark, s")
    parser.add_argument("--wake-only", action="store_true", help="run only the wake row (as --only wake)")
    args = parser.parse_args(argv)
    if args.look_only or args.wake_only:
        only = {"look"} if args.look_only else {"wake"}
    else:
        only = {name.strip() for name in args.only.split(",") if name.strip()}
    unknown = only - set(_SECTIONS)
    if unknown:
        parser.error(f"--only: {', '.join(sorted(unknown))} is not allowed; allowed: {', '.join(_SECTIONS)}")

    import numba

    numba.set_num_threads(min(args.workers, numba.config.NUMBA_NUM_THREADS))
    sizes = [int(s) for s in args.sizes.split(",") if s]
    print(f"oceanfield benchmark: {args.workers} thread(s), median of {args.repeat}")
    if "look" in only:
        _look_section(args)
    if "wake" in only and args.wake_size > 0:
        _print_wake(args)
    if "frames" in only:
        _frames_section(sizes, args)
    if "composite" in only:
        row = composite_benchmark(args.composite_preset, args.workers, args.repeat)
        print(f"\nComposite map of {args.composite_preset}: {row['resolution']}² over {row['extent']:g} m, "
              f"against one bare {row['resolution']}² frame's FFTs ({row['bare_s'] * 1e3:.1f} ms)")
        print(f"  before (exact sums, chirp z) {row['exact_s'] * 1e3:.0f} ms: {row['exact_ratio']:.1f}x")
        print(f"  after (non-uniform FFTs)     {row['nufft_s'] * 1e3:.0f} ms: {row['nufft_ratio']:.1f}x (target <= 5)")
    if "probes" in only:
        row = probe_benchmark(args.composite_preset, args.probes, args.repeat)
        print(f"\nProbes on {args.composite_preset} ({row['modes'] / 1e6:.2f} M modes, every bound wave), one frame")
        print(f"  one probe: before (exact) {row['one_exact_s'] * 1e3:.0f} ms, after (auto) "
              f"{row['one_auto_s'] * 1e3:.0f} ms (target <= 20 ms)")
        print(f"  {row['points']} probes: before (exact, timed on {row['exact_points']} and scaled) "
              f"{row['many_exact_s']:.1f} s, "
              f"after (auto: sampled grids) {row['many_auto_s']:.2f} s (target <= 0.5 s)")
    if "bands" in only and args.bands_reach > 0:
        _bands_section(args)
    if "bound" in only:
        _bound_section(sizes, args)
    if "render" in only and args.render_frames > 0:
        _render_section(args)
    if "workers" in only:
        _workers_section(args)
    if "analyze" in only and args.analyze_frames > 0:
        _analyze_section(args)
    return 0


def _look_section(args) -> None:
    look_sizes = [s for s in args.look_sizes.split(",") if s]
    if look_sizes:
        print("\nLook: `oceanfield look fresh_chop` (512² tile, default camera and sun), one still, kernels warm")
        print(f"{'size':>10} {'wall s':>8} {'CPU s':>7} {'frame s':>8} {'pyramid s':>10} {'march+shade s':>14} "
              f"{'caption s':>10} {'target s':>9}")
        for size in look_sizes:
            row = look_benchmark("fresh_chop", size, max(1, min(args.repeat, 3)))
            rest = row["wall_s"] - row["synthesis_s"] - row["pyramid_s"] - row["shading_s"]
            target = {"1280x720": "30", "640x360": "8"}.get(size, "-")
            print(f"{size:>10} {row['wall_s']:>8.2f} {row['cpu_s']:>7.2f} {row['synthesis_s']:>8.2f} "
                  f"{row['pyramid_s']:>10.2f} {row['shading_s']:>14.2f} {rest:>10.2f} {target:>9}")
        print("frame: the preset's fields (Ocean.frame); pyramid: resampling the displaced surface and its")
        print("levels; march+shade: the numba kernel. Targets on 2 cores; CPU s is the process's CPU time.")


def _frames_section(sizes: list[int], args) -> None:
    print("\nOne full frame (height, lateral displacement, slopes, Jacobian, normal, foam)")
    print(f"{'N':>6} {'frame ms':>10} {'bare FFTs ms':>13} {'ratio':>7} {'new-buffer ratio':>17} {'bytes/texel':>12}")
    for n in sizes:
        row = frame_benchmark(n, args.workers, args.repeat)
        print(
            f"{n:>6} {row['frame_s'] * 1e3:>10.2f} {row['fft_s'] * 1e3:>13.2f} "
            f"{row['ratio']:>7.3f} {row['allocating_ratio']:>17.3f} {row['bytes_per_texel']:>12.1f}"
        )
    print("\nratio: frame filling a reused buffer (as the render loop does) over the bare FFTs;")
    print("new-buffer ratio: frame allocating fresh memory each time (page faults included).")
    print("Targets: ratio <= 1.3 at N = 1024 and 2048; <= 48 bytes per texel (numpy allocations,")
    print("traced from before the Ocean is built to the end of its first frame).")


def _bands_section(args) -> None:
    row = band_benchmark(args.bands_reach, args.bands_size, args.bands_composite, args.workers, args.repeat)
    print(f"\nBand stack: reach {args.bands_reach:g} m down to 1 cm ripples, {row['bands']} bands, "
          f"{row['texels'] / 1e6:.2f} M texels")
    print(f"  stack frame {row['frame_s'] * 1e3:.1f} ms, bare FFTs of all bands {row['fft_s'] * 1e3:.1f} ms: "
          f"ratio {row['ratio']:.3f} (target <= 1.3); CPU time ratio {row['cpu_ratio']:.3f}; "
          f"bound waves in {row['bound_bands']} band(s)")
    print(f"  without bound waves {row['linear_s'] * 1e3:.1f} ms: ratio {row['linear_ratio']:.3f}; "
          f"CPU time ratio {row['linear_cpu_ratio']:.3f}")
    print(f"  composite {args.bands_composite}² (non-uniform FFTs) {row['composite_s'] * 1e3:.1f} ms: "
          f"{row['composite_ratio']:.1f}x the bare FFTs of one {args.bands_composite}² frame")


def _bound_section(sizes: list[int], args) -> None:
    print("\nThe same frame with second-order bound waves, over the linear frame's bare FFTs")
    print(f"{'N':>6} {'frame ms':>10} {'bare FFTs ms':>13} {'ratio':>7}")
    for n in sizes:
        row = frame_benchmark(n, args.workers, args.repeat, bound_waves=True)
        print(f"{n:>6} {row['frame_s'] * 1e3:>10.2f} {row['fft_s'] * 1e3:>13.2f} {row['ratio']:>7.3f}")
    print("Target: ratio <= 1.8.")


def _render_section(args) -> None:
    row = render_benchmark(args.render_size, args.render_frames, args.workers, cold=not args.skip_cold)
    print(f"\nEnd to end: {args.render_frames} frames at {args.render_size}², displacement + normal + foam, "
          f"ZIP half EXR, `oceanfield render` in a fresh process, default workers ({row['workers']})")
    print(f"  FFT floor {row['fft_floor_s']:.2f} s + write floor {row['write_floor_s']:.2f} s "
          f"(encoder on {args.workers} thread(s)) = {row['fft_floor_s'] + row['write_floor_s']:.2f} s")
    print(f"  render {row['end_to_end_s']:.2f} s: ratio to floors {row['ratio']:.3f} (target <= 1.15)")
    print(f"Start-up: a one-frame {args.render_size}² job")
    print(f"  warm {row['one_frame_job_s']:.2f} s = that frame's compute and write {row['one_frame_own_s']:.2f} s "
          f"+ {row['one_frame_overhead_s']:.2f} s (target: <= 1.0 s beyond the frame)")
    if not args.skip_cold:
        print(f"  cold (empty kernel cache, as after install) {row['cold_one_frame_job_s']:.2f} s: "
              f"{row['cold_one_frame_job_s'] - row['one_frame_job_s']:.2f} s of kernel compilation "
              "(`oceanfield compile` pays it once per farm image)")


def _workers_section(args) -> None:
    workers_sizes = [int(s) for s in args.workers_sizes.split(",") if s]
    if workers_sizes:
        print(f"\nDefault workers: renders with 1 … {args.workers} worker processes, best of two each, "
              "as a user runs them")
        print(f"{'N':>6} {'frames':>7} {'seconds by workers':>28} {'default':>8} {'default/best':>13}")
        for n in workers_sizes:
            row = workers_benchmark(n, args.workers)
            times = "  ".join(f"{count}: {seconds:.2f}" for count, seconds in row["times"].items())
            print(f"{n:>6} {row['frames']:>7} {times:>28} {row['default']:>8} {row['default_over_best']:>13.3f}")
        print("Target: default/best <= 1.05.")


def _analyze_section(args) -> None:
    row = analyzer_benchmark(args.analyze_size, args.analyze_frames, args.workers)
    print(f"\nAnalyzer: {args.analyze_frames} frames of {args.analyze_size}² heights (in memory)")
    print(f"  {row['per_frame_s'] * 1e3:.1f} ms per frame streamed, {row['finish_s']:.2f} s to measure, "
          f"{row['total_s']:.1f} s in all (target: well under a minute)")


def _print_wake(args) -> None:
    print(f"\nWake: {args.wake_size}² region (0.5 m texels), {args.wake_lookback:g} s look-back, "
          "a 10 m boat at 12 m/s on a course sampled at 24 fps")
    for straight in (False, True):
        row = wake_benchmark(args.wake_size, args.wake_lookback, 24.0, args.workers, args.repeat, straight=straight)
        print(f"  {'straight' if straight else 'weaving'}: {row['samples']} samples, {row['pieces']} straight "
              f"pieces in the look-back, lattice {row['lattice']}²")
        print(f"    frame {row['frame_s'] * 1e3:.1f} ms, bare FFTs {row['padded_fft_s'] * 1e3:.1f} ms "
              f"(eight real, padded lattice): ratio {row['ratio']:.2f} (target <= 3); CPU time ratio "
              f"{row['cpu_ratio']:.2f}; {row['region_ratio']:.2f}x a {args.wake_size}² sea frame's four complex FFTs")


if __name__ == "__main__":
    raise SystemExit(main())
