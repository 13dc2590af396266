"""Second-order bound waves of a tile, for a surface that also moves sideways.

Knows nothing of presets or files: a sea state, a tile and a frame's amplitudes go in.

A linear sea is symmetric: its crests are as high as its troughs are deep. At second order
every pair of waves carries bound waves at kᵢ ± kⱼ (Longuet-Higgins 1963; Sharma & Dean
1981; kernels B± in :mod:`oceanfield.physics.second_order`), which sharpen crests,
flatten troughs and, in finite depth, lower the water under the groups (set-down).

**Not counting twice.** Our surface points move sideways by the lateral displacement D
(Tessendorf 2001; a Gerstner wave at λ = 1): the height h(x₀) sits at
x₀ + D(x₀). Seen at a fixed point x, that surface is η(x) = h(x − D) ≈ h − D·∇h, so its
Eulerian profile already holds the second-order part −D·∇h: for one wave, +½λka² cos 2φ
(the Stokes harmonic at λ = 1) and a mean level lowered by ½λka² (the trochoid's drop;
compare Nouguier, Chapron & Guérin 2009, J. Geophys. Res. 114). The height we add at the
rest position is therefore

    h₂ = η₂ + D·∇h₁,     with kernels L⁺ = B⁺ − λ(kᵢ + kⱼ)cᵢⱼ/4,  L⁻ = B⁻ + λ(kᵢ + kⱼ)cᵢⱼ/4

(cᵢⱼ the cosine between the parents), so that the displaced surface resampled onto a
regular grid has the Eulerian second-order statistics: skewness, crest-to-trough ratio,
the mean level at still water in deep water and at the set-down in finite depth.

**What is summed.** The full second-order sum over pairs is exact but costs P² a frame for
P parents. Bound waves are products of their parents' amplitudes, so they matter only
among the energetic waves: the parents are the lattice's most energetic waves (by the
spectrum, not the draw, so every seed and resolution of a tile share them) up to a
share of its variance or a count, whichever comes first. The mean-level terms of the
waves left out (their lateral-displacement drop and their set-down) are added as a
constant. Pairs are summed exactly, in a small spectrum (``_bound_kernels``) added to
the frame's packed spectra before its inverse transforms: no transform of their own.
Bound waves keep the frequencies ωᵢ ± ωⱼ of their parents, so they ride with them and a
looped sea (quantised ω) still loops exactly.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from ..physics.second_order import (
    SecondOrderStatistics,
    bound_wave_kernel_matrix,
    bound_wave_kernels,
    second_order_statistics,
)
from ..physics.seastate import SeaState
from .amplitudes import cell_variance
from .tile import Tile

__all__ = [
    "BoundWaves",
    "pair_kernels",
    "bound_waves",
    "BOUND_WAVE_MODES",
    "AUTO_SKEWNESS",
    "MAX_PARENTS",
    "MAX_HARMONIC_RATIO",
    "PARENT_SHARE",
]

#: Values of the ``bound_waves`` setting: "auto" (on when they matter), True, False.
BOUND_WAVE_MODES = ("auto", True, False)

#: "auto" adds bound waves when the predicted skewness reaches this. At 0.03 mean crests
#: stand 1.6 % above mean troughs (Tayfun 1980), below the sampling error of the skewness
#: measured on a 24-frame sequence of a few peak wavelengths (±0.02, our measurement on
#: fresh_chop): a sea that skews less looks the same with or without them.
AUTO_SKEWNESS = 0.03

#: Largest ratio of the second harmonic to the first, B⁺(kp, kp)·Hs/2, at which "auto"
#: still adds bound waves. Above a quarter, Stokes' second-order profile a cos φ + b cos 2φ
#: grows a second crest in its trough (4b > a: derived), the sign that second order no
#: longer describes the wave (shallow water, where cnoidal theory takes over; in shallow
#: water B⁺ ≈ 3/(4k²h³), so this is an Ursell number Hs·L²/h³ of about 26).
MAX_HARMONIC_RATIO = 0.25

#: Parents are gravity waves: waves whose surface-tension term T k²/(ρ g) exceeds this
#: share of gravity's (shorter than about 5 cm in water) are left out (the kernels hold
#: for gravity waves only; capillary waves have second-order resonances of their own).
_CAPILLARY_SHARE = 0.1

#: Largest number of parent waves (the pair sum costs about P²/2 multiply-adds a frame:
#: 0.5 M at 1024, a few ms).
MAX_PARENTS = 1024

#: Share of the variance (of the waves within the searched disc) the parents hold when
#: the count allows.
PARENT_SHARE = 0.995

#: Largest wave index searched for parents (the parents of a tile a few peak wavelengths
#: wide lie well inside it; beyond it the bound waves are left out). A tile needs a
#: resolution of at least four times its parents' largest index to hold them all.
_SEARCH_RADIUS = 96


@dataclass(frozen=True)
class BoundWaves:
    """The second-order bound waves of one Ocean: parents and their pair coefficients.

    Attributes
    ----------
    ny, nx : ndarray of int64
        Wave indices of the P parents (their amplitudes are read from the Ocean's h0 at each
        frame: Aᵢ = 2 h0(kᵢ), so that η₁ = Re Σ A e^{i(k·x − ωt)}).
    slot : ndarray of int32
        Each parent's slot in the frame's rotation table (e^{−iωt} per |k|²).
    pair_kernel : ndarray of float64, P(P + 1)
        L⁺ and L⁻ in 1/m (the Eulerian kernels less what lateral displacement holds) of
        each unordered pair i ≤ j, interleaved (L⁺ᵢⱼ, L⁻ᵢⱼ), row i after row i − 1: the
        order the pair sum reads them, half the memory of the two (P, P) matrices
        (:attr:`sum_kernel`, :attr:`difference_kernel` rebuild those).
    mean_offset : float
        Metres added to the mean level for the waves left out of the pairs.
    size : int
        Side M of the small spectrum that holds every kᵢ ± kⱼ.
    dk : float
        Lattice spacing in rad/m.
    prediction : SecondOrderStatistics
        What second-order theory predicts for the parents (expected, not drawn, amplitudes).
    parent_share : float
        Share of the lattice's variance the parents hold.
    harmonic_ratio : float
        B⁺(kp, kp)·Hs/2: the second harmonic of a significant wave at the peak over its
        amplitude (kp·Hs/4 in deep water); "auto" leaves bound waves out above
        ``MAX_HARMONIC_RATIO``.
    """

    ny: NDArray[np.int64]
    nx: NDArray[np.int64]
    slot: NDArray[np.int32]
    pair_kernel: NDArray[np.float64]
    mean_offset: float
    size: int
    dk: float
    prediction: SecondOrderStatistics
    parent_share: float
    harmonic_ratio: float

    @property
    def parents(self) -> int:
        """Number of parent waves P."""
        return int(self.ny.size)

    @property
    def sum_kernel(self) -> NDArray[np.float64]:
        """L⁺ as a symmetric (P, P) matrix (a new array; the frames read :attr:`pair_kernel`)."""
        return _unpacked(self.pair_kernel[0::2], self.parents)

    @property
    def difference_kernel(self) -> NDArray[np.float64]:
        """L⁻ as a symmetric (P, P) matrix (a new array; the frames read :attr:`pair_kernel`)."""
        return _unpacked(self.pair_kernel[1::2], self.parents)

    def wave_indices(self) -> tuple[NDArray[np.int64], NDArray[np.int64]]:
        """(ny, nx) of the small spectrum's entries in FFT layout, as column and row."""
        n = np.fft.fftfreq(self.size, d=1.0 / self.size).astype(np.int64)
        return n[:, None], n[None, :]

    def spectrum(self, h0: NDArray[np.complex64], rotation: NDArray[np.complex128]) -> NDArray[np.complex128]:
        """Spectrum ĥ₂(K) of the bound height on the small (M, M) lattice (FFT layout).

        ``h0`` is the Ocean's amplitudes and ``rotation`` the frame's e^{−iωt} per slot
        (as ``Ocean.frame`` makes them; ``Ocean.bound_spectrum(t)`` does both). The height
        at rest position x is Σ ĥ₂(K) e^{iK·x}; this is the hook for anything that needs
        the bound waves alone (a band split, exact sums at probes).
        """
        from ._bound_kernels import bound_spectrum_kernel

        out = np.empty((self.size, self.size), dtype=np.complex128)
        bound_spectrum_kernel(h0, self.slot, rotation, self.ny, self.nx, self.pair_kernel, self.mean_offset, out)
        return out

    def modes(self, h0: NDArray[np.complex64], omega: NDArray[np.float64], *, share: float = 1.0):
        """The bound waves as travelling sinusoids (``surface.modes.WaveModes``), for exact
        sums at points (probes, bodies): one mode per pair and sign, wave vector kᵢ ± kⱼ,
        frequency ωᵢ ± ωⱼ (``omega`` per slot), height amplitude w·L±·AᵢAⱼ^(*) (w = 2 off
        the diagonal), no lateral displacement; the diagonal's difference terms and the
        left-out mean make one mode at k = 0. Their sum equals :meth:`spectrum`'s field.

        There are about P² of them. ``share`` < 1 keeps only the largest, holding that share
        of their height variance Σ|c|²/2: the rest add an rms height of √(1 − share) of the
        bound waves' (10 % of it at 0.99).
        """
        from .modes import WaveModes

        n = h0.shape[0]
        a = 2.0 * h0[self.ny % n, self.nx % n].astype(np.complex128)
        w = omega[self.slot]
        i, j = np.triu_indices(self.parents)  # the order of pair_kernel
        plus, minus = self.pair_kernel[0::2], self.pair_kernel[1::2]
        weight = np.where(i == j, 1.0, 2.0)
        off = i != j
        io, jo = i[off], j[off]
        mean = float(np.sum(minus[~off] * np.abs(a) ** 2)) + self.mean_offset
        kx = np.concatenate([self.nx[i] + self.nx[j], self.nx[io] - self.nx[jo], [0]]) * self.dk
        ky = np.concatenate([self.ny[i] + self.ny[j], self.ny[io] - self.ny[jo], [0]]) * self.dk
        frequency = np.concatenate([w[i] + w[j], w[io] - w[jo], [0.0]])
        height = np.concatenate([
            weight * plus * a[i] * a[j],
            2.0 * minus[off] * a[io] * np.conj(a[jo]),
            [mean],
        ])
        if share < 1.0:
            power = np.abs(height) ** 2
            order = np.argsort(-power, kind="stable")
            cumulative = np.cumsum(power[order])
            count = int(np.searchsorted(cumulative, share * cumulative[-1])) + 1
            keep = np.sort(order[:count])
            kx, ky, frequency, height = kx[keep], ky[keep], frequency[keep], height[keep]
        zero = np.zeros(height.size, dtype=np.complex128)
        return WaveModes(kx, ky, frequency, height, zero, zero)

    def rate(self, h0: NDArray[np.complex64], rotation: NDArray[np.complex128],
             omega: NDArray[np.float64]) -> NDArray[np.complex128]:
        """Spectrum of ∂h₂/∂t on the small lattice (as :meth:`spectrum`; ``omega`` per slot):
        each bound wave oscillates at its parents' ωᵢ ± ωⱼ."""
        from ._bound_kernels import bound_rate_kernel

        out = np.empty((self.size, self.size), dtype=np.complex128)
        bound_rate_kernel(h0, self.slot, rotation, omega, self.ny, self.nx, self.pair_kernel, out)
        return out


def pair_kernels(
    kx: NDArray[np.float64], ky: NDArray[np.float64], *, depth: float, lateral_factor: float,
    kernels: tuple[NDArray[np.float64], NDArray[np.float64]] | None = None,
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """(L⁺, L⁻) in 1/m for every ordered pair of the waves (kx, ky): the Eulerian kernels
    less what lateral displacement λ already puts in the displaced surface,
    L± = B± ∓ λ(kᵢ + kⱼ)(k̂ᵢ·k̂ⱼ)/4 (module docstring). ``kernels``: (B⁺, B⁻) if known."""
    if kernels is None:
        kernels = bound_wave_kernel_matrix(kx, ky, depth=depth)
    b_plus, b_minus = kernels
    lateral = _lateral_part(kx, ky, slice(None), lateral_factor)
    return np.ascontiguousarray(b_plus - lateral), np.ascontiguousarray(b_minus + lateral)


def _lateral_part(kx: NDArray[np.float64], ky: NDArray[np.float64], rows: slice,
                  lateral_factor: float) -> NDArray[np.float64]:
    """λ(kᵢ + kⱼ)(k̂ᵢ·k̂ⱼ)/4 for the pairs of rows ``rows`` with every wave j."""
    k = np.hypot(kx, ky)
    cosine = (kx[rows, None] * kx[None, :] + ky[rows, None] * ky[None, :]) / (k[rows, None] * k[None, :])
    return 0.25 * lateral_factor * (k[rows, None] + k[None, :]) * cosine


#: Pairs whose kernels are packed at once (memory only).
_PAIR_BLOCK = 1 << 15


def _packed_pair_kernels(kx: NDArray[np.float64], ky: NDArray[np.float64],
                         kernels: tuple[NDArray[np.float64], NDArray[np.float64]],
                         lateral_factor: float) -> NDArray[np.float64]:
    """:func:`pair_kernels` packed as ``BoundWaves.pair_kernel`` (the pairs i ≤ j, L⁺ and L⁻
    interleaved, row by row), a block of rows at a time: the same numbers without the two
    (P, P) matrices."""
    b_plus, b_minus = kernels
    p = kx.size
    out = np.empty(p * (p + 1))
    rows = max(1, _PAIR_BLOCK // max(p, 1))
    at = 0
    for start in range(0, p, rows):
        block = slice(start, min(start + rows, p))
        lateral = _lateral_part(kx, ky, block, lateral_factor)
        upper = np.arange(p)[None, :] >= np.arange(block.start, block.stop)[:, None]
        count = int(np.count_nonzero(upper))
        out[2 * at:2 * (at + count):2] = (b_plus[block] - lateral)[upper]
        out[2 * at + 1:2 * (at + count):2] = (b_minus[block] + lateral)[upper]
        at += count
    return out


def bound_waves(
    sea_state: SeaState,
    tile: Tile,
    h0: NDArray[np.complex64],
    slots: NDArray[np.int32],
    lattice_variance: float,
    *,
    lateral_factor: float,
    max_parents: int = MAX_PARENTS,
    share: float = PARENT_SHARE,
    wavenumber_range: tuple[float, float] | None = None,
) -> BoundWaves:
    """Choose the parents of a tile and precompute their pair coefficients.

    ``h0`` and ``slots`` are the Ocean's amplitudes (FFT layout) and its |k|² → rotation
    slot table; ``lattice_variance`` its Σ Ψ Δk². With ``wavenumber_range`` (a band of a
    stack) the parents are the band's own waves: pairs across bands are left out.
    """
    n = tile.resolution
    dk = tile.dk
    # Rank the waves of a fixed disc of wave indices by their expected variance (then by
    # index, so ties fall alike), whatever the resolution: a preview and a final of one
    # tile rank alike and share their parents where the preview can hold them.
    idx = np.arange(-_SEARCH_RADIUS, _SEARCH_RADIUS + 1, dtype=np.int64)
    ny, nx = np.meshgrid(idx, idx, indexing="ij")
    ny, nx = ny.ravel(), nx.ravel()
    keep = ((nx != 0) | (ny != 0)) & (nx * nx + ny * ny <= _SEARCH_RADIUS**2)
    if wavenumber_range is not None:
        low, high = wavenumber_range
        k2 = (nx * nx + ny * ny) * dk * dk
        keep &= (k2 >= low * low) & (k2 < high * high)
    if sea_state.surface_tension > 0.0:
        k_capillary = math.sqrt(_CAPILLARY_SHARE * sea_state.density * sea_state.gravity / sea_state.surface_tension)
        keep &= (nx * nx + ny * ny) * dk * dk <= k_capillary**2
    ny, nx = ny[keep], nx[keep]
    variance = cell_variance(sea_state, dk, ny, nx)  # each wave's expected variance, as drawn
    order = np.lexsort((nx, ny, -variance))
    cumulative = np.cumsum(variance[order])
    total = float(cumulative[-1]) if cumulative.size else 0.0
    count = int(np.searchsorted(cumulative, share * total)) + 1 if total > 0 else 0
    count = min(count, max_parents, int(np.count_nonzero(variance > 0.0)))
    chosen = order[:count]
    # only waves whose sums and differences the tile's lattice holds (|n| < N/4)
    reach = n // 4 - 1
    chosen = chosen[tile.carried(ny[chosen], nx[chosen]) & (np.abs(nx[chosen]) <= reach) & (np.abs(ny[chosen]) <= reach)]
    chosen = np.sort(chosen)  # lattice order: the same parents give the same sums
    ny, nx, variance = ny[chosen], nx[chosen], variance[chosen]
    kx, ky = nx * dk, ny * dk
    depth = sea_state.depth
    kernels = bound_wave_kernel_matrix(kx, ky, depth=depth)
    prediction = second_order_statistics(kx, ky, variance, depth=depth, kernels=kernels)
    pair_kernel = _packed_pair_kernels(kx, ky, kernels, lateral_factor)
    del kernels  # (P, P) each: 16 MB at 1024 parents, no longer needed
    slot = slots[nx * nx + ny * ny].astype(np.int32)
    mean_offset = _left_out_mean(tile, h0, ny, nx, lateral_factor, depth)
    stats = sea_state.statistics()
    kp = 2.0 * math.pi / stats.peak_wavelength
    peak_harmonic, _ = bound_wave_kernels(kp, 0.0, kp, 0.0, depth=depth)
    max_index = int(max(np.abs(nx).max(initial=0), np.abs(ny).max(initial=0)))
    return BoundWaves(
        ny=ny,
        nx=nx,
        slot=slot,
        pair_kernel=pair_kernel,
        mean_offset=mean_offset,
        size=4 * max_index + 2,
        dk=dk,
        prediction=prediction,
        parent_share=float(variance.sum() / max(lattice_variance, 1e-300)),
        harmonic_ratio=float(peak_harmonic) * stats.hs / 2.0,
    )


def _unpacked(upper: NDArray[np.float64], p: int) -> NDArray[np.float64]:
    """The symmetric (P, P) matrix of a packed upper triangle."""
    i, j = np.triu_indices(p)
    full = np.empty((p, p))
    full[i, j] = upper
    full[j, i] = upper
    return full


def _left_out_mean(
    tile: Tile, h0: NDArray[np.complex64], ny: NDArray[np.int64], nx: NDArray[np.int64],
    lateral_factor: float, depth: float,
) -> float:
    """Mean level the waves outside the pairs would have added: their lateral-displacement
    drop undone (+2λ Σ |k| |h0|²) and their set-down (4 Σ |h0|² B⁻ₖₖ, 0 in deep water)."""
    n = tile.resolution
    total = 0.0
    parents = np.zeros((n, n), dtype=bool)
    parents[ny % n, nx % n] = True
    for start in range(0, n, 128):
        rows = slice(start, min(start + 128, n))
        ky, kx = tile.wavenumbers(rows)
        k = np.hypot(kx, ky)
        power = np.where(parents[rows], 0.0, np.abs(h0[rows].astype(np.complex128)) ** 2)
        weight = 2.0 * lateral_factor * k
        if not math.isinf(depth):
            with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
                set_down = np.where(k > 0, -k / (2.0 * np.sinh(2.0 * k * depth)), 0.0)
            weight = weight + 4.0 * np.nan_to_num(set_down)
        total += float(np.sum(power * weight))
    return total
