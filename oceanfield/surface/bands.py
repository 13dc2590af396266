"""Bands: one sea synthesised as several periodic tiles of different sizes and resolutions.

Knows nothing of presets or files.

A single tile repeats at its own period and carries no wave shorter than two texels. A
:class:`BandStack` shares the spectrum out between bands: band b is an :class:`Ocean` on its
own tile that carries only the waves with k_b ≤ |k| < k_{b+1}, so every wave of the
spectrum is synthesised by exactly one band (the weights are 1 in one band and 0 in the
others at every k) and no variance is counted twice. Each band draws its own amplitude
stream, keyed by (seed, band, nx, ny): band 0 is bit-identical to a single tile of the
same size, resolution and seed, and changing one band leaves the others as they were.

The tile sizes stand in ratios far from simple fractions (each carries a factor of an
irrational number), so the sum of the bands does not repeat within the declared extent:
a band repeats at its own period, but at those shifts the other bands, which carry the
rest of the variance, do not.

:func:`layout_bands` chooses the bands from two numbers: the farthest distance that must
look right (band 0's tile, which never repeats within it) and the shortest wave wanted
near the camera; it splits the range so that no band carries more than a set share of the
height variance or of the mean-square slope, which is what keeps the composite's
autocorrelation low where a band repeats.

:meth:`BandStack.composite` sums the bands onto one large map on any grid (``composite``:
non-uniform FFTs, or exact Fourier sums by the chirp z-transform): only the waves the
composite's grid can hold (|kx|, |ky| below its Nyquist) are summed;
:meth:`BandStack.repetition` measures how much that sum repeats (``repetition``).
"""

from __future__ import annotations

import math
import os
import threading
from contextlib import contextmanager
from dataclasses import dataclass
from typing import Sequence

import numpy as np
from numpy.typing import NDArray

from ..physics.seastate import SeaState
from .composite import fourier_sum
from . import repetition as _repetition
from .fields import Fields
from .synth import Ocean
from .tile import Tile

__all__ = [
    "Band",
    "BandStack",
    "BandLayout",
    "layout_bands",
    "band_moments",
    "fourier_sum",
]

#: Tile-size factors of bands 1, 2, …: square roots of primes over their integer part,
#: numbers far from simple fractions of each other (any small-integer relation between
#: two band periods would make the sum repeat at that common multiple).
_IRRATIONAL_FACTORS = tuple(math.sqrt(p) / math.floor(math.sqrt(p)) for p in (2, 7, 13, 5, 11, 19, 23, 29, 31, 37, 41, 43, 47, 53, 59))
#: Whole waves across a band's tile at its lowest wavenumber: fewer and the band's longest
#: waves sit on a coarse lattice of directions and the lattice's variance sum drifts from
#: the spectrum's integral (at 8, by 1.5 % for a band on a sharp peak; measured).
_LOWEST_WAVE_INDEX = 16
#: The most a band may carry of the mean-square slope, or (bands after the first) of the
#: height variance: a band repeats at its own period with autocorrelation equal to its
#: share, so the shares bound the composite's autocorrelation where a band repeats.
MAX_SLOPE_SHARE = 0.15
MAX_HEIGHT_SHARE = 0.15
_MAX_BANDS = 1 + len(_IRRATIONAL_FACTORS)
_SERIAL_TEXELS = 256 * 256
#: Rough single-thread costs for ordering a frame's tasks (measured on one core, 2026):
#: a bound-wave pair about 4 ns, a texel's packed spectra about 5 ns, a small band's whole
#: frame about (6 + log2 texels) ns a texel. Only their order matters, not their values.
_PAIR_NS = 4.0
_SPECTRA_NS = 5.0
_FRAME_NS = 6.0
_SIMPLE_DENOMINATOR = 16
_RATIO_MARGIN = 0.01
_SLIVER = 1.5  # a last band spanning less than this ratio of wavenumbers joins the one before


@dataclass(frozen=True)
class Band:
    """One band: a tile and the wavenumbers k_low ≤ |k| < k_high (rad/m) it carries."""

    tile: Tile
    k_low: float
    k_high: float

    def __post_init__(self) -> None:
        if not (0.0 <= self.k_low < self.k_high) or math.isnan(self.k_high):
            raise ValueError(
                f"band wavenumbers: ({self.k_low!r}, {self.k_high!r}) is not allowed; allowed: 0 <= k_low < k_high"
            )


@dataclass(frozen=True)
class BandLayout:
    """What :func:`layout_bands` chose, and from what."""

    bands: tuple[Band, ...]
    reach: float
    shortest_wavelength: float


def _next_even_fast(n: int) -> int:
    from scipy.fft import next_fast_len

    n = max(int(n), 16)
    while True:
        n = next_fast_len(n)
        if n % 2 == 0:
            return n
        n += 1


def _near_coincidence(size: float, other: float) -> bool:
    """Whether q periods of the larger tile come within 1 % of the smaller tile's period of
    a whole number of its periods, for some q ≤ 16: |q·r − p| < 0.01, r the size ratio."""
    ratio = max(size, other) / min(size, other)
    for q in range(1, _SIMPLE_DENOMINATOR + 1):
        if abs(q * ratio - round(q * ratio)) < _RATIO_MARGIN:
            return True
    return False


def _away_from_simple_ratios(size: float, others: Sequence[float]) -> float:
    """``size``, grown in steps of 0.1 % until no other size is a near coincidence with it
    (:func:`_near_coincidence`); growing keeps at least 16 of the band's longest waves across."""
    for _ in range(1000):
        if not any(_near_coincidence(size, other) for other in others):
            return size
        size *= 1.001
    return size


def _cumulative(sea: SeaState, k: NDArray[np.float64]) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Cumulative variance and mean-square slope from k[0] up to each k (trapezoid in ln k)."""
    density = sea.frequency_spectrum(sea.angular_frequency(k)) * sea.group_velocity(k) * k  # per ln k
    u = np.log(k)
    du = np.diff(u)
    variance = np.concatenate([[0.0], np.cumsum(0.5 * (density[1:] + density[:-1]) * du)])
    slope_density = density * k * k
    slope = np.concatenate([[0.0], np.cumsum(0.5 * (slope_density[1:] + slope_density[:-1]) * du)])
    return variance, slope


def layout_bands(
    sea: SeaState,
    *,
    reach: float,
    shortest_wavelength: float,
    resolution: int = 512,
    max_resolution: int = 2048,
) -> BandLayout:
    """Choose bands for a shot: tiles, resolutions and wavenumber ranges.

    Band 0 is a tile twice ``reach`` wide at ``resolution`` (so no two points within the
    reach of each other are one of its periods apart), raised towards ``max_resolution``
    until at most 7.5 % of the variance lies beyond its Nyquist; it carries every wave from its longest up to its Nyquist circle or
    less. Each further band starts where the one before stops, with a tile whose longest
    wave fits 8 times across it, times a factor far from a simple fraction (√2, √7/2, …),
    and ends where it would carry more than 15 % of the mean-square slope (15 % of the
    height variance) of the covered range, or at its resolution's Nyquist circle
    (``max_resolution`` texels at most), or at 2π/``shortest_wavelength``.

    Parameters
    ----------
    sea : SeaState
        The sea whose spectrum is shared out.
    reach : float
        The farthest distance in metres that must look right: the side of the square over
        which nothing may repeat (band 0's tile is twice as wide).
    shortest_wavelength : float
        The shortest wave in metres the bands must carry.
    resolution : int
        Texels per side of band 0 (even, ≥ 16).
    max_resolution : int
        The largest resolution a later band may take.
    """
    for name, value in (("reach", reach), ("shortest_wavelength", shortest_wavelength)):
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value) or value <= 0:
            raise ValueError(f"{name}: {value!r} is not allowed; allowed: a finite length > 0 metres")
    first = Tile(2.0 * float(reach), resolution)
    k_end = 2.0 * math.pi / shortest_wavelength
    if k_end <= 2.0 * first.dk:
        raise ValueError(
            f"shortest_wavelength: {shortest_wavelength!r} is not allowed; allowed: shorter than the reach ({reach:g} m)"
        )
    k = np.geomspace(first.dk * 0.5, k_end, 20000)
    variance, slope = _cumulative(sea, k)
    total_slope, total_variance = slope[-1], variance[-1]
    # Band 0 carries the peak: raise its resolution (up to max_resolution) until what lies
    # beyond its Nyquist is at most half a later band's allowed share of the variance.
    while first.resolution < max_resolution and first.nyquist < k_end and (
        total_variance - np.interp(first.nyquist, k, variance) > 0.5 * MAX_HEIGHT_SHARE * total_variance
    ):
        first = Tile(first.size, min(max_resolution, _next_even_fast(first.resolution + 2)))

    def limit(k_low: float, cap: float, height_too: bool) -> float:
        """The highest k ≤ cap such that [k_low, k) holds at most the allowed shares."""
        start = np.searchsorted(k, k_low)
        s0, v0 = np.interp(k_low, k, slope), np.interp(k_low, k, variance)
        ok = (slope - s0 <= MAX_SLOPE_SHARE * total_slope) & (k <= cap)
        if height_too:
            ok &= variance - v0 <= MAX_HEIGHT_SHARE * total_variance
        ok[:start] = True
        bad = np.flatnonzero(~ok)
        return cap if bad.size == 0 else max(float(k[bad[0] - 1]), k_low * 1.1)

    bands: list[Band] = []
    k_high = min(limit(0.0, min(first.nyquist, k_end), False), first.nyquist, k_end)
    bands.append(Band(first, 0.0, k_high))
    index = 1
    while bands[-1].k_high < k_end:
        if index >= _MAX_BANDS:
            raise ValueError(
                f"shortest_wavelength: {shortest_wavelength!r} needs more than {_MAX_BANDS} bands from a reach of "
                f"{reach:g} m; allowed: a longer shortest wavelength, a higher resolution or a shorter reach"
            )
        k_low = bands[-1].k_high
        size = 2.0 * math.pi * _LOWEST_WAVE_INDEX / k_low * _IRRATIONAL_FACTORS[index - 1]
        size = _away_from_simple_ratios(size, [b.tile.size for b in bands])
        cap = min(math.pi * max_resolution / size, k_end)
        k_top = min(limit(k_low, cap, True), cap)
        if k_top * _SLIVER > k_end:  # no band of a sliver at the end: this one reaches it
            k_top = min(k_end, math.pi * max_resolution / size)
        n = _next_even_fast(math.ceil(k_top * size / math.pi))
        tile = Tile(size, n)
        k_top = min(k_top, tile.nyquist)
        bands.append(Band(tile, k_low, k_top))
        index += 1
    return BandLayout(tuple(bands), float(reach), float(shortest_wavelength))


def band_moments(sea: SeaState, band: Band) -> tuple[float, float]:
    """(variance in m², mean-square slope) the band's lattice carries in expectation.

    Σ ∫cell Ψ dk and Σ |k|² ∫cell Ψ dk (the cell integral as the amplitudes take it, see
    ``amplitudes.cell_variance``; |k| at the cell's centre) over the band's carried wave
    indices (its tile's lattice, k_low ≤ |k| < k_high), a block of rows at a time.
    """
    from .amplitudes import cell_variance, feature_width

    tile = band.tile
    width = feature_width(sea)
    variance = slope = 0.0
    for start in range(0, tile.resolution, 256):
        rows = slice(start, min(start + 256, tile.resolution))
        ny, nx = tile.wave_indices(rows)
        ky, kx = tile.wavenumbers(rows)
        k2 = kx * kx + ky * ky
        carried = tile.carried(ny, nx) & (k2 >= band.k_low**2) & (k2 < band.k_high**2)
        cell = np.where(carried, cell_variance(sea, tile.dk, ny, nx, width=width), 0.0)
        variance += float(cell.sum())
        slope += float((cell * k2).sum())
    return variance, slope


#: Share of the sea's variance from which a band binds its own waves under "auto"
#: (common practice here: below it the bound waves are under a millimetre, measured).
_BOUND_BAND_SHARE = 0.01


class BandStack:
    """A sea as several bands (see the module notes); each band an :class:`Ocean`.

    Parameters
    ----------
    sea_state : SeaState
    bands : sequence of Band
        Disjoint wavenumber ranges (checked), in any order of size.
    seed : int
        The seed every band's stream is keyed by, with the band's index.
    **options
        Passed to every band's :class:`Ocean` (``lateral_factor``, ``loop_period``,
        ``fold_threshold``, ``foam_ramp``, ``fft_workers``, ``velocity``, ``foam_memory``).
    """

    def __init__(self, sea_state: SeaState, bands: Sequence[Band], *, seed: int = 0, **options) -> None:
        bands = tuple(bands)
        if not bands or not all(isinstance(b, Band) for b in bands):
            raise ValueError("bands: an empty or mixed list is not allowed; allowed: one or more Band")
        ordered = sorted(bands, key=lambda b: b.k_low)
        for a, b in zip(ordered[:-1], ordered[1:]):
            if b.k_low < a.k_high:
                raise ValueError(
                    f"bands: wavenumber ranges [{a.k_low:g}, {a.k_high:g}) and [{b.k_low:g}, {b.k_high:g}) rad/m "
                    "overlap; allowed: disjoint ranges, so no wave is counted twice"
                )
        self.sea_state = sea_state
        self.bands = bands
        self.seed = seed
        self.oceans = []
        for i, band in enumerate(bands):
            settings = dict(options)
            if band.tile.resolution**2 < _SERIAL_TEXELS:
                settings["fft_workers"] = 1  # see frames(): small bands run on one thread
            if settings.get("bound_waves", "auto") == "auto":
                settings["bound_waves"] = False  # decided below, once every band's variance is known
            self.oceans.append(
                Ocean(sea_state, band.tile, seed=seed, band=i, wavenumber_range=(band.k_low, band.k_high), **settings)
            )
        if options.get("bound_waves", "auto") == "auto":
            self._bind_energetic_bands()
        self._shared_coverage = None  # the whitecap share the automatic thresholds give
        self._composite_thresholds: dict[float, float] = {}
        if options.get("fold_threshold") is None:
            self._share_whitecaps()
        workers = options.get("fft_workers")
        self._workers = workers if workers is not None else (os.cpu_count() or 1)
        self._executor = None
        self._lock = threading.Lock()
        self._plan()

    def _bind_energetic_bands(self) -> None:
        """"auto" bound waves for the bands that hold at least ``_BOUND_BAND_SHARE`` of the
        sea's variance (each band binds its own waves; see ``bound``).

        A band's pair sum costs about as much as its transforms (2–3 ms a band), and the
        short bands' bound waves are small: on seas laid out to 1 cm ripples over 2 km, the
        bands under 1 % of the variance carried bound waves of 0.8 mm rms at most at 10 m/s
        (the first band: 4.9 mm) and 4.4 mm at 20 m/s (the first band: 108 mm), measured.
        An explicit ``bound_waves=True`` binds every band.
        """
        total = sum(ocean.lattice_variance for ocean in self.oceans)
        for ocean in self.oceans:
            if ocean.lattice_variance >= _BOUND_BAND_SHARE * total:
                ocean.bound = ocean._bound_waves("auto")  # the room's own helper: as Ocean.__init__ does

    def _share_whitecaps(self) -> None:
        """Whitecaps in the band that holds the sea's peak; no foam in the others.

        Whitecaps are the dominant waves breaking, so the band holding most of the
        variance (band 0 of a layout from a reach: the peak's band) takes the fold threshold
        that gives its own Jacobian the wind's whitecap share, and every other band none:
        across the spectrum each band's Jacobian varies about as much as band 0's (the
        slope spectrum is nearly flat in ln k), so giving each band that threshold would
        foam each of them over the share, and their union over several times it; one
        threshold for all calibrated on the summed Jacobian left every band's map nearly
        bare (0.83 % asked, 0.0000 % in each band of open_ocean_horizon), since no map holds
        that sum. The composite solves its own threshold on the waves it holds
        (:meth:`composite`). An explicit ``fold_threshold`` applies to every band as given.
        """
        peak = self.whitecap_band
        coverage = self.oceans[peak].whitecap_coverage
        if coverage is None:
            return
        self._shared_coverage = coverage
        for index, ocean in enumerate(self.oceans):
            if index != peak:  # the peak band keeps the threshold its Ocean solved for its own Jacobian
                ocean.fold_threshold = -math.inf

    @property
    def whitecap_band(self) -> int:
        """Index of the band holding most of the sea's variance: the one whose foam map
        carries the whitecaps when the fold threshold is automatic."""
        return max(range(len(self.oceans)), key=lambda i: self.oceans[i].lattice_variance)

    def _composite_threshold(self, nyquist: float) -> float:
        """The fold threshold at which the composite's foam (the Jacobian of the waves a
        grid of this Nyquist wavenumber holds, summed over the bands) covers the wind's
        whitecap share; the bands' own when the threshold is explicit."""
        if self._shared_coverage is None:
            return self.oceans[0].fold_threshold
        if nyquist not in self._composite_thresholds:
            from . import whitecaps

            cov = np.zeros((3, 3))
            for ocean in self.oceans:
                ky, kx = ocean.tile.wavenumbers()
                keep = (np.abs(kx) < nyquist) & (np.abs(ky) < nyquist)
                if keep.any():
                    cov += whitecaps.jacobian_covariance(np.where(keep, ocean.amplitudes, 0), ocean.tile.dk,
                                                         ocean.lateral_factor)
            self._composite_thresholds[nyquist] = whitecaps.fold_threshold_for_coverage(
                cov, self._shared_coverage, self.oceans[0].foam_ramp)
        return self._composite_thresholds[nyquist]

    def new_buffers(self) -> list:
        """One buffer per band for :meth:`frames` to fill (see :meth:`Ocean.new_buffer`)."""
        return [ocean.new_buffer() for ocean in self.oceans]

    def frames(self, t: float, *, buffers: list | None = None) -> list:
        """Each band's :class:`Fields` at time ``t`` (a pure function of t), filling
        ``buffers`` (from :meth:`new_buffers`) when given.

        The bands are spread over the cores rather than each over all of them: on a small
        tile every parallel step costs a thread hand-over that outweighs its work. A frame
        runs in two phases on ``threads`` threads (the kernels' thread count, at most the
        ``fft_workers`` given; :meth:`_plan` orders the work):

        1. independent single-threaded tasks on a pool, largest first: each small band's
           whole frame (under 256² texels), and each wide band's bound-wave pair sum and
           packed spectra;
        2. each wide band's bound waves added, transforms and surface kernel, on all threads.

        Every step computes the same numbers in the same order whoever runs it, and the
        kernels work texel by texel and the transforms line by line, so the bits are those
        of each band's own ``Ocean.frame`` (tested).
        """
        import numba

        from .synth import _check_finite

        _check_finite("t", t, low=-1e12)
        t = float(t)
        buffers = [None] * len(self.oceans) if buffers is None else list(buffers)
        if len(buffers) != len(self.oceans):
            raise ValueError(
                f"buffers: a list of {len(buffers)} is not allowed; allowed: one buffer per band "
                f"({len(self.oceans)}), from new_buffers()"
            )
        buffers = [ocean._frame_buffer(buffer) for ocean, buffer in zip(self.oceans, buffers)]
        threads = max(1, min(numba.get_num_threads(), self._workers))
        with self._lock:
            rotations, spectra = self._rotations, [None] * len(self.oceans)
            out: list = [None] * len(self.oceans)

            def small_frame(i: int) -> None:
                ocean = self.oceans[i]
                rotation = ocean._rotation(t, rotations[i])
                bound = None if ocean.bound is None else ocean.bound.spectrum(ocean._h0, rotation)
                ocean._spectra(rotation, buffers[i], bound)
                ocean._transform(buffers[i], 1)
                out[i] = ocean._finish(t, rotation, buffers[i])

            def pairs(i: int) -> None:
                ocean = self.oceans[i]
                spectra[i] = ocean.bound.spectrum(ocean._h0, rotations[i])

            def packed(i: int) -> None:
                ocean = self.oceans[i]
                ocean._spectra(rotations[i], buffers[i], None)

            steps = {"frame": small_frame, "pairs": pairs, "spectra": packed}
            for i in self._wide:  # their rotations first: the pair sums and spectra need them
                self.oceans[i]._rotation(t, rotations[i])
            tasks = [(steps[kind], i) for kind, i in self._schedule]
            if threads > 1 and len(tasks) > 1 and _concurrent_kernels_allowed():
                from concurrent.futures import wait

                futures = [self._pool(threads).submit(_one_thread, step, i) for step, i in tasks]
                wait(futures)  # all of them, so none still writes after an error is raised
                for future in futures:
                    future.result()
            else:
                with _kernel_threads(1):
                    for step, i in tasks:
                        step(i)
            for i in self._wide:
                ocean = self.oceans[i]
                if spectra[i] is not None:
                    ocean._add_bound(spectra[i], buffers[i])
                ocean._transform(buffers[i], ocean.fft_workers)
                out[i] = ocean._finish(t, rotations[i], buffers[i])
        return out

    def _plan(self) -> None:
        """Which bands run on all threads (``_wide``) and the pool's tasks, largest first
        (``_schedule``: greedy longest-first keeps the threads evenly loaded), with
        per-band rotation tables reused by every frame."""
        wide, tasks = [], []
        for i, ocean in enumerate(self.oceans):
            texels = ocean.tile.resolution**2
            pair_cost = 0.0 if ocean.bound is None else _PAIR_NS * ocean.bound.parents * (ocean.bound.parents + 1) / 2
            if texels >= _SERIAL_TEXELS:
                wide.append(i)
                tasks.append((_SPECTRA_NS * texels, "spectra", i))
                if ocean.bound is not None:
                    tasks.append((pair_cost, "pairs", i))
            else:
                tasks.append((texels * (_FRAME_NS + math.log2(texels)) + pair_cost, "frame", i))
        tasks.sort(key=lambda task: -task[0])
        self._wide = tuple(wide)
        self._schedule = tuple((kind, i) for _, kind, i in tasks)
        self._rotations = [np.empty(ocean._omega_used.shape, dtype=np.complex128) for ocean in self.oceans]

    def _pool(self, threads: int):
        """The thread pool of :meth:`frames` (made again after a fork or for another size)."""
        from concurrent.futures import ThreadPoolExecutor

        key = (os.getpid(), threads)
        if self._executor is None or self._executor[0] != key:
            self._executor = (key, ThreadPoolExecutor(threads, thread_name_prefix="oceanfield-band"))
        return self._executor[1]

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state["_executor"] = None
        state.pop("_composite_lattices", None)  # the composite's per-grid tables (surface.composite), remade
        del state["_lock"]
        return state

    def __setstate__(self, state: dict) -> None:
        self.__dict__.update(state)
        self._lock = threading.Lock()

    def modes(self, *, bound_share: float = 0.99):
        """The travelling sinusoids of the whole stack: every band's ``Ocean.modes`` joined.

        Each band's wave vectors lie on its own tile's lattice, so the joined set is not
        periodic on any one tile: Re Σ c·e^{i(k·x − ωt)} over it is the banded sea at any
        (x, y) in metres on the whole plane, with no wrapping onto a tile. The bands carry
        disjoint wavenumber ranges, so no wave is counted twice; at a point of a
        :meth:`composite` grid fine enough to hold every band's waves the sums equal the
        composite's fields. ``bound_share`` is passed to every band (see ``Ocean.modes``).
        """
        from .modes import WaveModes

        return WaveModes.join(*(ocean.modes(bound_share=bound_share) for ocean in self.oceans))

    @property
    def largest_tile(self) -> Tile:
        """The widest band's tile (band 0's for a laid-out stack)."""
        return max((band.tile for band in self.bands), key=lambda tile: tile.size)

    @property
    def finest_spacing(self) -> float:
        """The smallest texel spacing of any band, in metres."""
        return min(band.tile.spacing for band in self.bands)

    def moments(self) -> list[tuple[float, float]]:
        """Each band's (variance m², mean-square slope) in expectation (:func:`band_moments`)."""
        return [band_moments(self.sea_state, band) for band in self.bands]

    def composite(
        self, t: float, *, extent: float, resolution: int, origin: tuple[float, float] = (0.0, 0.0),
        exact: bool = False,
    ) -> Fields:
        """The bands summed at time ``t`` on a ``resolution``² grid ``extent`` metres wide.

        Every band's waves that the grid can hold (|kx| and |ky| below its Nyquist
        π·resolution/extent; shorter waves are left out, not aliased), summed by
        non-uniform FFTs to 1e-6 of each field's standard deviation, or with ``exact`` by
        exact Fourier sums (:func:`fourier_sum`, the reference). Height, lateral
        displacement, their derivatives and so the Jacobian, the displaced surface's normal
        and foam follow the synthesiser's conventions; each band's own lateral factor and
        foam settings apply. Returns :class:`Fields` (float32) of the composite grid
        (see ``surface.composite``).
        """
        from .composite import composite_fields

        return composite_fields(self, t, extent=extent, resolution=resolution, origin=origin, exact=exact)

    # -- repetition ---------------------------------------------------------------------
    def autocorrelation(
        self,
        spacing: float,
        count: int,
        *,
        origin: tuple[float, float] = (0.0, 0.0),
        slope: bool = False,
    ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """The composite's autocorrelation at shifts origin + (j, i)·spacing, 0 ≤ i, j < count
        (metres), and what a sea that never repeats would show there (see
        ``repetition.autocorrelation``)."""
        return _repetition.autocorrelation(self, spacing, count, origin=origin, slope=slope)

    def repetition(self, extent: float, *, slope: bool = False, count: int = 256,
                   decorrelated: float = 0.1) -> dict[str, float]:
        """How much the composite repeats within ``extent`` metres (a square from the origin):
        ``max_where_decorrelated``, ``max_excess`` and ``shifts`` (see ``repetition.repetition``)."""
        return _repetition.repetition(self, extent, slope=slope, count=count, decorrelated=decorrelated)


@contextmanager
def _kernel_threads(count: int):
    """The compiled kernels on ``count`` threads in this thread, restored after."""
    import numba

    before = numba.get_num_threads()
    if before == count:
        yield
        return
    numba.set_num_threads(count)
    try:
        yield
    finally:
        numba.set_num_threads(before)


def _concurrent_kernels_allowed() -> bool:
    """Whether numba's threading layer may run kernels from several threads at once: the
    OpenMP and TBB layers may; the fallback "workqueue" layer (a machine without libgomp
    or TBB) may not, and aborts the process if it is tried (numba documentation, "The
    Threading Layers"), so band frames then run their tasks one after another."""
    import numba

    try:
        return numba.threading_layer() != "workqueue"
    except ValueError:  # no parallel kernel has run yet in this process: not known
        return False


def _one_thread(step, index: int) -> None:
    """A task of :meth:`BandStack.frames` on a pool thread: its kernels on that thread alone
    (numba's thread count is per calling thread)."""
    import numba

    if numba.get_num_threads() != 1:
        numba.set_num_threads(1)
    step(index)
