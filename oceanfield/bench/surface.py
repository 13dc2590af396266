"""The surface's rows: one frame, a band stack, the composite map, probes and a wake.

Each times a synthesis entry point against the bare inverse FFTs it cannot avoid (same
library, sizes, precision and threads), interleaved. Knows nothing of formulas: it times
the package's public entry points.
"""

from __future__ import annotations

import math
import statistics
import tracemalloc
from typing import Callable

import numpy as np

from .timing import _timed_pair, time_call

__all__ = ["band_benchmark", "composite_benchmark", "frame_benchmark", "probe_benchmark", "wake_benchmark"]


def _demo_ocean(resolution: int, workers: int, bound_waves: bool = False):
    from ..physics.seastate import SeaState, wind_sea
    from ..surface.synth import Ocean
    from ..surface.tile import Tile

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


def band_benchmark(reach: float, resolution: int, composite: int, workers: int, repeat: int) -> dict[str, float]:
    """Time a band stack's frame against the bare inverse FFTs of all its bands (the four
    complex64 transforms of every band, each on ``workers`` threads), with its automatic
    bound waves and without any (the linear frame), and the composite (exact sums onto one
    map) against the bare FFTs of a map of its size. Wall and process CPU time both."""
    import scipy.fft

    from ..physics.seastate import SeaState, wind_sea
    from ..surface.bands import BandStack, layout_bands

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

    from ..preset.banding import band_stack
    from ..preset.schema import load_preset

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
    one probe and ``points`` probes, before (the sums per mode by the C library's sine and
    cosine, the exact path until the blocked sums) and after (``method="auto"``: the
    blocked exact sums for few points, the frame's sampled grids for many), each pair timed
    interleaved, wall and process CPU. The exact sums of ``points`` probes are timed on
    ``exact_points`` of them and scaled (they cost the same per point; the full run takes
    minutes)."""
    from ..preset.banding import band_stack
    from ..preset.schema import load_preset
    from ..surface.probes import DEFAULT_MAX_ITERATIONS, _point_columns, surface_at
    from ..surface.synth import Ocean

    preset = load_preset(preset_name)
    banded = preset.bands.active
    ocean = band_stack(preset, foam_memory=0.0) if banded else Ocean.from_preset(preset, foam_memory=0.0)
    modes = ocean.modes(bound_share=1.0)
    rng = np.random.default_rng(7)
    extent = (preset.bands.composite_extent_m or ocean.largest_tile.size) if banded else ocean.tile.size
    x, y = rng.uniform(0.0, extent, points), rng.uniform(0.0, extent, points)
    counter = iter(range(10**9))
    exact_points = min(exact_points, points)
    options = (True, 1e-7, DEFAULT_MAX_ITERATIONS)  # surface_at's defaults

    def run(count: int, method: str) -> Callable[[], object]:
        if method == "reference":
            return lambda: _point_columns(modes, (x[:count], y[:count], np.full(count, 0.04 * next(counter))),
                                          options, "reference")
        return lambda: surface_at(modes, x[:count], y[:count], 0.04 * next(counter), method=method)

    one_before, one_auto, one_before_cpu, one_auto_cpu = _timed_pair(run(1, "reference"), run(1, "auto"), repeat)
    many_before, many_exact, *_ = _timed_pair(run(exact_points, "reference"), run(exact_points, "exact"),
                                              max(1, repeat // 3))
    many_auto = time_call(run(points, "auto"), repeat=max(1, repeat // 2))
    scale = points / exact_points
    return {"modes": len(modes), "points": points, "exact_points": exact_points,
            "one_before_s": one_before, "one_auto_s": one_auto,
            "one_before_cpu_s": one_before_cpu, "one_auto_cpu_s": one_auto_cpu,
            "many_before_s": many_before * scale, "many_exact_s": many_exact * scale, "many_auto_s": many_auto}


def _demo_course(region_size: float, lookback: float, fps: float, speed: float, *, straight: bool = False):
    """A boat weaving round the region's centre, sampled every frame (an invented chase);
    or running straight across it."""
    from ..surface.wake import Course

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

    from ..surface.wake import Hull, Wake, WakeRegion

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
