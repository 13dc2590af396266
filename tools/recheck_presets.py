"""Re-measure every shipped preset as `oceanfield render` builds it (issue 24).

Run from the repository root (minutes on two cores):

    python tools/recheck_presets.py hs             # tile Hs over requested Hs, seeds 1-5
    python tools/recheck_presets.py hs --seeds 1-3 fresh_chop long_swell
    python tools/recheck_presets.py mean           # mean level at fixed points, bound waves on

``hs``: for each preset and seed, the Ocean (or BandStack) of the preset with that seed,
and beside the Hs the preset asks for (a height-and-period component's
``significant_height_m``, else the spectrum's 4√m0; components summed in quadrature):

* ``amp``: 4√(Σ 2|h0|²), the tile's realised variance (its time average);
* ``frame``: 4·std of the linear height of one frame (t = 0.37 s), bands summed;
* ``rendered``: the same of the height map as rendered (bound waves as the preset sets
  them) and ``eulerian`` (``--eulerian``) of that surface resampled at fixed points;
* ``captured``: the lattice's Σ Ψ Δk² over the sea's m0 (what the tile can hold at most);
* a flag ``!`` where ``amp`` is more than 2 % off.

``mean``: the displaced surface resampled onto the grid (``analysis.shape``) over 16
frames two peak periods apart, bound waves on, for the presets whose bound waves are on
by default: mean level over σ, skewness, against the prediction; and the mean of the
height map itself (rest positions), which is not the level at fixed points.
"""

from __future__ import annotations

import argparse
import math
from dataclasses import replace

import numpy as np

from oceanfield.preset import list_presets, load_preset
from oceanfield.preset.banding import band_stack
from oceanfield.surface.synth import Ocean

TOLERANCE = 0.02


def requested_hs(preset) -> float:
    """What the preset states: Σ in quadrature of each component's significant_height_m,
    or of its spectrum's 4√m0 where it is sized by wind or a record."""
    sea = preset.sea_state()
    total = 0.0
    for settings, stats in zip(preset.sea.components, sea.component_statistics()):
        hs = settings.significant_height_m if settings.significant_height_m is not None else stats.hs
        total += hs * hs
    return math.sqrt(total)


def build(preset, seed: int, *, bound_waves=None):
    """The preset's oceans (one, or a stack's bands) for ``seed``, as a render builds them."""
    preset = replace(preset, seed=seed)
    if preset.bands.active:
        stack = band_stack(preset, foam_memory=0.0)
        if bound_waves is not None:
            raise ValueError("bound_waves: overrides are for single tiles here")
        return stack.oceans
    return [Ocean.from_preset(preset, foam_memory=0.0, bound_waves=bound_waves)]


def hs_rows(names, seeds, eulerian_too: bool = False):
    from oceanfield.analysis.shape import resample_displaced

    for name in names:
        preset = load_preset(name)
        asked = requested_hs(preset)
        m0 = preset.sea_state().statistics().m0
        for seed in seeds:
            oceans = build(preset, seed, bound_waves=None if preset.bands.active else False)
            realised = sum(o.realised_variance for o in oceans)
            lattice = sum(o.lattice_variance for o in oceans)
            frame = sum(float(np.var(o.frame(0.37).height.astype(np.float64))) for o in oceans)
            rendered = eulerian = math.nan
            if not preset.bands.active:  # as rendered (bound waves as set), and seen at fixed points
                ocean = build(preset, seed)[0]
                fields = ocean.frame(0.37)
                rendered = 4.0 * float(np.std(fields.height.astype(np.float64)))
                if eulerian_too:
                    eta, _ = resample_displaced(fields.height, fields.displacement_x, fields.displacement_y,
                                                ocean.tile.spacing)
                    eulerian = 4.0 * float(np.std(eta))
            yield (name, seed, asked, 4.0 * math.sqrt(realised), 4.0 * math.sqrt(frame), rendered, eulerian,
                   lattice / m0)


def hs_table(names, seeds, eulerian_too: bool = False) -> None:
    print(f"Tile Hs over requested Hs (wave_heights as in the preset; flag: amp outside ±{TOLERANCE:.0%})")
    print(f"{'preset':<22} {'seed':>4} {'asked m':>9} {'amp/asked':>10} {'frame/asked':>12} {'rendered':>9} "
          f"{'eulerian':>9} {'captured':>9}")
    outside = 0
    count = 0
    for name, seed, asked, amp, frame, rendered, eulerian, captured in hs_rows(names, seeds, eulerian_too):
        flag = "!" if abs(amp / asked - 1.0) > TOLERANCE else ""
        outside += bool(flag)
        count += 1
        print(f"{name:<22} {seed:>4} {asked:>9.4g} {amp / asked:>10.4f} {frame / asked:>12.4f} "
              f"{rendered / asked:>9.4f} {eulerian / asked:>9.4f} {captured * 100:>8.2f}% {flag}")
    print(f"{outside} of {count} pairs outside ±{TOLERANCE:.0%}")


def mean_table(names, seeds, frames: int) -> None:
    from oceanfield.analysis.shape import height_shape, resample_displaced

    print(f"Mean level at fixed points, bound waves on, {frames} frames two peak periods apart")
    print("(map mean/σ: the height map itself, at rest positions: it sits ½λΣka² above still water)")
    print(f"{'preset':<22} {'seed':>4} {'mean/σ':>9} {'±':>7} {'skew':>7} {'predicted skew':>15} {'pred mean/σ':>12} "
          f"{'map mean/σ':>11}")
    for name in names:
        preset = load_preset(name)
        if preset.bands.active:
            continue
        for seed in seeds:
            ocean = build(preset, seed)[0]
            if ocean.bound is None:
                break
            tp = ocean.sea_state.statistics().tp
            means, skews, raw = [], [], []
            for i in range(frames):
                fields = ocean.frame(0.37 + 2.0 * i * tp)
                eta, _ = resample_displaced(fields.height, fields.displacement_x, fields.displacement_y,
                                            ocean.tile.spacing)
                shape = height_shape(eta)
                height = fields.height.astype(np.float64)
                raw.append(height.mean() / height.std())
                means.append(shape.mean / shape.std)
                skews.append(shape.skewness)
            p = ocean.bound.prediction
            error = np.std(means, ddof=1) / math.sqrt(frames)
            print(f"{name:<22} {seed:>4} {np.mean(means):>+9.4f} {error:>7.4f} {np.mean(skews):>7.3f} "
                  f"{p.skewness:>15.3f} {p.mean_level / p.std:>+12.4f} {np.mean(raw):>+11.4f}")


def _seeds(text: str) -> list[int]:
    low, _, high = text.partition("-")
    return list(range(int(low), int(high or low) + 1))


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("table", choices=("hs", "mean"))
    parser.add_argument("presets", nargs="*", help="preset names (default: every shipped preset)")
    parser.add_argument("--seeds", type=_seeds, default=_seeds("1-5"), help="a range, e.g. 1-5")
    parser.add_argument("--frames", type=int, default=16)
    parser.add_argument("--eulerian", action="store_true", help="hs: also the surface resampled at fixed points")
    args = parser.parse_args()
    names = args.presets or [name for name, _, _ in list_presets() if name != "reference"]
    if args.table == "hs":
        hs_table(names, args.seeds, args.eulerian)
    else:
        mean_table(names, args.seeds, args.frames)


if __name__ == "__main__":
    main()
