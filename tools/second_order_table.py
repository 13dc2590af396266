"""Measure skewness, crests against troughs and mean level of shipped presets, with and
without bound waves, against second-order theory (the table of issue 12).

    python tools/second_order_table.py fresh_chop near_gale_long_fetch storm_force_ten --seeds 12 --frames 4

Each seed is an independent sea; its frames are two peak periods apart. The displaced
surface is resampled onto the regular grid (oceanfield.analysis.shape) before it is
measured. Standard errors are over seeds (each seed's frames averaged first), so the
realised variance of a seed's few long waves counts in them.
"""

from __future__ import annotations

import argparse
import math
from dataclasses import replace

from oceanfield.analysis.shape import HeightShape, combine_shapes, height_shape, resample_displaced
from oceanfield.preset import load_preset
from oceanfield.surface.synth import Ocean


def measure(preset, bound, seeds: int, frames: int):
    per_seed, unconverged = [], []
    for seed in range(seeds):
        ocean = Ocean.from_preset(replace(preset, seed=preset.seed + seed), foam_memory=0.0, bound_waves=bound)
        stats = ocean.sea_state.statistics()
        axis = 1 if abs(math.cos(stats.mean_direction)) >= abs(math.sin(stats.mean_direction)) else 0
        shapes = []
        for i in range(frames):
            fields = ocean.frame(0.37 + 2.0 * i * stats.tp)
            eta, moving = resample_displaced(fields.height, fields.displacement_x, fields.displacement_y,
                                             ocean.tile.spacing)
            shapes.append(height_shape(eta, axis=axis))
            unconverged.append(moving)
        mean = {key: value[0] for key, value in combine_shapes(shapes).items()}
        per_seed.append(HeightShape(**{k: mean[k] for k in HeightShape.__dataclass_fields__ if k != "waves"},
                                    waves=int(mean["waves"])))
    return ocean, combine_shapes(per_seed), sum(unconverged) / len(unconverged)


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("presets", nargs="+")
    parser.add_argument("--seeds", type=int, default=12)
    parser.add_argument("--frames", type=int, default=4)
    parser.add_argument("--resolution", type=int, default=None)
    parser.add_argument("--after-only", action="store_true", help="measure only with bound waves")
    args = parser.parse_args()
    keys = ("skewness", "crest_trough_ratio", "top_tenth_crest", "mean_over_std")
    for name in args.presets:
        overrides = [f"tile.resolution={args.resolution}"] if args.resolution else []
        preset = load_preset(name, overrides=overrides)
        for bound in ((True,) if args.after_only else (False, True)):
            ocean, stats, moving = measure(preset, bound, args.seeds, args.frames)
            label = "bound waves" if bound else "linear+lateral"
            cells = "  ".join(f"{k} {stats[k][0]:+.4f} ± {stats[k][1]:.4f}" for k in keys)
            print(f"{name:<22} {label:<15} {cells}  (σ {stats['std'][0]:.3f} m, unconverged {moving:.4f})")
        theory = (ocean.bound or Ocean.from_preset(preset, foam_memory=0.0, bound_waves=True).bound).prediction
        print(f"{name:<22} {'theory':<15} skewness {theory.skewness:+.4f}  crest_trough_ratio "
              f"{theory.crest_trough_ratio:.4f}  top_tenth_crest {theory.top_tenth_crest:.4f}  "
              f"mean_over_std {theory.mean_level / theory.std:+.4f}")


if __name__ == "__main__":
    main()
