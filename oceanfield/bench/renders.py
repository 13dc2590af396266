"""The render rows: `oceanfield render` end to end against its floors, and the default workers.

Renders run as a user runs them, in a fresh process; the floors are bare FFTs and bare
OpenEXR writes of the same channels. Knows nothing of formulas: it times the command.
"""

from __future__ import annotations

import math
import os
import statistics
import time
from pathlib import Path

import numpy as np

from .timing import time_call

__all__ = ["render_benchmark", "workers_benchmark"]


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

    from ..io.exr import set_encoder_threads
    from ..preset.schema import load_preset
    from ..render.job import default_workers, plan_render
    from ..surface.maps import map_channels
    from ..surface.synth import Ocean

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

    from ..preset.schema import load_preset
    from ..render.job import default_workers, plan_render

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
