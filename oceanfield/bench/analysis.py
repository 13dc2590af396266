"""The analyzer's row: a height sequence streamed through the accumulator and measured.

Knows nothing of formulas or of files: the frames are synthesised in memory.
"""

from __future__ import annotations

import time

from .surface import _demo_ocean

__all__ = ["analyzer_benchmark"]


def analyzer_benchmark(resolution: int, frames: int, workers: int) -> dict[str, float]:
    """Time the analyzer streaming ``frames`` height frames of ``resolution``² and measuring them.

    Frames are synthesised in memory first (not timed), so the figure is the analyzer's
    own cost per frame plus its final measurement, without file reading.
    """
    from ..analysis.measure import SequenceAccumulator

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
