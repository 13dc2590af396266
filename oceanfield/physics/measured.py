"""A measured sea: a wave record's frequency spectrum and directions as a sea-state component.

Knows nothing of lattices, tiles or files: the arrays come from a reader above (a buoy's
table, a hindcast's frequency–direction spectrum) and the lattice samples the component
like a parametric one.

A record gives the variance density E(f) in m²/Hz at rising frequencies f (Hz), each the
centre of its band (the edges half-way to the neighbours; the end bands as wide as the
step to their one neighbour, as buoy archives and wavespectra count them). Its directions
come as one of:

- the first four Fourier coefficients a1, b1, a2, b2 of the directional distribution per
  frequency (Longuet-Higgins, Cartwright & Smith 1963), read into a distribution by the
  Maximum Entropy Method (Lygre & Krogstad 1986) or by a cos-2s fitted to the
  first-order pair;
- a mean direction and a directional spread per frequency (a cos-2s of that spread,
  Kuik et al. 1988);
- a full frequency–direction spectrum E(f, θ).

Directions are converted once, here, from the record's compass frame (degrees clockwise
from north; waves *coming from* or *going to*) to ours (radians counter-clockwise from
the tile's +x, direction of travel), given where north lies on the tile.

The component's S(ω) interpolates E(f) linearly between the measured frequencies and
holds each end value over the outer half of its band, which integrates to exactly the
record's variance Σ E_i Δf_i (derived: the trapezoids plus the two half bands give each
value its band width). Beyond the outer band edges there is no energy unless a tail is
asked for: E(f) = E_N (f/f_e)^−n above the top edge f_e, with n = 4 or 5. D(θ; f) is
tabulated per measured frequency on a direction grid and interpolated linearly in θ
(periodic) and f; each tabulated row integrates to 1 by the periodic trapezoid rule, which
the linear interpolant integrates exactly, so D integrates to 1 at every frequency.

References
----------
Longuet-Higgins, M. S., Cartwright, D. E. & Smith, N. D. (1963). Observations of the
directional spectrum of sea waves using the motions of a floating buoy. *Ocean Wave
Spectra*, Prentice-Hall, 111–136.
Lygre, A. & Krogstad, H. E. (1986). Maximum entropy estimation of the directional
distribution in ocean wave spectra. *J. Phys. Oceanogr.* 16(12), 2052–2060, eqs 10–13
(both exponentials of eq. 13 negative: the printed signs are a typo, as buoy-processing
code notes; the closed form confirmed against the documentation of Sofar Ocean's
ocean-science-utilities, ``wavespectra.estimators.mem``).
Simanesew, A. W., Krogstad, H. E., Trulsen, K. & Nieto Borge, J. C. (2018). Bimodality of
directional distributions in ocean wave spectra. *J. Atmos. Oceanic Technol.* 35, 365–384
(the maximum entropy methods split peaks: MEM of a cos-2s's moments has two peaks either
side of the mean, at ±23° for s = 10; derived here and tested).
Kuik, A. J., van Vledder, G. Ph. & Holthuijsen, L. H. (1988). A method for the routine
analysis of pitch-and-roll buoy wave data. *J. Phys. Oceanogr.* 18, 1020–1034.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .spreading import cos2s, wrap_angle

__all__ = [
    "RecordError",
    "TAILS",
    "DIRECTION_FRAMES",
    "MeasuredComponent",
    "tile_direction",
    "maximum_entropy",
    "cos2s_from_moments",
    "mean_direction_and_spread",
    "measured_from_moments",
    "measured_from_mean_spread",
    "measured_from_frequency_direction",
]

#: Spectral tails beyond the measured range: name → power n of E ∝ f^−n (None: no tail).
TAILS: dict[str, int | None] = {"none": None, "f-4": 4, "f-5": 5}

#: A record's direction frames: compass degrees clockwise from north, waves coming from
#: (the nautical convention of buoys and wave models) or going to.
DIRECTION_FRAMES = ("coming_from", "going_to")

#: Direction nodes per turn for distributions built from coefficients (0.5°).
_DIRECTION_NODES = 720
_TWO_PI = 2.0 * math.pi


class RecordError(ValueError):
    """A record that is not a usable spectrum; ``index`` is the offending frequency's
    position (0-based, None for the whole record) and ``column`` the quantity at fault,
    so that a reader can name the file's row."""

    def __init__(self, message: str, *, index: int | None = None, column: str | None = None) -> None:
        super().__init__(message)
        self.index, self.column = index, column


# -- directions ---------------------------------------------------------------------------


def tile_direction(bearing: ArrayLike, *, north: float, frame: str = "coming_from") -> NDArray[np.float64]:
    """Compass directions (radians clockwise from north) as our directions of travel.

    Parameters
    ----------
    bearing : array_like
        Radians clockwise from north, in the record's ``frame``.
    north : float
        Where north lies on the tile, radians counter-clockwise from +x.
    frame : str
        ``coming_from`` (nautical: where the waves come from) or ``going_to``.

    Returns
    -------
    ndarray
        Radians counter-clockwise from +x, direction the waves travel towards, in (−π, π].
    """
    bearing = np.asarray(bearing, dtype=np.float64)
    towards = bearing + math.pi if frame == "coming_from" else bearing
    # Clockwise from north is counter-clockwise from north negated.
    return wrap_angle(north - towards)


def maximum_entropy(theta: ArrayLike, a1: ArrayLike, b1: ArrayLike, a2: ArrayLike, b2: ArrayLike) -> NDArray[np.float64]:
    """Directional distribution of maximum entropy for four Fourier coefficients (Lygre & Krogstad 1986).

    With c1 = a1 + i b1, c2 = a2 + i b2 (eq. 10),
    φ1 = (c1 − c2 c1*) / (1 − |c1|²), φ2 = c2 − c1 φ1 and

        D(θ) = (1 − φ1 c1* − φ2 c2*) / (2π |1 − φ1 e^{−iθ} − φ2 e^{−2iθ}|²)   (eq. 13),

    both exponentials negative (the paper prints them positive, a typo). D reproduces the
    four coefficients exactly and integrates to 1. It is sharper than the sea it comes
    from and may split a single peak in two (Simanesew et al. 2018): the moments of a cos-2s
    with s = 10 give two peaks 23° either side of the mean.

    Parameters
    ----------
    theta : array_like
        Directions in radians, in the frame the coefficients are defined in
        (a1 = ∫D cos θ dθ, b1 = ∫D sin θ dθ, a2 = ∫D cos 2θ dθ, b2 = ∫D sin 2θ dθ).
    a1, b1, a2, b2 : array_like
        Coefficients, broadcastable with ``theta``; |c1| < 1 and |φ2| ≤ 1 (a distribution
        exists).

    Returns
    -------
    ndarray
        D in 1/rad.
    """
    c1 = np.asarray(a1, dtype=np.float64) + 1j * np.asarray(b1, dtype=np.float64)
    c2 = np.asarray(a2, dtype=np.float64) + 1j * np.asarray(b2, dtype=np.float64)
    phi1 = (c1 - c2 * np.conj(c1)) / (1.0 - np.abs(c1) ** 2)
    phi2 = c2 - c1 * phi1
    numerator = np.real(1.0 - phi1 * np.conj(c1) - phi2 * np.conj(c2))
    theta = np.asarray(theta, dtype=np.float64)
    denominator = np.abs(1.0 - phi1 * np.exp(-1j * theta) - phi2 * np.exp(-2j * theta)) ** 2
    return numerator / (_TWO_PI * denominator)


def cos2s_from_moments(theta: ArrayLike, a1: ArrayLike, b1: ArrayLike) -> NDArray[np.float64]:
    """The cos-2s distribution with the first-order moments a1, b1 (Longuet-Higgins et al. 1963).

    Mean direction atan2(b1, a1); exponent s = r1/(1 − r1) from r1 = √(a1² + b1²) = s/(s+1).
    ``theta`` in radians in the coefficients' frame; returns D in 1/rad.
    """
    a1 = np.asarray(a1, dtype=np.float64)
    b1 = np.asarray(b1, dtype=np.float64)
    r1 = np.hypot(a1, b1)
    return cos2s(np.asarray(theta) - np.arctan2(b1, a1), r1 / (1.0 - r1))


def mean_direction_and_spread(a1: ArrayLike, b1: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Mean direction atan2(b1, a1) and spread √(2(1 − r1)) in radians (Kuik et al. 1988)."""
    a1 = np.asarray(a1, dtype=np.float64)
    b1 = np.asarray(b1, dtype=np.float64)
    return np.arctan2(b1, a1), np.sqrt(np.maximum(2.0 * (1.0 - np.hypot(a1, b1)), 0.0))


def _first_moments(theta: NDArray[np.float64], table: NDArray[np.float64]) -> tuple[NDArray, NDArray]:
    """(a1, b1) per row of a tabulated D: periodic trapezoid sums of D cos θ and D sin θ.

    The sums are those of the rectangle rule wavespectra uses on a regular grid; the
    linear interpolant the lattice samples has moments smaller by sinc²(Δθ/2) (0.25 %
    of r1 at 10° nodes, derived).
    """
    weights = _periodic_weights(theta)
    return (table * (weights * np.cos(theta))).sum(axis=-1), (table * (weights * np.sin(theta))).sum(axis=-1)


def _periodic_weights(theta: NDArray[np.float64]) -> NDArray[np.float64]:
    """Trapezoid weights of sorted periodic nodes θ (radians): half the gaps either side."""
    gaps = np.diff(np.append(theta, theta[0] + _TWO_PI))
    return 0.5 * (gaps + np.roll(gaps, 1))


# -- the component ------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class MeasuredComponent:
    """A wave system given by a record: E(f) and D(θ; f) as tables (see the module notes).

    Build one with :func:`measured_from_moments`, :func:`measured_from_mean_spread` or
    :func:`measured_from_frequency_direction`, which check the record. It answers the
    same questions as a parametric :class:`~oceanfield.physics.seastate.Component`, so a
    :class:`~oceanfield.physics.seastate.SeaState` evaluates it like one.

    Parameters
    ----------
    frequency : ndarray, shape (N,)
        Rising frequencies in Hz, the centres of the record's bands.
    density : ndarray, shape (N,)
        Variance density E(f) in m²/Hz, ≥ 0.
    directions : ndarray, shape (M,)
        Sorted directions of travel in radians counter-clockwise from +x, in (−π, π].
    distribution : ndarray, shape (N, M)
        D(θ; f) in 1/rad on ``directions``, each row integrating to 1 (periodic trapezoid).
    tail : str
        One of :data:`TAILS`.
    label : str
        A name for reports.
    """

    frequency: NDArray[np.float64]
    density: NDArray[np.float64]
    directions: NDArray[np.float64]
    distribution: NDArray[np.float64]
    tail: str = "none"
    label: str = "record"
    wind_speed: None = field(default=None, init=False)
    spectrum: str = field(default="record", init=False)

    # -- what the sea state asks of a component ---------------------------------------
    @property
    def edges(self) -> tuple[float, float]:
        """Lowest and highest band edges in Hz: the measured range."""
        f = self.frequency
        if f.size == 1:
            return float(f[0]) * 0.5, float(f[0]) * 1.5
        return float(f[0] - 0.5 * (f[1] - f[0])), float(f[-1] + 0.5 * (f[-1] - f[-2]))

    @property
    def peak_frequency(self) -> float:
        """Angular frequency of the largest measured density, rad/s."""
        return _TWO_PI * float(self.frequency[int(np.argmax(self.density))])

    @property
    def direction(self) -> float:
        """Mean direction of travel over the record, radians counter-clockwise from +x."""
        a1, b1 = _first_moments(self.directions, self.distribution)
        weights = self.density * _band_widths(self.frequency)
        return float(math.atan2(float(np.sum(weights * b1)), float(np.sum(weights * a1))))

    @property
    def frequency_breaks(self) -> NDArray[np.float64]:
        """Angular frequencies (rad/s) where S(ω) has a kink or a step: nodes and band edges."""
        low, high = self.edges
        return _TWO_PI * np.concatenate(([low], self.frequency, [high]))

    def variance(self) -> float:
        """The record's variance Σ E_i Δf_i in m² (without a tail)."""
        return float(np.sum(self.density * _band_widths(self.frequency)))

    def spectral_density(
        self, omega: NDArray[np.float64], k: NDArray[np.float64] | None = None, depth: float = np.inf,
        gravity: float = 0.0, group_speed: NDArray[np.float64] | None = None,
    ) -> NDArray[np.float64]:
        """S(ω) = E(f)/2π in m²·s/rad at angular frequencies ``omega`` (rad/s).

        ``k``, ``depth``, ``gravity`` and ``group_speed`` are accepted for the sea state's
        interface; a record's spectrum is the one measured, whatever the depth.
        """
        f = np.asarray(omega, dtype=np.float64) / _TWO_PI
        low, high = self.edges
        inside = np.interp(f, self.frequency, self.density)  # flat beyond the end nodes
        value = np.where((f >= low) & (f <= high), inside, 0.0)
        power = TAILS[self.tail]
        if power is not None:
            with np.errstate(divide="ignore", over="ignore"):
                tail = self.density[-1] * (np.maximum(f, high) / high) ** -power
            value = np.where(f > high, tail, value)
        return value / _TWO_PI

    def directional_density(
        self, theta: ArrayLike, omega: ArrayLike, gravity: float = 0.0, k: ArrayLike | None = None
    ) -> NDArray[np.float64]:
        """D(θ; ω) in 1/rad, θ the absolute direction of travel in radians.

        Bilinear in (f, θ) on the table, periodic in θ; below the first and above the
        last measured frequency the end rows hold. ``gravity`` and ``k`` are accepted for the sea
        state's interface.
        """
        theta = np.asarray(theta, dtype=np.float64)
        omega = np.asarray(omega, dtype=np.float64)
        shape = np.broadcast_shapes(theta.shape, omega.shape)
        col0, col1, wt = self._direction_weights(theta.ravel())
        i0, i1, wf = self._frequency_weights(omega.ravel())
        table = self.distribution
        if theta.size * omega.size == math.prod(shape):
            # An outer product (a grid of directions by a grid of frequencies): interpolate
            # the rows in frequency once, then in direction, then lay the grid out.
            rows = table[i0] * (1.0 - wf)[:, None] + table[i1] * wf[:, None]
            grid = rows[:, col0] * (1.0 - wt) + rows[:, col1] * wt
            at_omega = np.arange(omega.size).reshape(omega.shape)
            at_theta = np.arange(theta.size).reshape(theta.shape)
            return grid[np.broadcast_to(at_omega, shape), np.broadcast_to(at_theta, shape)]
        col0, col1, wt = (np.broadcast_to(a.reshape(theta.shape), shape).ravel() for a in (col0, col1, wt))
        i0, i1, wf = (np.broadcast_to(a.reshape(omega.shape), shape).ravel() for a in (i0, i1, wf))
        low = table[i0, col0] * (1.0 - wt) + table[i0, col1] * wt
        high = table[i1, col0] * (1.0 - wt) + table[i1, col1] * wt
        return (low * (1.0 - wf) + high * wf).reshape(shape)

    def _direction_weights(self, theta: NDArray[np.float64]) -> tuple[NDArray, NDArray, NDArray]:
        """Columns either side of each direction and the weight of the second (periodic)."""
        t = wrap_angle(theta)
        nodes = self.directions
        ext = np.concatenate(([nodes[-1] - _TWO_PI], nodes, [nodes[0] + _TWO_PI]))
        j = np.clip(np.searchsorted(ext, t, side="right") - 1, 0, ext.size - 2)
        weight = (t - ext[j]) / (ext[j + 1] - ext[j])
        return (j - 1) % nodes.size, j % nodes.size, weight

    def _frequency_weights(self, omega: NDArray[np.float64]) -> tuple[NDArray, NDArray, NDArray]:
        """Rows either side of each frequency and the weight of the second (end rows held)."""
        freqs = self.frequency
        f = np.clip(omega / _TWO_PI, freqs[0], freqs[-1])
        i0 = np.clip(np.searchsorted(freqs, f, side="right") - 1, 0, freqs.size - 2)
        return i0, i0 + 1, (f - freqs[i0]) / (freqs[i0 + 1] - freqs[i0])

    # -- per-frequency directions -------------------------------------------------------
    def mean_directions(self) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Mean direction of travel and directional spread per measured frequency, radians
        (Kuik et al. 1988, from the tabulated distribution)."""
        return mean_direction_and_spread(*_first_moments(self.directions, self.distribution))


def _band_widths(frequency: NDArray[np.float64]) -> NDArray[np.float64]:
    """Width in Hz of each measured band: half-way to the neighbours, the end bands one step."""
    if frequency.size == 1:
        return np.ones(1) * frequency[0]
    return np.gradient(frequency)


# -- building one from a record -----------------------------------------------------------


def _finite(name: str, values: ArrayLike, size: int | None = None) -> NDArray[np.float64]:
    """``values`` as a flat float array; RecordError at the first value that is not finite
    or when there are not ``size`` of them."""
    values = np.asarray(values, dtype=np.float64).ravel()
    bad = np.flatnonzero(~np.isfinite(values))
    if bad.size:
        raise RecordError(f"{name} is {values[bad[0]]!r}; allowed: a finite number", index=int(bad[0]), column=name)
    if size is not None and values.size != size:
        raise RecordError(f"{name} has {values.size} values for {size} frequencies", column=name)
    return values


def _check_spectrum(frequency: ArrayLike, density: ArrayLike, tail: str) -> tuple[NDArray, NDArray]:
    """Checked float arrays of a record's frequencies and densities."""
    if tail not in TAILS:
        raise ValueError(f"tail: {tail!r} is not allowed; allowed: {', '.join(TAILS)}")
    f = _finite("frequency", frequency)
    e = _finite("density", density, f.size)
    if f.size < 2:
        raise RecordError(f"holds {f.size} frequencies; a spectrum needs at least 2")
    if f[0] <= 0:
        raise RecordError(f"frequency {f[0]:g} Hz is not above 0", index=0, column="frequency")
    steps = np.flatnonzero(np.diff(f) <= 0)
    if steps.size:
        i = int(steps[0]) + 1
        what = "repeats" if f[i] == f[i - 1] else "is below"
        raise RecordError(
            f"frequency {f[i]:g} Hz {what} the one before ({f[i - 1]:g} Hz); frequencies must rise",
            index=i, column="frequency",
        )
    if f[1] >= 3.0 * f[0]:
        raise RecordError(
            f"the first band, centred on {f[0]:g} Hz and as wide as the step to {f[1]:g} Hz, would reach "
            f"0 Hz; allowed: a second frequency below three times the first", index=1, column="frequency",
        )
    negative = np.flatnonzero(e < 0)
    if negative.size:
        i = int(negative[0])
        raise RecordError(f"density {e[i]:g} m²/Hz is negative; allowed: 0 or more", index=i, column="density")
    if not np.any(e > 0):
        raise RecordError("every density is 0: the record holds no waves")
    return f, e


def _check_coefficients(a1, b1, a2, b2, *, size: int, realisable: bool) -> tuple[NDArray, ...]:
    """Checked coefficient arrays; ``realisable`` also asks that some distribution has all four."""
    arrays = [None if c is None else _finite(name, c, size) for name, c in zip(("a1", "b1", "a2", "b2"), (a1, b1, a2, b2))]
    r1 = np.hypot(arrays[0], arrays[1])
    over = np.flatnonzero(r1 >= 1.0)
    if over.size:
        i = int(over[0])
        raise RecordError(
            f"r1 = √(a1² + b1²) = {r1[i]:.4g} is not below 1 (a1 {arrays[0][i]:g}, b1 {arrays[1][i]:g}); "
            f"no spread distribution has it", index=i, column="a1",
        )
    if arrays[2] is not None:
        r2 = np.hypot(arrays[2], arrays[3])
        over = np.flatnonzero(r2 > 1.0)
        if over.size:
            i = int(over[0])
            raise RecordError(
                f"r2 = √(a2² + b2²) = {r2[i]:.4g} is above 1 (a2 {arrays[2][i]:g}, b2 {arrays[3][i]:g})",
                index=i, column="a2",
            )
    if arrays[2] is not None and realisable:
        # A distribution with these four moments exists only if the second reflection
        # coefficient φ2 = (c2 − c1²)/(1 − |c1|²) has |φ2| ≤ 1 (derived from Lygre &
        # Krogstad 1986; otherwise D of their eq. 13 turns negative).
        c1 = arrays[0] + 1j * arrays[1]
        c2 = arrays[2] + 1j * arrays[3]
        phi2 = np.abs((c2 - c1**2) / (1.0 - np.abs(c1) ** 2))
        over = np.flatnonzero(phi2 > 1.0 + 1e-9)
        if over.size:
            i = int(over[0])
            raise RecordError(
                f"a1, b1, a2, b2 ({arrays[0][i]:g}, {arrays[1][i]:g}, {arrays[2][i]:g}, {arrays[3][i]:g}) "
                f"are not the moments of any distribution (|c2 − c1²| > 1 − |c1|²)", index=i, column="a2",
            )
    return tuple(arrays)


def _table_in_tile_frame(
    bearings: NDArray[np.float64], rows: NDArray[np.float64], north: float, frame: str
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Direction nodes (compass radians) and rows of D → sorted tile directions and normalised rows."""
    theta = tile_direction(bearings, north=north, frame=frame)
    order = np.argsort(theta, kind="stable")
    theta, rows = theta[order], rows[:, order]
    if np.any(np.diff(theta) <= 0):
        raise RecordError("two directions of the record fall on the same direction")
    totals = rows @ _periodic_weights(theta)
    flat = ~(totals > 0)
    rows = np.where(flat[:, None], 1.0 / _TWO_PI, rows / np.where(flat, 1.0, totals)[:, None])
    return theta, rows


def _compass_grid() -> NDArray[np.float64]:
    return np.arange(_DIRECTION_NODES) * (_TWO_PI / _DIRECTION_NODES)


def measured_from_moments(
    frequency: ArrayLike,
    density: ArrayLike,
    a1: ArrayLike,
    b1: ArrayLike,
    a2: ArrayLike | None = None,
    b2: ArrayLike | None = None,
    *,
    method: str = "maximum_entropy",
    north: float = 0.5 * math.pi,
    frame: str = "coming_from",
    tail: str = "none",
    label: str = "record",
) -> MeasuredComponent:
    """A measured component from E(f) and the directional Fourier coefficients per frequency.

    The coefficients are those of the distribution in the record's compass frame
    (a1 = ∫D cos α dα, b1 = ∫D sin α dα with α clockwise from north, in ``frame``), as
    directional buoys report them (Longuet-Higgins et al. 1963). ``method`` is
    ``maximum_entropy`` (Lygre & Krogstad 1986; needs a2, b2) or ``cos2s`` (a cos-2s with
    the first-order moments). ``north`` is where north lies on the tile, radians
    counter-clockwise from +x (π/2: north is +y).

    Raises
    ------
    RecordError
        For unsorted or repeated frequencies, negative densities, values that are not
        finite, or coefficients no distribution has; ``index`` names the frequency.
    """
    f, e = _check_spectrum(frequency, density, tail)
    if method not in ("maximum_entropy", "cos2s"):
        raise ValueError(f"method: {method!r} is not allowed; allowed: maximum_entropy, cos2s")
    if (a2 is None) != (b2 is None):
        raise RecordError("a2 and b2 come together: give both or neither", column="a2" if a2 is None else "b2")
    if method == "maximum_entropy" and (a2 is None or b2 is None):
        raise RecordError("the maximum entropy method needs a2 and b2 as well as a1 and b1", column="a2")
    if frame not in DIRECTION_FRAMES:
        raise ValueError(f"frame: {frame!r} is not allowed; allowed: {', '.join(DIRECTION_FRAMES)}")
    ca1, cb1, ca2, cb2 = _check_coefficients(a1, b1, a2, b2, size=f.size, realisable=method == "maximum_entropy")
    alpha = _compass_grid()
    if method == "maximum_entropy":
        rows = maximum_entropy(alpha[None, :], ca1[:, None], cb1[:, None], ca2[:, None], cb2[:, None])
    else:
        rows = cos2s_from_moments(alpha[None, :], ca1[:, None], cb1[:, None])
    theta, rows = _table_in_tile_frame(alpha, rows, north, frame)
    return MeasuredComponent(f, e, theta, rows, tail=tail, label=label)


def measured_from_mean_spread(
    frequency: ArrayLike,
    density: ArrayLike,
    direction: ArrayLike,
    spread: ArrayLike,
    *,
    north: float = 0.5 * math.pi,
    frame: str = "coming_from",
    tail: str = "none",
    label: str = "record",
) -> MeasuredComponent:
    """A measured component from E(f), a mean direction and a spread per frequency.

    ``direction`` in radians clockwise from north in ``frame``; ``spread`` the directional
    spread σ in radians (above 0, below √2: Kuik et al. 1988), read as a cos-2s with
    s = 2/σ² − 1.
    """
    f, e = _check_spectrum(frequency, density, tail)
    d = _finite("direction", direction, f.size)
    sigma = _finite("spread", spread, f.size)
    out = np.flatnonzero(~((sigma > 0) & (sigma < math.sqrt(2.0))))
    if out.size:
        i = int(out[0])
        raise RecordError(
            f"spread {math.degrees(sigma[i]):g}° is out of range; allowed: above 0 and below 81° (√2 rad)",
            index=i, column="spread",
        )
    r1 = 1.0 - 0.5 * sigma**2
    return measured_from_moments(
        f, e, r1 * np.cos(d), r1 * np.sin(d), method="cos2s", north=north, frame=frame, tail=tail, label=label
    )


def measured_from_frequency_direction(
    frequency: ArrayLike,
    bearings: ArrayLike,
    density: ArrayLike,
    *,
    north: float = 0.5 * math.pi,
    frame: str = "coming_from",
    tail: str = "none",
    label: str = "record",
) -> MeasuredComponent:
    """A measured component from a frequency–direction spectrum E(f, α).

    Parameters
    ----------
    frequency : array_like, shape (N,)
        Hz, rising.
    bearings : array_like, shape (M,)
        Directions in radians clockwise from north, in ``frame``, all different (any order).
    density : array_like, shape (N, M)
        E(f, α) in m²/Hz per radian, ≥ 0.

    E(f) is the periodic trapezoid integral over the directions (Σ E Δα on a regular grid,
    as wavespectra integrates), and D(α; f) = E(f, α)/E(f).
    """
    f = np.asarray(frequency, dtype=np.float64).ravel()
    alpha = np.mod(np.asarray(bearings, dtype=np.float64).ravel(), _TWO_PI)
    table = np.asarray(density, dtype=np.float64)
    if table.shape != (f.size, alpha.size):
        raise RecordError(f"the spectrum's shape {table.shape} is not (frequencies {f.size}, directions {alpha.size})")
    if alpha.size < 3:
        raise RecordError(f"holds {alpha.size} directions; a directional spectrum needs at least 3")
    bad = np.argwhere(~np.isfinite(table))
    if bad.size:
        i, j = (int(v) for v in bad[0])
        raise RecordError(f"density at {math.degrees(alpha[j]):g}° is {table[i, j]!r}; allowed: a finite number",
                          index=i, column="density")
    negative = np.argwhere(table < 0)
    if negative.size:
        i, j = (int(v) for v in negative[0])
        raise RecordError(f"density at {math.degrees(alpha[j]):g}° is {table[i, j]:g}, negative; allowed: 0 or more",
                          index=i, column="density")
    order = np.argsort(alpha)
    sorted_alpha = alpha[order]
    if np.any(np.diff(sorted_alpha) <= 0):
        raise RecordError("a direction is listed twice", column="direction")
    one_d = table[:, order] @ _periodic_weights(sorted_alpha)
    f, e = _check_spectrum(f, one_d, tail)
    theta, rows = _table_in_tile_frame(alpha, table, north, frame)
    return MeasuredComponent(f, e, theta, rows, tail=tail, label=label)
