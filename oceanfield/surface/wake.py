"""Wakes of moving bodies: the linear response of the sea to moving pressure patches.

Knows nothing of presets or files: hulls, courses and a region in, `Fields` and
`SurfacePoints` out, in internal axes (x along image columns, y along rows, z up) and SI.

Each hull is a smooth pressure patch (``physics.wake.pressure_patch_spectrum``, peak
pressure ρ g d for draft d: the wake's amplitude is proportional to the draft) that
follows its `Course`, piecewise linear in time. In Fourier space the elevation is the
Cauchy–Poisson integral over the look-back T of the patch's past path,

    η̂(k, t) = −(κ/(ρω)) Σ_vessels ∫_0^T p̂(k, t − u) w(u) sin(ωu) du,

with the window w(u) = (e^{−εu} − e^{−εT})/(1 − e^{−εT}), εT = `WINDOW_RATE` (Rayleigh's
small damping made to vanish at the look-back's end, so cutting it starts no wave). Over a
constant-velocity piece of the course the integral has a closed form
(``physics.wake.segment_response``); a course is first reduced to pieces of constant
velocity (samples within `MERGE_TOLERANCE` × the patch's beam scale of a straight run
are merged), so a course sampled every frame costs what its bends cost.

The wake lives on its own square region, not periodic: the synthesis runs on a larger
periodic lattice of the same texel spacing (`Wake.lattice_size`), padded so that no
periodic image of the wake reaches the region within the look-back (the steady waves'
energy travels from the course at most at n·U, n = c_g/c, so the pad is the course's extent
beyond the region plus n·U_max·T), and the region is cropped out of it. Lateral
displacement, slopes, Jacobian and normals follow the sea's spectral recipes
(DEVELOPERS.md, conventions). Every frame is a pure function of its time: the pieces are
visited newest first, in a fixed order, whatever frames came before.

The foam trail (common practice, no source): capsules behind the stern along the course
of the last 3 ``foam_lifetime`` seconds, strength e^{−age/lifetime} × min(1, Fr_L/0.2) at
the time the water was left, half-width (B/2)·√(1 + age/lifetime); bow foam over the fore
half of the hull, growing from nothing at Fr_L = 0.3 to full at Fr_L = 0.6.
"""

from __future__ import annotations

import math
import os
from typing import Sequence

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..physics import wake as wake_physics
from ..physics.constants import GRAVITY, SEAWATER_DENSITY
from ..physics.dispersion import angular_frequency, check_depth, group_velocity, phase_velocity
from .course import Course, Hull, WakeRegion, merge, pieces
from .fields import Fields
from .probes import SurfacePoints

__all__ = ["Hull", "Course", "WakeRegion", "Wake", "combine", "WINDOW_RATE", "MERGE_TOLERANCE",
           "DEFAULT_FOAM_LIFETIME", "PATCH_FLOOR"]

#: εT of the look-back window w(u): the wake emitted half a look-back ago weighs 0.38.
WINDOW_RATE = 1.0
#: Largest position error, as a fraction of the patch's beam scale b = B√C_B, of merging
#: course samples into one straight piece (phase error ≤ 0.02·k·b, under 0.1 rad where the
#: patch's spectrum is still above 1 % of its peak).
MERGE_TOLERANCE = 0.02
#: e-folding time of the foam trail in seconds (common practice: a boat's white water
#: fades in tens of seconds in a moderate sea).
DEFAULT_FOAM_LIFETIME = 20.0
#: The patch's spectrum, relative to its peak, below which a piece adds nothing to a wave
#: (its far tail; measured on a turning 512² wake: 0.11 % r.m.s. of the height and 0.002
#: in the normal's components against a floor of 10⁻⁷, for 0.8 of the time).
PATCH_FLOOR = 1e-3
_FOAM_PIECES_PER_LIFETIME = 8
#: Transverse wavelengths of wake behind the hull a look-back should hold (U·T/2 of them
#: formed: the transverse waves' energy follows at half the speed), below which notes warn.
LOOKBACK_WAVELENGTHS = 3
#: Lattice texels over region texels above which notes say what the padding costs.
LATTICE_NOTE_RATIO = 16.0
#: Points × live waves above which probes sum by a non-uniform FFT instead of directly.
NUFFT_ABOVE = 1e7  # (measured crossover at ~25 points on the benchmark's 1876² lattice)


class Wake:
    """The wakes of moving hulls on a `WakeRegion`; see the module docstring.

    Parameters
    ----------
    vessels : sequence of (Hull, Course)
    region : WakeRegion
    depth : float
        Water depth in metres (``inf``: deep).
    gravity, surface_tension, density : float
        m/s², N/m, kg/m³ (the dispersion's).
    lookback : float
        Seconds of each course the frame integrates over (> 0).
    lateral_factor : float
        λ ≥ 0 of the lateral displacement, as the sea's.
    foam_lifetime : float
        e-folding time of the foam trail, seconds (> 0).
    velocity : bool
        Whether frames carry the surface velocity.
    fft_workers : int or None
        Threads of the inverse FFTs (None: every core).
    """

    def __init__(self, vessels: Sequence[tuple[Hull, Course]], region: WakeRegion, *,
                 depth: float = np.inf, gravity: float = GRAVITY, surface_tension: float = 0.0,
                 density: float = SEAWATER_DENSITY, lookback: float = 60.0,
                 lateral_factor: float = 1.0, foam_lifetime: float = DEFAULT_FOAM_LIFETIME,
                 velocity: bool = False, fft_workers: int | None = None) -> None:
        vessels = tuple(vessels)
        for i, item in enumerate(vessels):
            if not (isinstance(item, tuple) and len(item) == 2 and isinstance(item[0], Hull) and isinstance(item[1], Course)):
                raise ValueError(f"vessels[{i}]: {item!r} is not allowed; allowed: a (Hull, Course) pair")
        if not isinstance(region, WakeRegion):
            raise ValueError(f"region: {type(region).__name__} is not allowed; allowed: a WakeRegion")
        self.depth = check_depth(depth)
        for name, value, low in (("gravity", gravity, 0.0), ("density", density, 0.0), ("lookback", lookback, 0.0),
                                 ("foam_lifetime", foam_lifetime, 0.0)):
            if isinstance(value, bool) or not isinstance(value, (int, float, np.floating, np.integer)) or not (math.isfinite(value) and value > low):
                raise ValueError(f"{name}: {value!r} is not allowed; allowed: a finite number > 0")
        for name, value in (("surface_tension", surface_tension), ("lateral_factor", lateral_factor)):
            if isinstance(value, bool) or not isinstance(value, (int, float, np.floating, np.integer)) or not (math.isfinite(value) and value >= 0):
                raise ValueError(f"{name}: {value!r} is not allowed; allowed: a finite number >= 0")
        if fft_workers is not None and (isinstance(fft_workers, bool) or not isinstance(fft_workers, int) or fft_workers < 1):
            raise ValueError(f"fft_workers: {fft_workers!r} is not allowed; allowed: an integer >= 1 or None")
        self._vessels = vessels
        self.region = region
        self.gravity, self.surface_tension, self.density = float(gravity), float(surface_tension), float(density)
        self.lookback = float(lookback)
        self.lateral_factor = float(lateral_factor)
        self.foam_lifetime = float(foam_lifetime)
        self.velocity = bool(velocity)
        self.fft_workers = fft_workers if fft_workers is not None else (os.cpu_count() or 1)
        self.damping = WINDOW_RATE / self.lookback
        self._patches = [wake_physics.patch_lengths(h.length, h.beam) for h, _ in vessels]
        self._paths = [merge(c, MERGE_TOLERANCE * b) for (h, c), (_, b) in zip(vessels, self._patches)]
        self._build_lattice()

    @classmethod
    def for_sea(cls, sea_state, vessels: Sequence[tuple[Hull, Course]], region: WakeRegion, **options) -> "Wake":
        """A wake in the sea state's water: its depth, gravity, surface tension and density."""
        for name in ("depth", "gravity", "surface_tension", "density"):
            if name in options:
                raise ValueError(f"{name}: given with for_sea; allowed: taken from the sea state (use Wake(...) to set it)")
        return cls(vessels, region, depth=sea_state.depth, gravity=sea_state.gravity,
                   surface_tension=sea_state.surface_tension, density=sea_state.density, **options)

    @property
    def vessels(self) -> tuple[tuple[Hull, Course], ...]:
        """The (Hull, Course) pairs, in order."""
        return self._vessels

    # -- the lattice -----------------------------------------------------------------

    def _dispersion(self, k):
        return angular_frequency(k, self.depth, gravity=self.gravity, surface_tension=self.surface_tension,
                                 density=self.density)

    def _speeds(self) -> list[float]:
        return [float(np.max(np.hypot(p.vx, p.vy))) if p.vx.size else 0.0 for p in self._paths]

    def energy_speed_ratio(self) -> float:
        """Largest c_g/c of the steady waves the hulls can make (½ in deep water, up to 1 in shallow)."""
        speed = max(self._speeds(), default=0.0)
        b_min = min((b for _, b in self._patches), default=1.0)
        k_top = math.sqrt(4.0 * math.pi * math.log(1.0 / PATCH_FLOOR)) / b_min
        k = np.geomspace(k_top * 1e-6, k_top, 4000)
        kw = dict(gravity=self.gravity, surface_tension=self.surface_tension, density=self.density)
        c = phase_velocity(k, self.depth, **kw)
        ratio = group_velocity(k, self.depth, **kw) / c
        stationary = c <= speed
        return float(max(0.5, np.max(ratio[stationary]) if stationary.any() else 0.5))

    def _build_lattice(self) -> None:
        import scipy.fft

        r = self.region
        s = r.spacing
        reach = self.energy_speed_ratio() * max(self._speeds(), default=0.0) * self.lookback
        x0, x1, y0, y1 = r.origin_x, r.origin_x + r.size, r.origin_y, r.origin_y + r.size
        # Only the course within `reach` of the region can put waves on it; farther pieces are
        # left out of every frame (`_piece_arrays`), so they set no padding either.
        self._reach = reach
        self._near = (x0 - reach, x1 + reach, y0 - reach, y1 + reach)
        xs, ys = [x0, x1], [y0, y1]
        for path in self._paths:
            for i in range(path.times.size - 1):
                cut = _clip_to_box(path.x[i], path.y[i], path.x[i + 1], path.y[i + 1], self._near)
                if cut is not None:
                    for f in cut:
                        xs.append(path.x[i] + f * (path.x[i + 1] - path.x[i]))
                        ys.append(path.y[i] + f * (path.y[i + 1] - path.y[i]))
            for px, py in ((path.x[0], path.y[0]), (path.x[-1], path.y[-1])):
                if _clip_to_box(px, py, px, py, self._near) is not None:
                    xs.append(px)
                    ys.append(py)
        bx0, bx1, by0, by1 = min(xs), max(xs), min(ys), max(ys)
        span = max(x1 - bx0, bx1 - x0, y1 - by0, by1 - y0) + reach
        m = scipy.fft.next_fast_len(int(math.ceil(span / s)), real=True)
        m += m % 2
        self.lattice_size = int(m)
        self.lattice_extent = m * s
        dk = 2.0 * math.pi / self.lattice_extent
        self._kx = dk * np.arange(m // 2 + 1, dtype=np.float64)
        self._ky = dk * np.fft.fftfreq(m, 1.0 / m)
        kxg, kyg = np.meshgrid(self._kx, self._ky)
        k = np.hypot(kxg, kyg)
        omega = self._dispersion(k)
        kappa = k * (1.0 if np.isinf(self.depth) else np.tanh(k * self.depth))
        with np.errstate(divide="ignore", invalid="ignore"):
            gain = np.where(omega > 0, -kappa / (self.density * omega * self.lattice_extent**2), 0.0)
        gain[:, -1] = 0.0  # the Nyquist column and row carry nothing (real fields, derivatives)
        gain[m // 2, :] = 0.0
        b_min = min((b for _, b in self._patches), default=1.0)
        self._kcut2 = 4.0 * math.pi * math.log(1.0 / PATCH_FLOOR) / b_min**2
        self._omega = omega
        self._gain = gain

    # -- pieces of a frame -------------------------------------------------------------

    def _piece_arrays(self, t: float, exclude: int | None = None):
        """The frame's pieces as kernel columns: ages, durations, end positions (relative to the
        region's origin), velocities, the patch's quadratic form and amplitude, and whether
        each piece ends where the one before it (same vessel, newer) began."""
        r = self.region
        cols = [[] for _ in range(11)]
        for v, ((hull, _), path, (ell, b)) in enumerate(zip(self._vessels, self._paths, self._patches)):
            if v == exclude:
                continue
            amp = self.density * self.gravity * hull.draft * ell * b
            if amp == 0.0:
                continue
            newer_start = None
            for ta, tb, xb, yb, vx, vy, head in pieces(path, t, self.lookback):
                cut = _clip_to_box(xb - vx * (tb - ta), yb - vy * (tb - ta), xb, yb, self._near)
                if cut is None:
                    newer_start = None
                    continue
                start = ta if cut[0] == 0.0 else ta + cut[0] * (tb - ta)
                end = tb if cut[1] == 1.0 else ta + cut[1] * (tb - ta)
                if end <= start:
                    newer_start = None
                    continue
                joined = newer_start is not None and newer_start == end
                newer_start = start
                xe, ye = xb - vx * (tb - end), yb - vy * (tb - end)
                c, s = math.cos(head), math.sin(head)
                e2, b2 = ell * ell / (4 * math.pi), b * b / (4 * math.pi)
                # (k·ê)²ℓ² + (k·ê⊥)²b² over 4π as a kx² + b ky² + c kx ky
                row = (t - end, end - start, xe - r.origin_x, ye - r.origin_y, vx, vy,
                       c * c * e2 + s * s * b2, s * s * e2 + c * c * b2, 2 * c * s * (e2 - b2), amp,
                       1.0 if joined else 0.0)
                for col, value in zip(cols, row):
                    col.append(value)
        arrays = [np.array(col, dtype=np.float64) for col in cols[:10]]
        return arrays + [np.array(cols[10], dtype=np.bool_)]

    def _spectra(self, t: float, fields: int, exclude: int | None = None, kernel: bool = True) -> NDArray[np.complex64]:
        from . import _wake_kernels as kern

        m = self.lattice_size
        out = np.empty((fields, m, m // 2 + 1), dtype=np.complex64)
        arrays = self._piece_arrays(t, exclude)
        if arrays[0].size == 0:
            out[...] = 0
            return out
        args = (self._kx, self._ky, self._omega, self._gain, self._kcut2, *arrays, math.log(1.0 / PATCH_FLOOR),
                self.damping, math.exp(-WINDOW_RATE), self.lateral_factor)
        if kernel:
            kern.wake_spectra_kernel(*args, out)
            return out
        return kern.wake_spectra_reference(*args, fields)

    def frame(self, t: float) -> Fields:
        """The wake alone on the region at time t (seconds): a pure function of t."""
        import scipy.fft

        t = _check_time(t)
        fields = 11 if self.velocity else 8
        spec = self._spectra(t, fields)
        m = self.lattice_size
        planes = scipy.fft.irfft2(spec, s=(m, m), axes=(-2, -1), norm="forward", workers=self.fft_workers)
        return self._assemble(t, planes)

    def _assemble(self, t: float, planes: NDArray[np.float32]) -> Fields:
        from . import _wake_kernels as kern

        n = self.region.resolution
        jac = np.empty((n, n), dtype=np.float32)
        normal = np.empty((n, n, 3), dtype=np.float32)
        velocity = np.empty((n, n, 3), dtype=np.float32) if self.velocity else None
        kern.wake_surface_kernel(planes, jac, normal, velocity if velocity is not None else normal[:0, :0])
        crop = np.ascontiguousarray(planes[:3, :n, :n])
        return Fields(time=float(t), height=crop[0], displacement_x=crop[1], displacement_y=crop[2],
                      jacobian=jac, normal=normal, foam=self.foam(t), velocity=velocity)

    # -- foam ----------------------------------------------------------------------------

    def foam(self, t: float) -> NDArray[np.float32]:
        """The foam trail and bow foam on the region at time t, 0 … 1 (float32)."""
        from . import _wake_kernels as kern

        t = _check_time(t)
        r = self.region
        out = np.zeros((r.resolution, r.resolution), dtype=np.float32)
        cols = self._foam_capsules(t)
        if cols[0].size:
            kern.foam_trail_kernel(r.origin_x, r.origin_y, r.spacing, *cols, out)
        return out

    def _foam_capsules(self, t: float):
        life = self.foam_lifetime
        cols = [[] for _ in range(10)]
        for (hull, course), path in zip(self._vessels, self._paths):
            half = 0.5 * hull.length
            times = [t]
            for ta, tb, *_ in pieces(path, t, 3.0 * life):
                steps = max(1, int(math.ceil((tb - ta) * _FOAM_PIECES_PER_LIFETIME / life)))
                times.extend(tb - (tb - ta) * np.arange(1, steps + 1) / steps)
            tau = np.array(times)
            age = t - tau
            px, py = course.position(tau)
            head = course.heading_at(tau)
            vx, vy = course.velocity(tau)
            froude = wake_physics.hull_froude_number(np.hypot(vx, vy), hull.length, gravity=self.gravity)
            sx, sy = px - half * np.cos(head), py - half * np.sin(head)
            width = 0.5 * hull.beam * np.sqrt(1.0 + age / life)
            strength = np.exp(-age / life) * np.minimum(1.0, froude / 0.2)
            for i in range(tau.size - 1):
                row = (sx[i], sy[i], sx[i + 1], sy[i + 1], width[i], width[i + 1], strength[i], strength[i + 1])
                for col, value in zip(cols, row):
                    col.append(value)
            bow = float(np.clip((froude[0] - 0.3) / 0.3, 0.0, 1.0))
            if bow > 0:
                row = (px[0] + half * math.cos(head[0]), py[0] + half * math.sin(head[0]), px[0], py[0],
                       0.5 * hull.beam * (1 + bow), 0.5 * hull.beam * (1 + bow), bow, bow)
                for col, value in zip(cols, row):
                    col.append(value)
        return [np.array(col, dtype=np.float64) for col in cols[:8]]

    # -- probes ----------------------------------------------------------------------------

    def surface_at(self, x: ArrayLike, y: ArrayLike, t: ArrayLike, *, exclude: int | None = None) -> SurfacePoints:
        """The wake alone at rest positions (x, y) and times t, by exact sums over the lattice.

        Broadcast like ``probes.surface_at``. The points are not inverted through the wake's
        small lateral displacement: ``rest`` is (x, y), ``residual`` and ``iterations`` 0.
        ``exclude`` leaves out vessel number ``exclude``'s own wake. Outside the region there
        is no wake (displacement, velocity and rise rate 0, normal up, Jacobian 1), as in the
        maps: the lattice's sums would read its padding or a periodic image of the wake there.
        """
        from . import _wake_kernels as kern

        if exclude is not None and (isinstance(exclude, bool) or not isinstance(exclude, (int, np.integer))
                                    or not 0 <= exclude < len(self._vessels)):
            raise ValueError(f"exclude: {exclude!r} is not allowed; allowed: None or a vessel number 0 … {len(self._vessels) - 1}")
        xs, ys, ts = np.broadcast_arrays(*(np.asarray(v, dtype=np.float64) for v in (x, y, t)))
        shape = xs.shape
        if not (np.all(np.isfinite(xs)) and np.all(np.isfinite(ys)) and np.all(np.isfinite(ts))):
            raise ValueError("x, y, t: not all finite; allowed: finite positions in metres and times in seconds")
        flat_t = ts.ravel()
        cols = np.zeros((flat_t.size, len(kern.POINT_COLUMNS)))
        px = xs.ravel() - self.region.origin_x
        py = ys.ravel() - self.region.origin_y
        size = self.region.size
        inside = (px >= 0.0) & (px <= size) & (py >= 0.0) & (py <= size)
        for tv in np.unique(flat_t[inside]):
            sel = inside & (flat_t == tv)
            spec = self._spectra(float(tv), 11, exclude)
            cols[sel] = self._sums_at(spec, np.ascontiguousarray(px[sel]), np.ascontiguousarray(py[sel]))
        c = {name: cols[:, i].reshape(shape) for i, name in enumerate(kern.POINT_COLUMNS)}
        jxx, jyy, jxy = 1.0 + c["dx_x"], 1.0 + c["dy_y"], c["dx_y"]
        sx, sy = c["h_x"], c["h_y"]
        normal = np.stack([jxy * sy - sx * jyy, sx * jxy - jxx * sy, jxx * jyy - jxy * jxy], axis=-1)
        normal /= np.linalg.norm(normal, axis=-1, keepdims=True)
        jac = jxx * jyy - jxy * jxy
        displacement = np.stack([c["dx"], c["dy"], c["h"]], axis=-1)
        velocity = np.stack([c["dx_t"], c["dy_t"], c["h_t"]], axis=-1)
        with np.errstate(divide="ignore", invalid="ignore"):
            eta_x = (jyy * sx - jxy * sy) / jac
            eta_y = (-jxy * sx + jxx * sy) / jac
        rise = velocity[..., 2] - eta_x * velocity[..., 0] - eta_y * velocity[..., 1]
        rest = np.stack([xs, ys], axis=-1)
        return SurfacePoints(rest=rest, residual=np.zeros(shape), iterations=np.zeros(shape, dtype=np.int64),
                             position=displacement + np.concatenate([rest, np.zeros(shape + (1,))], axis=-1),
                             displacement=displacement, normal=normal, velocity=velocity, rise_rate=rise,
                             jacobian=jac)

    def _sums_at(self, spec: NDArray[np.complex64], x: NDArray[np.float64], y: NDArray[np.float64]) -> NDArray[np.float64]:
        """The eleven fields of ``spec`` (half lattice) at points relative to the region's origin.

        Direct sums over the live waves for few points; a type-2 non-uniform FFT of the
        block of live waves (``_nufft.lattice_at_points``, one thread: the same bits on
        any worker) once points × waves pass `NUFFT_ABOVE`.
        """
        from . import _wake_kernels as kern

        mh = self.lattice_size // 2 + 1
        live = np.flatnonzero(spec[0].ravel() != 0)
        out = np.empty((x.size, len(kern.POINT_COLUMNS)))
        if x.size * live.size <= NUFFT_ABOVE:
            iy, ix = np.divmod(live, mh)
            weight = np.where(ix == 0, 1.0, 2.0)
            kern.wake_point_kernel(self._kx[ix], self._ky[iy], weight,
                                   np.ascontiguousarray(spec.reshape(11, -1)[:, live].astype(np.complex128)),
                                   x, y, out)
            return out
        from ._nufft import lattice_at_points

        m = self.lattice_size
        dk = float(self._kx[1])
        reach = min(m // 2 - 1, int(math.ceil(math.sqrt(self._kcut2) / dk)) + 1)
        half = reach + 1  # the block's wave indices −half … half − 1 (FFT layout, even size)
        rows = np.r_[0:half, m - half:m]           # ny = 0 … half−1, −half … −1
        mirror = np.r_[0, m - np.arange(1, half), np.arange(half, 0, -1)]  # the lattice row of −ny
        for f in range(0, 11, 4):
            fields = slice(f, min(f + 4, 11))
            part = spec[fields].astype(np.complex128)
            block = np.zeros((part.shape[0], 2 * half, 2 * half), dtype=np.complex128)
            block[:, :, :half] = part[:, rows, :half]                  # kx ≥ 0
            # kx < 0 from Hermitian symmetry: c(−k) = conj(c(k)); column −nx ↔ lattice column nx
            block[:, :, half + 1:] = np.conj(part[:, mirror][:, :, half - 1:0:-1])
            block[:, :, half] = np.conj(part[:, mirror, half])        # nx = −half
            out[:, fields] = lattice_at_points(block, dk, x, y).real.T
        return out

    # -- notes -------------------------------------------------------------------------------

    def notes(self) -> list[str]:
        """Plain-words warnings about where linear theory or the set-up is doubtful."""
        out = []
        r = self.region
        for v, ((hull, course), speed) in enumerate(zip(self._vessels, self._speeds())):
            label = f"vessel {v}"
            fr = float(wake_physics.hull_froude_number(speed, hull.length, gravity=self.gravity))
            if fr > wake_physics.HULL_FROUDE_LINEAR_LIMIT:
                out.append(f"{label}: hull Froude number U/√(gL) reaches {fr:.2f} (above "
                           f"{wake_physics.HULL_FROUDE_LINEAR_LIMIT}): the hull climbs its bow wave or planes; "
                           "the linear wake is a picture, its visible angle narrows below 19.5° in reality")
            if np.isfinite(self.depth):
                fh = float(wake_physics.depth_froude_number(speed, self.depth, gravity=self.gravity))
                lo, hi = wake_physics.DEPTH_FROUDE_CRITICAL_BAND
                if lo <= fh <= hi:
                    out.append(f"{label}: depth Froude number U/√(gh) reaches {fh:.2f} (near 1): linear theory "
                               "is singular there (the long waves pile up into a solitary bow wave)")
            if hull.draft > 0.2 * hull.length:
                out.append(f"{label}: draft {hull.draft:g} m is more than a fifth of the length: the linear "
                           "patch is far from a slender hull")
            inside = ((course.x >= r.origin_x) & (course.x <= r.origin_x + r.size)
                      & (course.y >= r.origin_y) & (course.y <= r.origin_y + r.size))
            if not inside.all():
                out.append(f"{label}: the course leaves the wake region at sample {int(np.flatnonzero(~inside)[0])}")
            transverse = 2.0 * math.pi * speed**2 / self.gravity  # deep-water transverse wavelength
            if speed > 0 and 0.5 * speed * self.lookback < LOOKBACK_WAVELENGTHS * transverse:
                out.append(f"{label}: a {self.lookback:g} s look-back holds the wake only "
                           f"{0.5 * speed * self.lookback:.0f} m behind the hull, under "
                           f"{LOOKBACK_WAVELENGTHS} of its {transverse:.0f} m transverse waves: the Kelvin "
                           f"pattern cannot form; allowed: a look-back of at least "
                           f"{2.0 * LOOKBACK_WAVELENGTHS * transverse / speed:.0f} s")
        ratio = (self.lattice_size / r.resolution) ** 2
        if ratio > LATTICE_NOTE_RATIO:
            out.append(f"the wake's padded lattice is {self.lattice_size}² texels, {ratio:.1f} times the region's "
                       f"{r.resolution}²: its waves may travel {self._reach:.0f} m in the {self.lookback:g} s look-back; "
                       "a shorter look-back or a region holding more of the course costs less")
        return out


def _clip_to_box(ax: float, ay: float, bx: float, by: float, box) -> tuple[float, float] | None:
    """The fractions (f0, f1) of the segment a → b inside ``box`` (x0, x1, y0, y1), or None (slab clipping)."""
    low, high = 0.0, 1.0
    for a, d, lo, hi in ((ax, bx - ax, box[0], box[1]), (ay, by - ay, box[2], box[3])):
        if d == 0.0:
            if not lo <= a <= hi:
                return None
            continue
        f0, f1 = (lo - a) / d, (hi - a) / d
        if f0 > f1:
            f0, f1 = f1, f0
        low, high = max(low, f0), min(high, f1)
        if low > high:
            return None
    return low, high


def _check_time(t) -> float:
    try:
        value = float(t)
    except (TypeError, ValueError):
        raise ValueError(f"t: {t!r} is not allowed; allowed: a finite number of seconds") from None
    if not math.isfinite(value):
        raise ValueError(f"t: {t!r} is not allowed; allowed: a finite number of seconds")
    return value


def combine(sea: SurfacePoints, wake: SurfacePoints) -> SurfacePoints:
    """Sea + wake at the same points, to first order in the wake.

    Displacements, velocities and rise rates add; the slopes of the two displaced surfaces
    add (∇η = −(n_x, n_y)/n_z), giving the normal; the Jacobian is J_sea + J_wake − 1.
    ``rest``, ``residual`` and ``iterations`` are the sea's (evaluate the wake at
    ``sea.rest``).
    """
    slope = -sea.normal[..., :2] / sea.normal[..., 2:] - wake.normal[..., :2] / wake.normal[..., 2:]
    normal = np.concatenate([-slope, np.ones(slope.shape[:-1] + (1,))], axis=-1)
    normal /= np.linalg.norm(normal, axis=-1, keepdims=True)
    return SurfacePoints(rest=sea.rest, residual=sea.residual, iterations=sea.iterations,
                         position=sea.position + wake.displacement, displacement=sea.displacement + wake.displacement,
                         normal=normal, velocity=sea.velocity + wake.velocity,
                         rise_rate=sea.rise_rate + wake.rise_rate, jacobian=sea.jacobian + wake.jacobian - 1.0)
