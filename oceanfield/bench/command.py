"""Benchmark: oceanfield against the bare work it cannot avoid, timed side by side.

Knows nothing of formulas: it times the package's public entry points.

This module is the command (`main`): its options, the sections ``--only`` picks and their
printed rows; the rows are measured in ``surface``, ``renders``, ``look`` and ``analysis``.

Run ``python -m oceanfield.bench`` (``--help`` for options). Every figure is a ratio
measured in the same run on the same machine, because absolute times on shared machines
drift: a full frame against the bare inverse FFTs it must do (same library, sizes,
precision and threads), and peak memory per texel of a frame beyond what was allocated
before it.
"""

from __future__ import annotations

import argparse
import os

from .analysis import analyzer_benchmark
from .look import look_benchmark
from .renders import render_benchmark, workers_benchmark
from .surface import band_benchmark, composite_benchmark, frame_benchmark, probe_benchmark, wake_benchmark

__all__ = ["main"]

#: The sections ``--only`` may pick, in the order they run.
_SECTIONS = ("look", "wake", "frames", "composite", "probes", "bands", "bound", "render", "workers", "analyze")


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
        print(f"  one probe: before (exact, per-mode sines) {row['one_before_s'] * 1e3:.0f} ms "
              f"(CPU {row['one_before_cpu_s'] * 1e3:.0f} ms), after (auto: blocked exact sums) "
              f"{row['one_auto_s'] * 1e3:.0f} ms (CPU {row['one_auto_cpu_s'] * 1e3:.0f} ms) (target <= 20 ms)")
        print(f"  {row['points']} probes: before (exact, per-mode sines, timed on {row['exact_points']} and scaled) "
              f"{row['many_before_s']:.1f} s, blocked exact sums {row['many_exact_s']:.1f} s, "
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
