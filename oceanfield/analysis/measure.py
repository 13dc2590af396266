"""The spectral analyzer: measure a height sequence's spectrum, statistics and wave timing.

Any ocean can be checked — ours, another tool's render, a fluid simulation's surface
cache — as long as it is a sequence of square height frames at a known frame rate over a
known area. The analysis streams: each frame is read once, its 2-D spectrum accumulated
and the low-wavenumber part of its transform kept (complex64) for the frequency analysis,
so 240 frames of 512² never sit in memory as float64.

What is measured
----------------
- the wavenumber spectrum, 2-D and omnidirectional (binned in |k|), averaged over frames;
  frames that do not repeat across their edges (a crop never does) are Hann-windowed and
  the window's energy loss divided out (by mean(w²));
- the frequency–wavenumber spectrum from the 3-D transform over (t, y, x), Hann-windowed
  in time, reduced to the power of each |k| annulus per frequency; from it
  `oceanfield.analysis.timing` measures the dispersion the waves actually obey (g_eff/g: the scale
  the motion implies);
- Hs = 4√m0, Tp (time series and wavenumber peak), Tm01, Tm02, the mean direction of
  travel and the directional spread (Kuik et al. 1988), the significant steepness and,
  for lateral displacement maps, the share of the surface that folds (J < 0);
- against a preset: the energy in half-octave bands around the target's peak.

Conventions
-----------
Array columns are x, rows are y (texel (iy, ix) at (ix, iy)·L/N), directions are
counter-clockwise from +x, the direction waves travel *towards*. A surface
h = Σ ĥ e^{i(k·x − ωt)} holds waves running along +k. numpy's forward transforms use
e^{−i(…)}, so the spatial transform of such a wave is a line at +k whose time transform
peaks at the *negative* numpy frequency −ω: here ω_phys = −2π·fftfreq. Energy at
(k, ω_phys > 0) travels towards k̂ (tested on the output, with plane waves and synthesised
seas).

References
----------
Harris, F. J. (1978). On the use of windows for harmonic analysis with the discrete
Fourier transform. Proc. IEEE 66(1), 51–83 (Hann window, equivalent noise bandwidth 1.5 bins).
Kuik, A. J., van Vledder, G. Ph. & Holthuijsen, L. H. (1988). A method for the routine
analysis of pitch-and-roll buoy wave data. J. Phys. Oceanogr. 18, 1020–1034 (mean
direction, directional spread σ = √(2(1 − r))).
WMO (1998). Guide to Wave Analysis and Forecasting, WMO-No. 702 (Hm0 = 4√m0, moments).

This module holds the streaming accumulator and `analyze_heights`. Reading frame files is
`oceanfield.io.sequence`'s work; the wave-timing fit is ``timing``'s, the Hann window, seam
test and frequency spectrum ``spectral``'s, directions ``directions``', folding
``folding``'s, the band comparison ``bands``' and the record of what was measured
(`SequenceAnalysis`) ``results``' (their public names stay importable from here); the text verdict and the
``oceanfield analyze`` command live in ``verdict``, the report picture in ``plot``. This
module knows nothing of files or of synthesis.
"""

from __future__ import annotations

import math
import os
from typing import Iterable

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..physics.constants import GRAVITY
from ..physics.dispersion import angular_frequency, check_depth, group_velocity
from .bands import _WINDOWED_MIN_INDEX, BandVerdict, _target_omnidirectional, band_comparison
from .directions import _direction_edges, _directions, directional_moments
from .folding import lateral_jacobian
from .results import SequenceAnalysis, whole_degrees
from .spectral import _peak, frequency_spectrum, hann_window, seam_ratio
from .timing import (  # DispersionFit, fit_dispersion, measure_dispersion, TIMING_TOLERANCE: re-exported
    MOVING_FLOOR,
    TIMING_TOLERANCE,
    DispersionFit,
    fit_dispersion,
    measure_dispersion,
    timing_notes,
)

# The names of the modules split from this one stay importable from here (re-exported).
__all__ = [
    "MIN_FRAMES",
    "MIN_RESOLUTION",
    "TIMING_TOLERANCE",
    "BandVerdict",
    "DispersionFit",
    "SequenceAnalysis",
    "SequenceAccumulator",
    "analyze_heights",
    "band_comparison",
    "check_positive",
    "directional_moments",
    "fit_dispersion",
    "frequency_spectrum",
    "hann_window",
    "lateral_jacobian",
    "measure_dispersion",
    "seam_ratio",
    "whole_degrees",
]


#: Fewest frames analysed: the positive half of a T-point transform has T/2 − 1
#: frequencies, and a peak centroid needs two bins either side of it and room below
#: Nyquist; with fewer than 16 nothing is left to fit. 64 or more resolve a sea well.
MIN_FRAMES = 16
#: Smallest square region analysed, in texels (the synthesiser's own minimum tile).
MIN_RESOLUTION = 16
#: Frames are periodic when the RMS jump across their edges is at most this many times
#: the RMS step between neighbouring texels. For a field that repeats, the seam is just
#: another step (ratio ≈ 1, within about 10 % over the seams of a few 128² frames); for
#: one that does not, the two edges are unrelated and the ratio is 1/√(1 − ρ1), with ρ1
#: the correlation of neighbouring texels: above 1.4 once ρ1 > 0.5, i.e. once a wave spans
#: more than six texels. Rougher fields leak little from their seams, window or not
#: (common practice threshold).
_SEAM_RATIO_PERIODIC = 1.4
#: Frames pooled to decide periodicity before the first is transformed.
_DECIDE_FRAMES = 4
#: Memory for the kept part of each frame's transform (complex64), all frames together.
_CUBE_BYTES = 768 * 2**20
#: Work memory for one block of the time transform.
_BLOCK_BYTES = 48 * 2**20
#: Point time series for the frequency spectrum: at most this many points per side.
_SERIES_POINTS = 64


# -- the streaming accumulator -----------------------------------------------------------


class SequenceAccumulator:
    """Accumulates a height sequence frame by frame; :meth:`finish` measures it.

    Each :meth:`add` transforms one frame (windowed unless periodic), adds its power to
    the 2-D spectrum, keeps the low-wavenumber part of its transform for the 3-D
    analysis and samples a grid of points for the frequency spectrum. Memory: about
    ``frame_count × (2K)(K+1) × 8`` bytes for the kept transforms, with K the largest
    wavenumber index kept (all of the lattice when that fits in ``max_cube_bytes``).

    Parameters
    ----------
    frame_count : int
        Frames that will be added (≥ `MIN_FRAMES`).
    resolution : int
        Texels per side n of every frame (≥ 16).
    size : float
        Side of the area a frame covers, metres.
    fps : float
        Frames per second.
    periodic : bool or None
        Whether frames repeat across their edges; None decides from the first frame
        (`seam_ratio` of the first 4 frames ≤ 1.4). Non-periodic frames are Hann-windowed.
    max_cube_bytes : int
        Memory for the kept transforms.
    fft_workers : int or None
        Threads for the transforms (None: all cores).

    Examples
    --------
    >>> acc = SequenceAccumulator(64, 128, 200.0, 24.0)      # doctest: +SKIP
    >>> for frame in frames: acc.add(frame)                   # doctest: +SKIP
    >>> result = acc.finish(depth=5.0)                        # doctest: +SKIP
    """

    def __init__(
        self,
        frame_count: int,
        resolution: int,
        size: float,
        fps: float,
        *,
        periodic: bool | None = None,
        max_cube_bytes: int = _CUBE_BYTES,
        fft_workers: int | None = None,
    ) -> None:
        if isinstance(frame_count, bool) or not isinstance(frame_count, (int, np.integer)) or frame_count < MIN_FRAMES:
            raise ValueError(
                f"frames: {frame_count!r} frames is too few; the frequency analysis needs at least "
                f"{MIN_FRAMES} (64 or more resolve a sea well)"
            )
        if isinstance(resolution, bool) or not isinstance(resolution, (int, np.integer)) or resolution < MIN_RESOLUTION:
            raise ValueError(
                f"resolution: {resolution!r} is not allowed; allowed: an integer >= {MIN_RESOLUTION} texels"
            )
        check_positive("tile size", size, "metres")
        check_positive("fps", fps, "frames per second")
        self.frame_count = int(frame_count)
        self.resolution = n = int(resolution)
        self.size = float(size)
        self.fps = float(fps)
        self.periodic = periodic
        self.fft_workers = fft_workers if fft_workers is not None else (os.cpu_count() or 1)
        self.seam_ratio = math.nan
        # Kept wavenumber indices: |ny| ≤ K rows, 0 ≤ nx ≤ K columns of the half plane.
        half = n // 2
        per_index = 2.0 * self.frame_count * 8.0
        keep = int(min(half, max(8, math.isqrt(int(max_cube_bytes / per_index)))))
        rows = np.fft.fftfreq(n, d=1.0 / n).astype(np.int64)
        self._rows = np.flatnonzero(np.abs(rows) <= keep)
        self._cols = keep + 1
        self.kept_index = keep
        self._cube = np.empty((self.frame_count, self._rows.size, self._cols), dtype=np.complex64)
        self._power = np.zeros((n, n // 2 + 1), dtype=np.float64)
        self._stride = max(1, -(-n // _SERIES_POINTS))
        points = len(range(0, n, self._stride))
        self._series = np.empty((self.frame_count, points * points), dtype=np.float32)
        self._means = np.empty(self.frame_count)
        self._variances = np.empty(self.frame_count)
        self._folded: list[float] = []
        self._window: NDArray[np.float32] | None = None
        self._pending: list = []
        self._decided = False
        self._count = 0

    # -- per frame ---------------------------------------------------------------------
    def add(self, height: ArrayLike, lateral: tuple[ArrayLike, ArrayLike] | None = None) -> None:
        """Add the next frame: height in metres, (n, n); optionally the lateral
        displacement (Dx, Dy) in metres along x (columns) and y (rows), for folding.

        The first few frames are held until periodicity is decided (`seam_ratio` pooled
        over 4 frames), then every frame is transformed as it arrives.
        """
        received = self._count + len(self._pending)
        if received >= self.frame_count:
            raise ValueError(f"frames: more than the {self.frame_count} frames announced")
        n = self.resolution
        h = np.array(height, dtype=np.float32)
        if h.shape != (n, n):
            raise ValueError(f"frame {received}: shape {h.shape}; expected ({n}, {n}) like the first")
        if not np.all(np.isfinite(h)):
            raise ValueError(f"frame {received}: holds NaN or infinite heights")
        if self._decided:
            self._add(h, lateral)
            return
        # Pool the first few frames to decide whether the frames repeat across their edges.
        self._pending.append((h, None if lateral is None else (np.array(lateral[0]), np.array(lateral[1]))))
        if len(self._pending) == min(_DECIDE_FRAMES, self.frame_count):
            self._decide()

    def _decide(self) -> None:
        n = self.resolution
        self.seam_ratio = seam_ratio(np.stack([h for h, _ in self._pending]))
        if self.periodic is None:
            self.periodic = bool(self.seam_ratio <= _SEAM_RATIO_PERIODIC)
        if not self.periodic:
            line = hann_window(n)
            self._window = np.outer(line, line).astype(np.float32)
        self._decided = True
        pending, self._pending = self._pending, []
        for h, lateral in pending:
            self._add(h, lateral)

    def _add(self, h: NDArray[np.float32], lateral) -> None:
        import scipy.fft

        n = self.resolution
        mean = float(np.mean(h, dtype=np.float64))
        self._means[self._count] = mean
        self._variances[self._count] = float(np.mean((h - mean) ** 2, dtype=np.float64))
        if self._window is None:
            x = h - np.float32(mean)
        else:
            w = self._window
            weighted_mean = float(np.sum(h * w, dtype=np.float64) / np.sum(w, dtype=np.float64))
            x = (h - np.float32(weighted_mean)) * w
        spectrum = scipy.fft.rfft2(x, workers=self.fft_workers)
        spectrum /= np.float32(n * n)
        self._power += spectrum.real.astype(np.float64) ** 2 + spectrum.imag.astype(np.float64) ** 2
        self._cube[self._count] = spectrum[self._rows, : self._cols]
        self._series[self._count] = h[:: self._stride, :: self._stride].ravel()
        if lateral is not None:
            jac = lateral_jacobian(lateral[0], lateral[1], self.size / n, periodic=bool(self.periodic))
            self._folded.append(float(np.mean(jac < 0.0)))
        self._count += 1

    # -- the measurement ---------------------------------------------------------------
    def finish(self, *, depth: float = np.inf, gravity: float = GRAVITY, target=None) -> SequenceAnalysis:
        """Measure the sequence.

        Parameters
        ----------
        depth : float
            Water depth in metres for the dispersion relation (inf = deep).
        gravity : float
            Declared gravity, m/s².
        target : SeaState, optional
            A sea to compare the spectrum with, band by band.
        """
        if self._count != self.frame_count:
            raise ValueError(f"frames: {self._count} added of the {self.frame_count} announced")
        depth = check_depth(depth)
        n, t = self.resolution, self.frame_count
        dk = 2.0 * math.pi / self.size
        notes: list[str] = []

        # Variance over all frames about the grand mean (per-frame means may differ in a
        # crop, and that difference is wave energy too).
        m0 = float(np.mean(self._variances) + np.var(self._means))
        hs = 4.0 * math.sqrt(m0)

        # Wavenumber spectrum on the half plane, window loss divided out.
        window_power = 1.0 if self._window is None else float(np.mean(self._window.astype(np.float64) ** 2))
        power = self._power / (t * window_power)
        ny = np.fft.fftfreq(n, d=1.0 / n)[:, None]
        nx = np.arange(n // 2 + 1)[None, :]
        radius = np.hypot(nx, ny)
        weight = np.where((nx == 0) | ((n % 2 == 0) & (nx == n // 2)), 1.0, 2.0)
        annulus = np.rint(radius).astype(np.int64)
        n_annuli = n // 2 + 1
        inside = annulus < n_annuli
        omni = np.bincount(annulus[inside], weights=(weight * power)[inside], minlength=n_annuli)
        k_bins = np.arange(n_annuli) * dk
        density = omni / dk
        # Tp from the wavenumber peak: S(ω) = E(k)/c_g at the annuli, peak in k, then ω(k).
        c_g = group_velocity(np.where(k_bins > 0, k_bins, dk), depth, gravity=gravity)
        first = 1 if self._window is None else math.ceil(_WINDOWED_MIN_INDEX)  # past the mean's leakage
        k_peak = _peak(k_bins[first:], density[first:] / c_g[first:])
        tp_k = 2.0 * math.pi / float(angular_frequency(k_peak, depth, gravity=gravity)) if k_peak > 0 else math.nan

        # Frequency spectrum of point time series.
        omega_t, s_omega = frequency_spectrum(self._series, self.fps)
        d_omega = 2.0 * math.pi * self.fps / t
        still = not float(np.sum(s_omega) * d_omega) > MOVING_FLOOR * m0
        w_peak = math.nan if still else _peak(omega_t, s_omega)
        tp = 2.0 * math.pi / w_peak if w_peak > 0 else math.nan
        moments = [float(np.sum(omega_t**order * s_omega) * d_omega) for order in (0, 1, 2)]
        tm01 = 2.0 * math.pi * moments[0] / moments[1] if moments[1] > 0 and not still else math.nan
        tm02 = 2.0 * math.pi * math.sqrt(moments[0] / moments[2]) if moments[2] > 0 and not still else math.nan
        if still:
            notes.append("the frames do not change over time: there are no moving waves to time")

        # Frequency–wavenumber spectrum of the kept part of the lattice.
        nyquist = math.pi * self.fps
        cube = self._omega_k(dk)
        fit = measure_dispersion(
            cube["annulus_power"], cube["k_mean"], cube["omega"], nyquist=nyquist, depth=depth, gravity=gravity,
            variance=m0,
        )
        duration = f"{t / self.fps:.3g} s"
        mean_direction, spread, direction_energy, direction_notes = _directions(
            cube, fit, self.kept_index, still, duration
        )
        notes += direction_notes

        steepness = 2.0 * math.pi * hs / (gravity * tp * tp) if tp > 0 else math.nan
        folded = float(np.mean(self._folded)) if self._folded else None

        bands = None
        target_spectrum = None
        target_hs = target_tp = None
        if target is not None:
            target_stats = target.statistics()
            target_hs, target_tp = target_stats.hs, target_stats.tp
            bands = band_comparison(
                power, radius * dk, weight, dk, target, k_max=n // 2 * dk, windowed=self._window is not None
            )
            target_spectrum = _target_omnidirectional(target, k_bins)

        notes += timing_notes(fit, w_peak, nyquist, self.fps, t)
        if self.kept_index < n // 2:
            notes.append(
                f"the frequency analysis keeps wavenumbers up to {self.kept_index * dk:.3g} rad/m "
                f"(of {n // 2 * dk:.3g}) to bound memory"
            )

        return SequenceAnalysis(
            frames=t,
            resolution=n,
            size=self.size,
            fps=self.fps,
            periodic=bool(self.periodic),
            seam_ratio=self.seam_ratio,
            m0=m0,
            hs=hs,
            tp=tp,
            tp_from_wavenumber=tp_k,
            tm01=tm01,
            tm02=tm02,
            mean_direction=mean_direction,
            directional_spread=spread,
            significant_steepness=steepness,
            folded_fraction=folded,
            dispersion=fit,
            bands=bands,
            nyquist_frequency=nyquist,
            frequency_resolution=d_omega,
            wavenumber_resolution=dk,
            analysed_wavenumber=self.kept_index * dk,
            wavenumbers=k_bins[1:],
            wavenumber_spectrum=density[1:],
            frequencies=omega_t,
            frequency_spectrum=s_omega,
            annulus_power=cube["annulus_power"],
            direction_bins=0.5 * (_direction_edges()[1:] + _direction_edges()[:-1]),
            direction_energy=direction_energy,
            target_spectrum=None if target_spectrum is None else target_spectrum[1:],
            target_hs=target_hs,
            target_tp=target_tp,
            notes=tuple(notes),
        )

    def _omega_k(self, dk: float) -> dict[str, NDArray]:
        """Time transform of the kept lattice, block by block, reduced to what is measured:
        per annulus and positive frequency the power; per lattice point the power running
        towards +k̂ and towards −k̂."""
        import scipy.fft
        import scipy.sparse

        t, n = self.frame_count, self.resolution
        rows = np.fft.fftfreq(n, d=1.0 / n)[self._rows]
        cols = np.arange(self._cols)
        ny, nx = np.meshgrid(rows, cols, indexing="ij")
        radius = np.hypot(nx, ny)
        # Each half-plane point stands for itself and its mirror −k (kept as its
        # negative frequencies); the self-mirrored columns nx = 0 (and n/2) hold both.
        half_weight = np.where((nx == 0) | ((n % 2 == 0) & (nx == n // 2)), 0.5, 1.0)
        point_annulus = np.rint(radius).astype(np.int64)
        n_annuli = self.kept_index + 1
        n_freq = (t - 1) // 2  # positive frequencies below Nyquist
        positive = t - np.arange(1, n_freq + 1)  # numpy index of ω_phys = +m Δω
        negative = np.arange(1, n_freq + 1)  # numpy index of ω_phys = −m Δω
        w_t = hann_window(t).astype(np.float32)
        w_power = float(np.mean(w_t.astype(np.float64) ** 2))
        annulus_power = np.zeros((n_annuli, n_freq))
        forward = np.empty(radius.shape)
        backward = np.empty(radius.shape)
        per_row = t * self._cols * 8 * 3
        block = max(1, _BLOCK_BYTES // per_row)
        for start in range(0, rows.size, block):
            stop = min(start + block, rows.size)
            chunk = self._cube[:, start:stop, :]
            mean = np.tensordot(w_t, chunk, axes=(0, 0)) / w_t.sum()
            chunk = (chunk - mean[None]) * w_t[:, None, None]
            spectrum = scipy.fft.fft(chunk, axis=0, workers=self.fft_workers, overwrite_x=True)
            spectrum /= np.float32(t)
            power = (spectrum.real**2 + spectrum.imag**2).astype(np.float64) / w_power
            fwd = power[positive].reshape(n_freq, -1)
            bwd = power[negative].reshape(n_freq, -1)
            hw = half_weight[start:stop].ravel()
            forward[start:stop] = (fwd.sum(axis=0) * hw).reshape(stop - start, -1)
            backward[start:stop] = (bwd.sum(axis=0) * hw).reshape(stop - start, -1)
            bins = point_annulus[start:stop].ravel()
            within = bins < n_annuli
            onehot = scipy.sparse.csr_matrix(
                (hw[within], (bins[within], np.flatnonzero(within))), shape=(n_annuli, bins.size)
            )
            annulus_power += onehot @ (fwd + bwd).T
        total = forward + backward
        within = point_annulus < n_annuli
        sums = np.bincount(point_annulus[within], weights=total[within], minlength=n_annuli)
        k_sums = np.bincount(point_annulus[within], weights=(total * radius)[within], minlength=n_annuli)
        k_mean = np.where(sums > 0, k_sums / np.where(sums > 0, sums, 1.0), np.arange(n_annuli)) * dk
        return {
            "annulus_power": annulus_power,
            "k_mean": k_mean,
            "omega": 2.0 * math.pi * self.fps / t * np.arange(1, n_freq + 1),
            "point_annulus": point_annulus,
            "theta": np.arctan2(ny, nx),
            "forward": forward,
            "backward": backward,
        }


def analyze_heights(
    frames: ArrayLike | Iterable[ArrayLike],
    size: float,
    fps: float,
    *,
    depth: float = np.inf,
    gravity: float = GRAVITY,
    target=None,
    periodic: bool | None = None,
    lateral: Iterable[tuple[ArrayLike, ArrayLike]] | None = None,
    max_cube_bytes: int = _CUBE_BYTES,
) -> SequenceAnalysis:
    """Measure a height sequence held in memory (or any sequence of frames).

    Parameters
    ----------
    frames : array_like, shape (T, n, n), or a sized sequence of (n, n) arrays
        Height in metres, rows along y, columns along x.
    size : float
        Side of the area a frame covers, metres.
    fps : float
        Frames per second.
    depth, gravity, target
        As in :meth:`SequenceAccumulator.finish`.
    periodic : bool or None
        Whether the frames repeat across their edges (None: detect).
    lateral : sequence of (Dx, Dy), optional
        Lateral displacement of each frame in metres, for the folded fraction.

    Examples
    --------
    >>> import numpy as np
    >>> x = np.arange(64) * 100.0 / 64
    >>> k = 2 * np.pi * 4 / 100.0; w = np.sqrt(9.80665 * k)
    >>> frames = [np.cos(k * x[None, :] - w * i / 10.0) * np.ones((64, 1)) for i in range(64)]
    >>> result = analyze_heights(frames, 100.0, 10.0)
    >>> round(result.hs, 2), round(float(np.degrees(result.mean_direction)))
    (2.83, 0)
    """
    sequence = frames if hasattr(frames, "__len__") else list(frames)
    count = len(sequence)  # type: ignore[arg-type]
    if count < MIN_FRAMES:
        raise ValueError(
            f"frames: {count} frames is too few; the frequency analysis needs at least {MIN_FRAMES} "
            f"(64 or more resolve a sea well)"
        )
    first = np.asarray(sequence[0])  # type: ignore[index]
    if first.ndim != 2 or first.shape[0] != first.shape[1]:
        raise ValueError(f"frames: frame shape {first.shape}; expected square (n, n) frames")
    accumulator = SequenceAccumulator(
        count, first.shape[0], size, fps, periodic=periodic, max_cube_bytes=max_cube_bytes
    )
    laterals = list(lateral) if lateral is not None else None
    if laterals is not None and len(laterals) != count:
        raise ValueError(f"lateral: {len(laterals)} frames for {count} height frames; expected one each")
    for index in range(count):
        accumulator.add(sequence[index], None if laterals is None else laterals[index])  # type: ignore[index]
    return accumulator.finish(depth=depth, gravity=gravity, target=target)


def check_positive(name: str, value: object, unit: str) -> float:
    """``value`` as a float when it is a finite number above 0, else ValueError naming
    ``name`` (a parameter or command-line option), the value and ``unit``."""
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise ValueError(f"{name}: {value!r} is not a number; allowed: a finite number > 0 {unit}")
    number = float(value)
    if not (math.isfinite(number) and number > 0):
        raise ValueError(f"{name}: {value!r} is not allowed; allowed: a finite number > 0 {unit}")
    return number
