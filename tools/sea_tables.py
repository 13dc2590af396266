"""Tables behind issue 11's checks: realised Hs over seeds, foam against wind, band energies.

Run from the repository root (a few minutes on two cores):

    python tools/sea_tables.py            # all three tables
    python tools/sea_tables.py hs         # realised Hs of every shipped preset over 20 seeds
    python tools/sea_tables.py foam       # foam share against W(U10) at 256² and 1024²
    python tools/sea_tables.py bands      # fresh_chop's half-octave band energies

Every figure comes from the package's own code paths (Ocean, its amplitudes and frames).
"""

from __future__ import annotations

import math
import sys

import numpy as np

from oceanfield import Ocean, Tile
from oceanfield.physics.whitecaps import whitecap_coverage
from oceanfield.preset import list_presets, load_preset
from oceanfield.surface.amplitudes import cell_variance

SEEDS = range(20)
WINDS = (8.0, 12.0, 16.0, 20.0, 25.0)


def annulus_index(q) -> np.ndarray:
    """Half-octave annulus of the lattice radius |n| = √q: j with 2^j ≤ q < 2^(j+1)."""
    _, exponent = np.frexp(np.asarray(q, dtype=np.float64))
    return np.maximum(exponent.astype(np.int64) - 1, 0)


def _ocean(preset, seed: int, heights: str, *, resolution: int | None = None) -> Ocean:
    tile = Tile(preset.tile.size_m, resolution or preset.tile.resolution)
    return Ocean(preset.sea_state(), tile, seed=seed, lateral_factor=preset.surface.lateral_factor,
                 fold_threshold=0.0, wave_heights=heights)


def hs_table() -> None:
    print("Realised Hs / requested Hs over seeds 0-19 (amplitudes only; time-averaged tile variance)")
    print(f"{'preset':<22} {'Hs m':>6} {'captured':>9} | {'as_requested min..max':>22} | {'random min..max':>16}")
    for name, _, _ in list_presets():
        preset = load_preset(name)
        hs = preset.sea_state().statistics().hs
        ratios = {}
        for heights in ("as_requested", "random"):
            ratios[heights] = np.array([_ocean(preset, seed, heights).realised_hs / hs for seed in SEEDS])
        captured = _ocean(preset, 0, "random").lattice_variance / preset.sea_state().statistics().m0
        a, r = ratios["as_requested"], ratios["random"]
        print(f"{name:<22} {hs:>6.3f} {captured * 100:>8.2f}% | {a.min():>10.4f} .. {a.max():<9.4f} | "
              f"{r.min():>6.3f} .. {r.max():<6.3f}")


def _foam_share(ocean: Ocean, frames: int = 4) -> float:
    period = ocean.sea_state.statistics().tp
    buffer = ocean.new_buffer()
    return float(np.mean([np.mean(ocean.frame(period * i / frames, buffer=buffer).foam > 0.5)
                          for i in range(frames)]))


def foam_table() -> None:
    print("Foam share (foam > 0.5, mean of 4 frames over a peak period) against W(U10) = 3.84e-6 U10^3.41")
    print("reference preset (256 m tile, fully developed PM sea, lateral factor 1), seed 0")
    print(f"{'U10 m/s':>8} {'W %':>7} | {'256² %':>7} {'ratio':>6} | {'1024² %':>8} {'ratio':>6} | {'1024/256':>8}")
    for wind in WINDS:
        w = float(whitecap_coverage(wind))
        shares = []
        for resolution in (256, 1024):
            preset = load_preset("reference", overrides=[f"sea.components.0.wind_speed_mps={wind}",
                                                          f"tile.resolution={resolution}"])
            shares.append(_foam_share(Ocean.from_preset(preset, foam_memory=0.0)))
        print(f"{wind:>8.0f} {w * 100:>7.2f} | {shares[0] * 100:>7.2f} {shares[0] / w:>6.2f} | "
              f"{shares[1] * 100:>8.2f} {shares[1] / w:>6.2f} | {shares[1] / shares[0]:>8.3f}")
    swell = load_preset("long_swell", overrides=["surface.fold_threshold=null"])
    print(f"long_swell (swell only, threshold from the wind): foam share {_foam_share(Ocean.from_preset(swell)):.4f}")


def _band_energy(ocean: Ocean, frames: int = 8) -> np.ndarray:
    """Measured variance per half-octave annulus, from the height maps' FFT (mean of frames)."""
    n = ocean.tile.resolution
    index = np.fft.fftfreq(n, 1.0 / n).astype(np.int64)
    ring = annulus_index(index[:, None] ** 2 + index[None, :] ** 2)
    period = ocean.sea_state.statistics().tp
    total = np.zeros(ring.max() + 1)
    for i in range(frames):
        spectrum = np.fft.fft2(ocean.frame(period * i / frames).height.astype(np.float64)) / n**2
        total += np.bincount(ring.ravel(), np.abs(spectrum.ravel()) ** 2, minlength=total.size)
    return total / frames


def bands_table() -> None:
    preset = load_preset("fresh_chop")
    sea = preset.sea_state()
    tile = Tile(preset.tile.size_m, preset.tile.resolution)
    ny, nx = tile.wave_indices()
    carried = tile.carried(ny, nx)
    cell = np.where(carried, cell_variance(sea, tile.dk, ny, nx), 0.0)
    centre = np.where(carried, sea.directional_spectrum(nx * tile.dk, ny * tile.dk), 0.0) * tile.dk**2
    ring = annulus_index(nx * nx + ny * ny)
    target = np.bincount(ring.ravel(), cell.ravel())
    sampled = np.bincount(ring.ravel(), centre.ravel(), minlength=target.size)
    lam = 2 * math.pi / tile.dk
    print(f"fresh_chop ({tile.size:g} m, {tile.resolution}², seed {preset.seed}): half-octave annuli of |k|/Δk")
    print("target = ∫Ψ over the cells of the annulus; 'centre' = Ψ at cell centres × Δk² (the old rule)")
    print(f"{'annulus |n|':>13} {'λ m':>13} {'share %':>8} {'centre/target':>14} {'as_requested':>13} {'random':>8}")
    realised = {h: _band_energy(_ocean(preset, preset.seed, h)) for h in ("as_requested", "random")}
    share = target / target.sum()
    for j in range(target.size):
        if share[j] < 1e-4:
            continue
        low, high = 2 ** (j / 2), 2 ** ((j + 1) / 2)
        print(f"{low:>6.2f}-{high:<6.2f} {lam / high:>6.1f}-{lam / low:<6.1f} {share[j] * 100:>8.2f} "
              f"{sampled[j] / target[j]:>14.3f} {realised['as_requested'][j] / target[j]:>13.3f} "
              f"{realised['random'][j] / target[j]:>8.3f}")
    print(f"total: centre {sampled.sum() / target.sum():.4f} of target; target/m0 {target.sum() / sea.statistics().m0:.4f}")
    print()
    # Bands placed on the spectral peak, against the continuous integral of Ψ over the exact
    # annulus (polar Gauss–Legendre): each lattice wave counts in the band of its centre.
    kp = 2 * math.pi / sea.statistics().peak_wavelength
    k = np.hypot(nx, ny) * tile.dk
    waves = {"centre": centre, "cell": cell, "realised": None}
    ocean = _ocean(preset, preset.seed, "as_requested")
    waves["realised"] = 2.0 * np.abs(ocean.amplitudes.astype(np.complex128)) ** 2
    nodes, weights = np.polynomial.legendre.leggauss(64)
    theta = np.linspace(-math.pi, math.pi, 2049)[:-1]
    print(f"bands of half an octave placed on the peak kp = {kp:.4f} rad/m ({kp / tile.dk:.2f} Δk); "
          "ratios to ∫Ψ over the exact annulus")
    print(f"{'k/kp':>11} {'share %':>8} {'centre':>7} {'cell':>7} {'realised':>9}")
    for i in range(-3, 5):
        low, high = kp * 2 ** ((i - 1) / 2), kp * 2 ** (i / 2)
        radii = 0.5 * (high + low) + 0.5 * (high - low) * nodes
        grid = sea.directional_spectrum(radii[:, None] * np.cos(theta), radii[:, None] * np.sin(theta))
        exact = float(np.sum(weights * radii * grid.mean(axis=1) * 2 * math.pi) * 0.5 * (high - low))
        inside = carried & (k >= low) & (k < high)
        row = [float(np.sum(w[inside])) / exact for w in waves.values()]
        print(f"{2 ** ((i - 1) / 2):>5.2f}-{2 ** (i / 2):<5.2f} {exact / sea.statistics().m0 * 100:>8.2f} "
              f"{row[0]:>7.3f} {row[1]:>7.3f} {row[2]:>9.3f}")


if __name__ == "__main__":
    wanted = sys.argv[1:] or ["hs", "foam", "bands"]
    for key in wanted:
        {"hs": hs_table, "foam": foam_table, "bands": bands_table}[key]()
        print()
