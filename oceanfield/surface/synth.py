"""Ocean fields of one frame by inverse-FFT spectral synthesis (Tessendorf 2001).

Knows nothing of presets or files: a ``SeaState`` and a ``Tile`` go in, ``Fields`` come out.

``Ocean(sea_state, tile, seed=...).frame(t)`` returns the height, lateral displacement,
Jacobian, displaced-surface normal and foam of the tile at time t, as a pure function of
t: a farm can render any frame alone, in any order, on any machine, and get the same bits.

References
----------
Tessendorf, J. (2001). Simulating Ocean Water. SIGGRAPH course notes (lattice, amplitudes,
time evolution, lateral displacement, Jacobian).
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, Callable

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import amplitudes, whitecaps
from .fields import Fields
from ..physics.seastate import SeaState
from ..physics.whitecaps import sea_whitecap_coverage
from .tile import Tile

if TYPE_CHECKING:
    from .modes import WaveModes

__all__ = ["Ocean", "LoopInfo", "amplitude_noise", "frame_bytes_per_texel", "available_memory"]

#: Bytes a texel needs: what an Ocean keeps (h0 as complex64, plus ω and a slot per
#: distinct |k|², 3 bytes a texel) and what a frame holds (four complex64 arrays).
#: Work arrays while building are float64 over a block of rows only. Used to refuse
#: resolutions the machine cannot hold.
_PERSISTENT_BYTES = 8 + 4
_FRAME_BYTES = 4 * 8
_VELOCITY_BYTES = 2 * 8 + 12
_BLOCK_ROWS = 128
_FOAM_WINDOW = 3.0  # lingering foam looks back three e-folding times (5 % of it is left)

# splitmix64 constants (Steele, Lea & Flood 2014, "Fast splittable pseudorandom number
# generators", OOPSLA): a counter-based hash that keys every wave by (seed, nx, ny) alone.
_GOLDEN = np.uint64(0x9E3779B97F4A7C15)
_MIX1 = np.uint64(0xBF58476D1CE4E5B9)
_MIX2 = np.uint64(0x94D049BB133111EB)
_BAND_SALT = np.uint64(0xB5AD4ECEDA1CE2A9)  # any odd constant: separates band streams from band 0


def _mix(z: NDArray[np.uint64]) -> NDArray[np.uint64]:
    with np.errstate(over="ignore"):
        z = z + _GOLDEN
        z = (z ^ (z >> np.uint64(30))) * _MIX1
        z = (z ^ (z >> np.uint64(27))) * _MIX2
        return z ^ (z >> np.uint64(31))


def amplitude_noise(seed: int, ny: ArrayLike, nx: ArrayLike, band: int = 0) -> NDArray[np.complex128]:
    """Standard complex Gaussian noise (E|ξ|² = 1) keyed by (seed, band, ny, nx) alone.

    Each wave index hashes to two 53-bit uniforms (splitmix64), turned into a complex
    Gaussian by the Box–Muller transform. The same index gives the same number at any
    resolution, so a preview and a final of one seed share their long waves exactly.
    Band 0 is the stream of a single tile; band b > 0 mixes b into the key first, so each
    band of a stack draws its own stream and changing one band leaves the others as they were.
    """
    ny = np.asarray(ny, dtype=np.int64)
    nx = np.asarray(nx, dtype=np.int64)
    ny, nx = np.broadcast_arrays(ny, nx)
    key = _mix(np.full(ny.shape, seed, dtype=np.uint64))
    if band:
        key = _mix(key ^ (_BAND_SALT + np.uint64(band)))
    key = _mix(key ^ nx.astype(np.uint64))
    key = _mix(key ^ ny.astype(np.uint64))
    scale = 1.0 / float(1 << 53)
    u1 = 1.0 - (_mix(key ^ np.uint64(1)) >> np.uint64(11)).astype(np.float64) * scale  # (0, 1]
    u2 = (_mix(key ^ np.uint64(2)) >> np.uint64(11)).astype(np.float64) * scale
    radius = np.sqrt(-np.log(u1))  # E r² = 1 split over two components
    return radius * np.exp(2j * np.pi * u2)


def available_memory() -> int | None:
    """Bytes of memory available to this process now, or None where it cannot be read."""
    try:
        with open("/proc/meminfo", encoding="ascii") as handle:
            for line in handle:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    try:
        return os.sysconf("SC_AVPHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
    except (ValueError, OSError, AttributeError):
        return None


def frame_bytes_per_texel(velocity: bool = False) -> int:
    """Bytes per texel an Ocean and one frame hold: amplitudes, frequencies, four packed arrays."""
    return _PERSISTENT_BYTES + _FRAME_BYTES + (_VELOCITY_BYTES if velocity else 0)


@dataclass(frozen=True)
class LoopInfo:
    """How quantising frequencies to a loop period changed them (rad/s)."""

    period: float
    largest_shift: float
    largest_relative_shift: float


class Ocean:
    """An animated ocean tile: a sea state, a tile and a seed.

    Parameters
    ----------
    sea_state : SeaState
        What sea to synthesise.
    tile : Tile
        Size in metres and resolution.
    seed : int
        Chooses the random phases; any integer 0 ≤ seed < 2⁶³.
    lateral_factor : float
        Scale of lateral displacement λ ≥ 0 (0 = height only; 1 = the linear-theory
        orbital displacement). Points move toward crests, sharpening them.
    loop_period : float or None
        If given (seconds), every frequency is rounded to a multiple of 2π/T so that
        ``frame(t + T)`` equals ``frame(t)``.
    fold_threshold : float or None
        Jacobian at which foam begins. None (the default): set from the wind, so that the
        share of the surface with foam above ½ is the whitecap coverage W(U10) of
        Monahan & O'Muircheartaigh (1980) times ``whitecap_scale`` (see
        :mod:`oceanfield.surface.whitecaps`); no foam without a wind-driven component.
    foam_ramp : float
        Jacobian drop below ``fold_threshold`` over which foam rises from 0 to 1.
    foam_memory : float
        Seconds foam lingers after the surface stops folding (its e-folding time; 0 = foam
        only where the surface folds now). Each frame re-derives the Jacobian at
        ``foam_samples`` past instants over the last three ``foam_memory`` seconds and keeps
        the largest decayed foam, so frames stay pure functions of time. Each past instant
        costs about half a frame (two transforms).
    foam_samples : int
        Past instants sampled when ``foam_memory`` > 0 (1 to 64).
    whitecap_scale : float
        Factor on the wind's whitecap coverage when ``fold_threshold`` is None (0 to 10).
    wave_heights : str
        ``as_requested`` (default): the waves of each ring of equal |k| hold exactly their
        expected variance, so the tile's Hs is the one asked for whatever the seed;
        ``random``: freely drawn (Rayleigh) amplitudes, whose tile Hs varies from seed to
        seed (see :mod:`oceanfield.surface.amplitudes`).
    velocity : bool
        Also compute the surface velocity (two more transforms a frame).
    bound_waves : "auto", True or False
        Add the second-order bound waves that make crests sharper than troughs
        (``surface.bound``): "auto" adds them when the predicted skewness reaches
        ``bound.AUTO_SKEWNESS`` and second order holds (``bound.MAX_HARMONIC_RATIO``: not
        in water too shallow for the sea). ``ocean.bound`` holds them (None when off).
    fft_workers : int or None
        Threads for the FFTs (None: all cores).
    band : int
        Which amplitude stream to draw (0 to 255): 0 is a single tile's, each band of a
        stack (``surface.bands``) has its own.
    wavenumber_range : (float, float) or None
        Carry only the waves with k_low ≤ |k| < k_high (rad/m; k_high may be ``inf``), so
        that the bands of a stack share out the spectrum without overlap. None: all.
    build_progress : callable or None
        Called with the lattice rows done while the amplitudes are drawn (minutes at
        16384²), for a progress bar.

    Examples
    --------
    >>> from oceanfield import Ocean, SeaState, Tile, wind_sea
    >>> ocean = Ocean(SeaState((wind_sea(10.0),)), Tile(200.0, 64), seed=7)
    >>> ocean.frame(1.5).height.shape
    (64, 64)
    """

    def __init__(
        self,
        sea_state: SeaState,
        tile: Tile,
        *,
        seed: int = 0,
        lateral_factor: float = 1.0,
        loop_period: float | None = None,
        fold_threshold: float | None = None,
        foam_ramp: float = 0.3,
        foam_memory: float = 0.0,
        foam_samples: int = 8,
        velocity: bool = False,
        bound_waves: str | bool = "auto",
        fft_workers: int | None = None,
        whitecap_scale: float = 1.0,
        wave_heights: str = "as_requested",
        band: int = 0,
        wavenumber_range: tuple[float, float] | None = None,
        build_progress: Callable[[int], None] | None = None,
    ) -> None:
        if not isinstance(sea_state, SeaState):
            raise ValueError(f"sea_state: {type(sea_state).__name__} is not allowed; allowed: a SeaState")
        if not isinstance(tile, Tile):
            raise ValueError(f"tile: {type(tile).__name__} is not allowed; allowed: a Tile")
        if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or not 0 <= seed < 2**63:
            raise ValueError(f"seed: {seed!r} is not allowed; allowed: an integer from 0 to 2**63 - 1")
        _check_finite("lateral_factor", lateral_factor, low=0.0)
        if fold_threshold is not None:
            _check_finite("fold_threshold", fold_threshold, low=-1e6)
        _check_finite("whitecap_scale", whitecap_scale, low=0.0)
        if wave_heights not in amplitudes.WAVE_HEIGHTS:
            raise ValueError(
                f"wave_heights: {wave_heights!r} is not allowed; allowed: {', '.join(amplitudes.WAVE_HEIGHTS)}"
            )
        _check_finite("foam_ramp", foam_ramp, low=0.0, low_open=True)
        _check_finite("foam_memory", foam_memory, low=0.0)
        if isinstance(foam_samples, bool) or not isinstance(foam_samples, (int, np.integer)) or not 1 <= foam_samples <= 64:
            raise ValueError(f"foam_samples: {foam_samples!r} is not allowed; allowed: an integer from 1 to 64")
        if loop_period is not None:
            _check_finite("loop_period", loop_period, low=0.0, low_open=True)
        if fft_workers is not None and (isinstance(fft_workers, bool) or not isinstance(fft_workers, int) or fft_workers < 1):
            raise ValueError(f"fft_workers: {fft_workers!r} is not allowed; allowed: an integer >= 1 or None")
        if isinstance(band, bool) or not isinstance(band, (int, np.integer)) or not 0 <= band <= 255:
            raise ValueError(f"band: {band!r} is not allowed; allowed: an integer from 0 to 255")
        if wavenumber_range is not None:
            low, high = (float(v) for v in wavenumber_range)
            if not (0.0 <= low < high) or math.isnan(high):
                raise ValueError(
                    f"wavenumber_range: {wavenumber_range!r} is not allowed; allowed: (k_low, k_high) with 0 <= k_low < k_high"
                )
            wavenumber_range = (low, high)
        self.band = int(band)
        self.wavenumber_range = wavenumber_range
        self.sea_state = sea_state
        self.tile = tile
        self.seed = int(seed)
        self.lateral_factor = float(lateral_factor)
        self.loop_period = None if loop_period is None else float(loop_period)
        self.wave_heights = wave_heights
        self.whitecap_scale = float(whitecap_scale)
        self.foam_ramp = float(foam_ramp)
        self.foam_memory = float(foam_memory)
        self.foam_samples = int(foam_samples)
        self.velocity = bool(velocity)
        self.fft_workers = fft_workers if fft_workers is not None else (os.cpu_count() or 1)
        self._check_memory()
        self._h0, omega, self.lattice_variance, self.loop_info, used = self._build(build_progress)
        # Rotations are needed only for the q = nx² + ny² that carry energy: slot 0 stands
        # for all others (their amplitudes are zero), slots 1… for the used ones.
        used = np.flatnonzero(used)
        # The full table of ω is not kept (2 bytes a texel): `frequencies` recomputes it.
        self._slots = np.zeros(omega.size, dtype=np.int32)
        self._slots[used] = np.arange(1, used.size + 1, dtype=np.int32)
        self._omega_used = np.concatenate([[0.0], omega[used]])
        del omega
        self._index: NDArray[np.int32] | None = None  # slots per wave index (_kernels.slot_index)
        # The foam threshold and the bound waves each need the amplitudes, not each other:
        # with threads to spare they are found at once (numpy lets both run).
        if self.fft_workers > 1 and bound_waves is not False:
            from concurrent.futures import ThreadPoolExecutor

            with ThreadPoolExecutor(max_workers=1, thread_name_prefix="oceanfield-build") as pool:
                foam = pool.submit(self._foam_threshold, fold_threshold)
                self.bound = self._bound_waves(bound_waves)
                self.whitecap_coverage, self.fold_threshold = foam.result()
        else:
            self.whitecap_coverage, self.fold_threshold = self._foam_threshold(fold_threshold)
            self.bound = self._bound_waves(bound_waves)

    @classmethod
    def from_preset(
        cls,
        preset,
        *,
        velocity: bool | None = None,
        foam_memory: float | None = None,
        bound_waves: str | bool | None = None,
        fft_workers: int | None = None,
        build_progress: Callable[[int], None] | None = None,
    ) -> "Ocean":
        """The ocean a resolved :class:`~oceanfield.preset.Preset` describes.

        The preset makes its own sea state (``preset.sea_state()``), so this module needs
        to know nothing of presets.

        ``velocity`` defaults to whether the preset asks for a velocity map, ``foam_memory``
        to the preset's (pass 0 where only the surface's shape matters: lingering foam costs
        two transforms per past instant).
        """
        return cls(
            preset.sea_state(),
            Tile(preset.tile.size_m, preset.tile.resolution),
            seed=preset.seed,
            lateral_factor=preset.surface.lateral_factor,
            loop_period=preset.time.loop_period_s,
            fold_threshold=preset.surface.fold_threshold,
            whitecap_scale=preset.surface.whitecap_scale,
            wave_heights=preset.tile.wave_heights,
            foam_memory=preset.surface.foam_memory_s if foam_memory is None else foam_memory,
            velocity=("velocity" in preset.maps) if velocity is None else velocity,
            bound_waves=preset.surface.bound_waves if bound_waves is None else bound_waves,
            fft_workers=fft_workers,
            build_progress=build_progress,
        )

    # -- set-up ------------------------------------------------------------------------
    def _check_memory(self) -> None:
        n = self.tile.resolution
        need = n * n * frame_bytes_per_texel(self.velocity)
        available = available_memory()
        if available is not None and need > available:
            raise ValueError(
                f"tile resolution: {n} needs about {_bytes_text(need)} for one frame, "
                f"more than the {_bytes_text(available)} available; allowed: a smaller resolution"
            )

    def _build(
        self, progress: Callable[[int], None] | None = None,
    ) -> tuple[NDArray[np.complex64], NDArray[np.float64], float, LoopInfo | None, NDArray[np.bool_]]:
        """Amplitudes h0 on the lattice (a block of rows at a time), ω per |k|² index, the
        lattice's variance, the loop's frequency shifts, and which |k|² carry energy."""
        tile, sea = self.tile, self.sea_state
        n = tile.resolution
        half = n // 2
        h0 = np.empty((n, n), dtype=np.complex64)
        width = amplitudes.feature_width(sea)
        rings = half * half + 1  # one per q = nx² + ny² ≤ (N/2)², the carried disc
        target = np.zeros(rings)
        realised = np.zeros(rings)

        def amplitude_block(rows: slice) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
            ny, nx = tile.wave_indices(rows)
            carried = tile.carried(ny, nx) & self._in_range(ny, nx)
            # E|h0|² = (∫ over the cell Ψ dk)/2 (DESIGN convention), with E|ξ|² = 1. Only the
            # carried waves are integrated (the disc leaves a fifth of the square out, a
            # band most of it); each cell's integral is its own, so the values are the same.
            cell = np.zeros(carried.shape)
            cell[carried] = amplitudes.cell_variance(
                sea, tile.dk, np.broadcast_to(ny, carried.shape)[carried], np.broadcast_to(nx, carried.shape)[carried],
                width=width,
            )
            block = amplitude_noise(self.seed, ny, nx, self.band) * np.sqrt(cell / 2.0)
            q = np.where(carried, nx * nx + ny * ny, 0).ravel()  # waves not carried hold nothing
            h0[rows] = block
            return (np.bincount(q, cell.ravel(), minlength=rings),
                    np.bincount(q, 2.0 * (block.real.ravel() ** 2 + block.imag.ravel() ** 2), minlength=rings))

        blocks = [slice(start, min(start + _BLOCK_ROWS, n)) for start in range(0, n, _BLOCK_ROWS)]
        threads = _build_threads(self.fft_workers, n, rings)
        for rows, (block_target, block_realised) in zip(blocks, _in_order(amplitude_block, blocks, threads)):
            target += block_target  # summed in block order: the same bits on any number of threads
            realised += block_realised
            if progress is not None:  # rows of the lattice done (a long build at 8192² and up)
                progress(rows.stop - rows.start)
        used = target > 0
        if self.wave_heights == "as_requested":
            # Each ring of equal |k| holds exactly its target (see ``amplitudes``).
            scale = np.append(amplitudes.ring_scale(realised, target), 0.0).astype(np.float32)
            def rescale_block(rows: slice) -> float:
                ny, nx = tile.wave_indices(rows)
                h0[rows] *= scale[np.minimum(nx * nx + ny * ny, rings)]  # beyond the disc: 0 already
                return 2.0 * float(np.square(h0[rows].view(np.float32), dtype=np.float64).sum())

            realised_sum = 0.0
            for block_sum in _in_order(rescale_block, blocks, threads):
                realised_sum += block_sum
        else:
            realised_sum = float(realised.sum())
        variance = float(target.sum())
        self.realised_variance = realised_sum
        omega, info = self._omega_by_q(used)
        return h0, omega, variance, info, used

    def _omega_by_q(self, used: NDArray[np.bool_] | None = None) -> tuple[NDArray[np.float64], LoopInfo | None]:
        """ω for each q = nx² + ny² ≤ (N/2)² (it depends on |k| alone), after the loop's
        quantisation, and the loop's frequency shifts over the ``used`` q (None: not asked)."""
        half = self.tile.resolution // 2
        omega = self.sea_state.angular_frequency(np.sqrt(np.arange(half * half + 1, dtype=np.float64)) * self.tile.dk)
        info = None
        if self.loop_period is not None:
            step = 2.0 * math.pi / self.loop_period
            quantised = np.round(omega / step) * step
            if used is not None:
                shift = np.abs(quantised - omega)[used]
                relative = shift / omega[used]
                info = LoopInfo(
                    self.loop_period,
                    float(shift.max()) if shift.size else 0.0,
                    float(relative.max()) if relative.size else 0.0,
                )
            omega = quantised
        return omega, info

    def _foam_threshold(self, explicit: float | None) -> tuple[float | None, float]:
        """(target whitecap share or None, fold threshold): an explicit threshold as given,
        else the one that foams the wind's whitecap coverage (see ``whitecaps``)."""
        self.jacobian_covariance = None  # kept when computed: a band stack sums its bands'
        if explicit is not None:
            return None, float(explicit)
        share = min(sea_whitecap_coverage(self.sea_state) * self.whitecap_scale, 1.0)
        self.jacobian_covariance = whitecaps.jacobian_covariance(self._h0, self.tile.dk, self.lateral_factor)
        return share, whitecaps.fold_threshold_for_coverage(self.jacobian_covariance, share, self.foam_ramp)

    @property
    def realised_hs(self) -> float:
        """Significant wave height 4√(Σ 2|h0|²) the tile holds (time-averaged variance), m."""
        return 4.0 * math.sqrt(self.realised_variance)

    def _in_range(self, ny: NDArray[np.int64], nx: NDArray[np.int64]) -> NDArray[np.bool_] | bool:
        """Which wave indices lie in ``wavenumber_range`` (compared as |k|², no square roots)."""
        if self.wavenumber_range is None:
            return True
        low, high = self.wavenumber_range
        k2 = (nx * nx + ny * ny) * self.tile.dk**2
        return (k2 >= low * low) & (k2 < high * high)

    def _bound_waves(self, mode: str | bool):
        """The second-order bound waves this ocean adds (``surface.bound``), or None."""
        if not (mode is True or mode is False or (isinstance(mode, str) and mode == "auto")):
            raise ValueError(f"bound_waves: {mode!r} is not allowed; allowed: 'auto', True or False")
        self._second_order = None
        if mode is False:
            return None
        from .bound import AUTO_SKEWNESS, MAX_HARMONIC_RATIO

        waves = self.second_order()
        if waves.parents == 0:
            return None
        gentle = waves.prediction.skewness < AUTO_SKEWNESS
        too_shallow = waves.harmonic_ratio > MAX_HARMONIC_RATIO
        if mode == "auto" and (gentle or too_shallow):
            return None
        return waves

    def second_order(self):
        """The sea's second-order bound waves on this tile (a ``surface.bound.BoundWaves``),
        whether or not its frames add them: their parents, pair coefficients and the
        statistics they predict. ``spectrum(rotation)`` gives their height's spectrum alone."""
        if self._second_order is None:
            from . import bound

            self._second_order = bound.bound_waves(
                self.sea_state, self.tile, self._h0, self._slots, self.lattice_variance,
                lateral_factor=self.lateral_factor, wavenumber_range=self.wavenumber_range,
            )
        return self._second_order

    # -- frames ------------------------------------------------------------------------
    def new_buffer(self) -> NDArray[np.complex64]:
        """A buffer :meth:`frame` can fill in place of allocating one (four complex64 arrays)."""
        n = self.tile.resolution
        return np.empty((4, n, n), dtype=np.complex64)

    def frame(self, t: float, *, buffer: NDArray[np.complex64] | None = None) -> Fields:
        """The fields of the tile at time ``t`` seconds (a pure function of t).

        The returned arrays are views into one block of memory (see ``_kernels`` for its
        layout). Pass ``buffer`` (from :meth:`new_buffer`, or the ``buffer`` of a frame you
        have finished with) to reuse memory instead of allocating: a render loop that does
        so avoids the page faults of fresh memory every frame.
        """
        _check_finite("t", t, low=-1e12)
        buffer = self._frame_buffer(buffer)
        rotation = self._rotation(float(t))
        bound = None if self.bound is None else self.bound.spectrum(self._h0, rotation)
        self._spectra(rotation, buffer, bound)
        self._transform(buffer, self.fft_workers)
        return self._finish(float(t), rotation, buffer)

    # The steps of a frame, in order. A band stack (``surface.bands``) runs them itself to
    # spread its bands over the cores; the bits are the same whoever calls them.
    def _frame_buffer(self, buffer: NDArray[np.complex64] | None) -> NDArray[np.complex64]:
        """``buffer`` checked for :meth:`frame` (a new one for None)."""
        n = self.tile.resolution
        if buffer is None:
            return self.new_buffer()
        if (
            not isinstance(buffer, np.ndarray)
            or buffer.shape != (4, n, n)
            or buffer.dtype != np.complex64
            or not buffer.flags.c_contiguous
            or not buffer.flags.writeable
        ):
            if isinstance(buffer, np.ndarray):
                layout = "" if buffer.flags.c_contiguous else " non-contiguous"
                access = "" if buffer.flags.writeable else " read-only"
                received = f"a{access}{layout} {buffer.dtype} array of shape {buffer.shape}"
            else:
                received = f"a {type(buffer).__name__}"
            raise ValueError(
                f"buffer: {received} is not allowed; "
                f"allowed: a writable C-contiguous complex64 array of shape (4, {n}, {n}) from new_buffer()"
            )
        return buffer

    def _rotation(self, t: float, out: NDArray[np.complex128] | None = None) -> NDArray[np.complex128]:
        """e^{−iωt} per rotation slot (into ``out`` when given)."""
        from . import _kernels

        rotation = np.empty(self._omega_used.shape, dtype=np.complex128) if out is None else out
        _kernels.rotation_kernel(self._omega_used, t, rotation)
        return rotation

    def _spectra(self, rotation: NDArray[np.complex128], buffer: NDArray[np.complex64],
                 bound: NDArray[np.complex128] | None) -> None:
        """The packed spectra of the frame into ``buffer``, with the bound waves' spectrum
        (``self.bound.spectrum(h0, rotation)``; None without bound waves) added."""
        from . import _kernels

        if self._index is None:  # made on the first frame (probes and modes never need it)
            self._index = _kernels.slot_index(self._slots, self.tile.resolution)
        _kernels.spectra_kernel(self._h0, self._index, rotation, self.tile.dk, self.lateral_factor, buffer)
        if bound is not None:
            self._add_bound(bound, buffer)

    def _add_bound(self, bound: NDArray[np.complex128], buffer: NDArray[np.complex64]) -> None:
        """Add the bound waves' spectrum (and its slopes) to the packed spectra in ``buffer``."""
        from ._bound_kernels import bound_add_kernel

        bound_add_kernel(bound, self.bound.dk, buffer)

    @staticmethod
    def _transform(buffer: NDArray[np.complex64], workers: int) -> None:
        """h(x) = Σ ĥ e^{ik·x} for the four packed arrays: unnormalised inverse transforms."""
        import scipy.fft

        scipy.fft.ifft2(buffer, axes=(-2, -1), norm="forward", overwrite_x=True, workers=workers)

    def _finish(self, t: float, rotation: NDArray[np.complex128], buffer: NDArray[np.complex64]) -> Fields:
        """Jacobian, normal and foam from the transformed arrays, lingering foam, velocity."""
        from . import _kernels

        _kernels.surface_kernel(buffer, self.fold_threshold, self.foam_ramp)
        if self.foam_memory > 0.0 and self.lateral_factor > 0.0:
            self._linger(t, buffer)
        velocity = self._velocity(rotation) if self.velocity else None
        return _fields_from_packed(t, buffer, velocity)

    def bound_spectrum(self, t: float):
        """Spectrum of the bound waves' height at time t, or None when this ocean adds none.

        Returns ``(spectrum, (ny, nx))``: a small (M, M) complex array in FFT layout and its
        wave indices, so that the bound height at rest position x is Σ ĥ₂ e^{i k·x} with
        k = Δk (nx, ny). Exact sums at points, or a split of the frame into bands, add it
        to the linear part (a band split puts each K in the band whose k it falls in).
        """
        from . import _kernels

        if self.bound is None:
            return None
        _check_finite("t", t, low=-1e12)
        rotation = np.empty(self._omega_used.shape, dtype=np.complex128)
        _kernels.rotation_kernel(self._omega_used, float(t), rotation)
        return self.bound.spectrum(self._h0, rotation), self.bound.wave_indices()

    def _linger(self, t: float, buffer: NDArray[np.complex64]) -> None:
        """Raise the frame's foam to the decayed foam of past instants (see ``foam_memory``)."""
        import scipy.fft

        from . import _kernels

        n = self.tile.resolution
        derivatives = np.empty((2, n, n), dtype=np.complex64)
        rotation = np.empty(self._omega_used.shape, dtype=np.complex128)
        step = _FOAM_WINDOW * self.foam_memory / self.foam_samples
        for j in range(1, self.foam_samples + 1):
            _kernels.rotation_kernel(self._omega_used, t - j * step, rotation)
            _kernels.jacobian_spectra_kernel(self._h0, self._slots, rotation, self.tile.dk, self.lateral_factor,
                                             derivatives)
            scipy.fft.ifft2(derivatives, axes=(-2, -1), norm="forward", overwrite_x=True, workers=self.fft_workers)
            weight = math.exp(-j * step / self.foam_memory)
            _kernels.lingering_foam_kernel(derivatives, buffer, self.fold_threshold, self.foam_ramp, weight)

    def _velocity(self, rotation: NDArray[np.complex128]) -> NDArray[np.float32]:
        import scipy.fft

        from . import _kernels

        n = self.tile.resolution
        packed = np.empty((2, n, n), dtype=np.complex64)
        _kernels.velocity_kernel(
            self._h0, self._slots, self._omega_used, rotation, self.tile.dk, self.lateral_factor, packed
        )
        if self.bound is not None:
            _add_bound_rate(packed, self.bound.rate(self._h0, rotation, self._omega_used), self.tile.resolution)
        scipy.fft.ifft2(packed, axes=(-2, -1), norm="forward", overwrite_x=True, workers=self.fft_workers)
        return np.stack([packed[0].real, packed[0].imag, packed[1].real], axis=-1)

    def displacement_at(self, x: ArrayLike, y: ArrayLike, t: float, *, order: int = 3) -> NDArray[np.float64]:
        """Displacement (Dx, Dy, h) in metres of the surface points whose rest positions are (x, y).

        Samples the periodic tile at ``t`` with a cubic B-spline (``order=3``, the default)
        or bilinear (``order=1``) interpolation that wraps across the seams, so any world
        position is valid. Returns an array of shape ``x.shape + (3,)``. At texel centres it
        equals the maps exactly. Between them the error comes from the shortest waves on
        the lattice (a few texels long): measured against the exact Fourier sum, the cubic
        spline's rms error is 0.7 % of the height's standard deviation on a 256² tile four
        peak wavelengths wide and 2.8 % on a 128² tile eight wide; bilinear is about three
        times coarser (tested).
        """
        from scipy import ndimage

        if order not in (1, 3):
            raise ValueError(f"order: {order!r} is not allowed; allowed: 1 (bilinear) or 3 (cubic)")
        fields = self.frame(t)
        x = np.asarray(x, dtype=np.float64)
        y = np.asarray(y, dtype=np.float64)
        x, y = np.broadcast_arrays(x, y)
        coords = np.stack([y.ravel(), x.ravel()]) / self.tile.spacing
        out = [
            ndimage.map_coordinates(np.ascontiguousarray(a, dtype=np.float64), coords, order=order, mode="grid-wrap")
            for a in (fields.displacement_x, fields.displacement_y, fields.height)
        ]
        return np.stack(out, axis=-1).reshape(x.shape + (3,))

    def modes(self, *, bound_share: float = 0.99) -> "WaveModes":
        """The travelling sinusoids the frames sum, as arrays (see ``surface.modes``).

        Each lattice wave k that carries energy is one mode: height amplitude 2·h0(k),
        lateral amplitudes i·λ·(k/|k|)·2·h0(k), frequency ω(|k|) (after loop
        quantisation). Re Σ c·e^{i(k·x − ωt)} over them equals the frame's fields exactly
        (ĥ(k) and its mirror ĥ(−k) pair into one real sinusoid). Probes and floating
        bodies evaluate these sums at any point; a band or bound waves add their own modes
        here with ``WaveModes.join``.

        With bound waves (``self.bound``) their modes are joined too: one per pair of
        parents and sign, about P² of them, so by default only the largest, holding
        ``bound_share`` of their height variance, are kept (the rest add an rms height of
        √(1 − bound_share) of the bound waves': 10 % of it, about 0.5 % of σ, at 0.99).
        ``bound_share=1`` gives all of them: the frames' heights exactly.
        """
        from .modes import WaveModes

        ny, nx = self.tile.wave_indices()
        keep = self._h0 != 0
        kx = np.broadcast_to(nx * self.tile.dk, keep.shape)[keep]
        ky = np.broadcast_to(ny * self.tile.dk, keep.shape)[keep]
        height = 2.0 * self._h0[keep].astype(np.complex128)
        k = np.hypot(kx, ky)
        lateral = 1j * self.lateral_factor * height
        linear = WaveModes(kx, ky, self.frequencies[keep], height, lateral * kx / k, lateral * ky / k, self.tile.dk)
        if self.bound is None:
            return linear
        # the bound waves the frames add: one mode per pair of parents and sign (surface.bound),
        # k1 ± k2 on the same lattice
        if not (isinstance(bound_share, (int, float)) and 0.0 < bound_share <= 1.0):
            raise ValueError(f"bound_share: {bound_share!r} is not allowed; allowed: a number in (0, 1]")
        bound = self.bound.modes(self._h0, self._omega_used, share=float(bound_share))
        return WaveModes.join(linear, replace(bound, lattice=self.tile.dk))

    @property
    def amplitudes(self) -> NDArray[np.complex64]:
        """h0(k) on the lattice in FFT layout (read-only view)."""
        view = self._h0.view()
        view.flags.writeable = False
        return view

    @property
    def frequencies(self) -> NDArray[np.float64]:
        """ω(k) in rad/s on the lattice in FFT layout (after loop quantisation); a new array."""
        omega, _ = self._omega_by_q()
        ny, nx = self.tile.wave_indices()
        q = np.minimum(nx * nx + ny * ny, omega.size - 1)
        return omega[q]


def _add_bound_rate(packed: NDArray[np.complex64], rate: NDArray[np.complex128], n: int) -> None:
    """Add the bound waves' ∂h₂/∂t (small FFT-layout spectrum) to the vertical velocity's plane."""
    m = rate.shape[0]
    index = np.fft.fftfreq(m, d=1.0 / m).astype(np.int64) % n
    packed[1][np.ix_(index, index)] += rate.astype(np.complex64)


#: Memory the blocks of an amplitude build in flight at once may take together.
_BUILD_BYTES = 1 << 30
#: What each block in flight beyond the first adds to the build's peak, per texel of the
#: block (measured with tracemalloc: 15.6 MB for a second 128 × 1024 block, its per-ring
#: sums included; 36 MB at 2048), and how much that may be per texel of the lattice: the
#: build's peak (38.5 bytes a texel at 1024² on one thread, 27.4 at 2048²) then stays
#: below the first frame's (about 45; the budget is 48).
_BLOCK_BYTES_PER_TEXEL = 120
_EXTRA_BUILD_BYTES_PER_TEXEL = 12


def _build_threads(workers: int, n: int, rings: int) -> int:
    """Threads that build blocks of amplitude rows at once: ``workers``, fewer where the
    blocks in flight would take more than ``_BUILD_BYTES`` in all, or raise the build's
    peak memory above the first frame's (a block is a large share of a small lattice:
    one thread up to 1024², two from 2048²)."""
    block_bytes = _BLOCK_BYTES_PER_TEXEL * _BLOCK_ROWS * n + 16 * rings
    extra = (_EXTRA_BUILD_BYTES_PER_TEXEL * n * n) // block_bytes
    return max(1, min(workers, _BUILD_BYTES // block_bytes, 1 + extra))


def _in_order(function: Callable, items: list, threads: int):
    """``function(item)`` for each item, yielded in order, computed ``threads`` at a time.

    numpy releases Python's lock in its loops, so blocks of a build overlap on the cores;
    the caller adds their results in order, so the sums are the same bits on any number
    of threads. At most ``threads`` results are held at once.
    """
    if threads <= 1 or len(items) <= 1:
        yield from map(function, items)
        return
    from collections import deque
    from concurrent.futures import ThreadPoolExecutor

    with ThreadPoolExecutor(max_workers=threads, thread_name_prefix="oceanfield-build") as pool:
        pending = deque()
        try:
            for item in items:
                if len(pending) == threads:
                    yield pending.popleft().result()
                pending.append(pool.submit(function, item))
            while pending:
                yield pending.popleft().result()
        finally:
            for future in pending:
                future.cancel()


def _bytes_text(count: float) -> str:
    """A byte count for a message: GiB from 1 GiB up, else MiB."""
    return f"{count / 2**30:.1f} GiB" if count >= 2**30 else f"{count / 2**20:.0f} MiB"


def _fields_from_packed(t: float, packed: NDArray[np.complex64], velocity: NDArray | None) -> Fields:
    """Views of the packed arrays as named fields (see the layout in ``_kernels``)."""
    floats = packed.view(np.float32)  # (4, N, 2N): real, imaginary interleaved
    n = packed.shape[1]
    imag = floats[1, :, 1::2]
    normal = np.lib.stride_tricks.as_strided(
        imag, shape=(n, n, 3), strides=(imag.strides[0], imag.strides[1], floats.strides[0]), writeable=False
    )
    return Fields(
        time=t,
        height=floats[0, :, 0::2],
        displacement_x=floats[0, :, 1::2],
        displacement_y=floats[1, :, 0::2],
        jacobian=floats[2, :, 0::2],
        normal=normal,
        foam=floats[3, :, 0::2],
        velocity=velocity,
    )


def _check_finite(name: str, value: object, *, low: float, low_open: bool = False) -> None:
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise ValueError(f"{name}: {value!r} is not a number; allowed: a finite number {'>' if low_open else '>='} {low:g}")
    number = float(value)
    ok = math.isfinite(number) and (number > low if low_open else number >= low)
    if not ok:
        raise ValueError(f"{name}: {value!r} is not allowed; allowed: a finite number {'>' if low_open else '>='} {low:g}")
