"""Benchmark: oceanfield against the bare work it cannot avoid, timed side by side.

Knows nothing of formulas: it times the package's public entry points.

Run ``python -m oceanfield.bench`` (``--help`` for options). Every figure is a ratio
measured in the same run on the same machine, because absolute times on shared machines
drift: a full frame against the bare inverse FFTs it must do (same library, sizes,
precision and threads), and peak memory per texel of a frame beyond what was allocated
before it.

=============  ====================================================================
``command``    ``main``: the options, the sections ``--only`` picks, the printed rows
``timing``     ``time_call``: medians of repeated calls; two functions interleaved
``surface``    one frame, the band stack, the composite map, probes, a wake
``renders``    ``oceanfield render`` end to end against its floors; the default workers
``look``       a still of ``oceanfield look``
``analysis``   the analyzer streaming a sequence
=============  ====================================================================
"""

from __future__ import annotations

from .analysis import analyzer_benchmark
from .command import main
from .look import look_benchmark
from .renders import render_benchmark, workers_benchmark
from .surface import band_benchmark, composite_benchmark, frame_benchmark, probe_benchmark, wake_benchmark
from .timing import time_call

__all__ = ["main", "time_call", "frame_benchmark", "composite_benchmark", "probe_benchmark", "look_benchmark",
           "wake_benchmark", "band_benchmark", "render_benchmark", "workers_benchmark", "analyzer_benchmark"]
