"""What a render will cost, said before it starts: memory, and time on this machine.

Orchestration only: it knows nothing of formulas. The memory is what the workers hold
(an Ocean and one frame each, ``surface.synth.frame_bytes_per_texel``, and the encoded
frames in flight). The time is a model calibrated on this machine a moment before:
the inverse FFTs of a small frame are timed and scaled by N² log N to the job's size
(a frame costs about ``_FRAME_OVER_FFT`` times its bare FFTs and writing overlaps it);
building the amplitudes costs about ``_BUILD_OVER_SPECTRUM`` times the sea's spectrum on
every lattice point, timed on a sample. A preset with vessels adds one wake frame, timed (after a first that loads its kernels). The render prints the first frame's real time too, so a wrong
guess is corrected within a frame.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass

import numpy as np

from .plan import RenderPlan

__all__ = ["RenderEstimate", "estimate_render", "estimate_work"]

#: Per-texel bytes of two encoded frames in flight (seven half-float channels each).
_ENCODED_BYTES_PER_TEXEL = 28
#: A frame written as ZIP half EXR (displacement, normal, foam) costs about this many times
#: its four bare inverse FFTs, end to end: the benchmark's 48-frame 1024² render against
#: its FFT floor (python -m oceanfield.bench) measured 11; 4096² frames measured 12-14.
_FRAME_OVER_FFT = 11.0
#: A frame computed but not written: its FFTs and kernels (the benchmark's frame ÷ bare
#: FFTs, 1.4-2 at 1024²-2048²).
_COMPUTE_OVER_FFT = 2.0
#: Drawing h0 on the lattice costs about this many times the spectrum's evaluation there
#: (keyed noise, square roots, the |k|² table; measured at 1024²).
_BUILD_OVER_SPECTRUM = 1.5
#: Bytes a worker holds per texel of the wake's padded lattice: eleven real planes and
#: their half spectra (complex64), and the region's Fields.
_WAKE_BYTES_PER_TEXEL = 11 * 4 + 11 * 4 + 8 * 4
_CALIBRATION_N = 256
_SAMPLE_POINTS = 1 << 15


@dataclass(frozen=True)
class RenderEstimate:
    """Bytes all workers hold at once, seconds to build one Ocean, seconds for the job."""

    memory_bytes: int
    build_seconds: float
    total_seconds: float

    def line(self, frames: int, workers: int) -> str:
        return (f"estimate: about {_bytes_text(self.memory_bytes)} of memory and {_duration(self.total_seconds)} "
                f"for {frames} frame{'s' if frames != 1 else ''} on {workers} worker{'s' if workers != 1 else ''} "
                f"({_duration(self.build_seconds)} of it building the ocean)")


def estimate_render(plan: RenderPlan, workers: int, cores: int) -> RenderEstimate:
    """The memory and time :func:`render` will take for ``plan`` with ``workers`` workers."""
    return estimate_work(plan.preset, len(plan.frames), workers, cores)


def estimate_work(preset, frames: int, workers: int, cores: int, *, written: bool = True) -> RenderEstimate:
    """Memory and time to build the preset's Ocean in each of ``workers`` processes and make
    ``frames`` frames, written as files (``written``) or only computed (``stats``)."""
    import scipy.fft

    from ..surface.synth import frame_bytes_per_texel

    n = preset.tile.resolution
    velocity = "velocity" in preset.maps
    encoded = _ENCODED_BYTES_PER_TEXEL if written else 0
    memory = workers * n * n * (frame_bytes_per_texel(velocity) + encoded)

    threads = max(1, cores // max(1, workers))
    block = np.zeros((4, _CALIBRATION_N, _CALIBRATION_N), dtype=np.complex64)
    scipy.fft.ifft2(block, axes=(-2, -1), workers=threads)  # plan and warm
    started = time.perf_counter()
    for _ in range(3):
        scipy.fft.ifft2(block, axes=(-2, -1), workers=threads)
    fft_small = (time.perf_counter() - started) / 3
    scale = (n * n * math.log2(n)) / (_CALIBRATION_N**2 * math.log2(_CALIBRATION_N))
    frame_seconds = (_FRAME_OVER_FFT if written else _COMPUTE_OVER_FFT) * fft_small * scale

    sea = preset.sea_state()
    k = np.linspace(1e-3, 1.0, _SAMPLE_POINTS)
    started = time.perf_counter()
    sea.directional_spectrum(k * 0.6, k * 0.8)
    build = _BUILD_OVER_SPECTRUM * (time.perf_counter() - started) / _SAMPLE_POINTS * n * n
    if preset.vessels:  # the wake's frame on its own padded lattice, beside the sea's
        from ..preset.vessels import preset_wake

        # Its cost follows the courses' pieces and the hulls' spectra more than the lattice
        # (measured 3.7 to 35 times its FFTs), so one frame is timed rather than modelled.
        wake = preset_wake(preset, velocity=False, fft_workers=threads)
        memory += workers * wake.lattice_size**2 * _WAKE_BYTES_PER_TEXEL
        first = preset.time.frame_time(preset.time.first_frame)
        wake.frame(first)  # (loads its kernels)
        started = time.perf_counter()
        wake.frame(first + 1.0 / preset.time.fps)
        frame_seconds += time.perf_counter() - started
    total = build + frame_seconds * frames / max(1, workers)
    return RenderEstimate(int(memory), build, total)


def _bytes_text(count: float) -> str:
    for unit in ("B", "KB", "MB", "GB", "TB"):
        if count < 1000 or unit == "TB":
            return f"{count:.0f} {unit}" if unit == "B" else f"{count:.1f} {unit}"
        count /= 1000
    return f"{count:.1f} TB"


def _duration(seconds: float) -> str:
    if seconds < 90:
        return f"{max(seconds, 1):.0f} s"
    if seconds < 90 * 60:
        return f"{seconds / 60:.0f} min"
    return f"{seconds / 3600:.1f} h"
