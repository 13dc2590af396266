"""A sea state: a sum of wave components sharing depth, gravity and surface tension.

Knows nothing of lattices, tiles or files: the surface samples a sea state on its lattice.

Each :class:`Component` is one frequency spectrum with its own direction and spreading (a
wind sea, a swell). Build one from wind speed and fetch (:func:`wind_sea`), from
significant wave height and peak period (:func:`height_period`) or from a Beaufort force
(:func:`beaufort_sea`). :class:`SeaState` evaluates the directional spectrum on any
wavenumber lattice and the integral statistics from spectral moments.

References
----------
WMO (1998). *Guide to Wave Analysis and Forecasting*, WMO-No. 702 (spectral moments, Hm0).
WMO Beaufort scale, as reproduced by the UK Met Office (wind speeds and wave heights).
DNV (2010). *Environmental Conditions and Environmental Loads*, DNV-RP-C205, §3.5.5.4
(significant steepness; from memory).
Kuik, van Vledder & Holthuijsen (1988), *JPO* 18 (mean direction and directional spread).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import spectra
from ._brent import bounded_minimum
from .constants import GRAVITY, SEAWATER_DENSITY
from .dispersion import angular_frequency, check_depth, group_velocity, phase_velocity, wavenumber
from .spreading import SPREADING, cos2s_exponent, elfouhaily_delta, spreading, wrap_angle

__all__ = [
    "BEAUFORT",
    "Component",
    "SeaState",
    "SeaStatistics",
    "wind_sea",
    "height_period",
    "beaufort_sea",
    "beaufort_wind_speed",
    "beaufort_force",
    "beaufort_force_for_height",
]

#: WMO Beaufort scale: force → (lowest, highest wind speed at 10 m in m/s, probable and
#: maximum wave height in m), as reproduced by the UK Met Office. Force 12 has no upper
#: wind limit and no maximum height (None); force 0 has no waves.
BEAUFORT: dict[int, tuple[float, float | None, float, float | None]] = {
    0: (0.0, 0.2, 0.0, 0.0),
    1: (0.3, 1.5, 0.1, 0.1),
    2: (1.6, 3.3, 0.2, 0.3),
    3: (3.4, 5.4, 0.6, 1.0),
    4: (5.5, 7.9, 1.0, 1.5),
    5: (8.0, 10.7, 2.0, 2.5),
    6: (10.8, 13.8, 3.0, 4.0),
    7: (13.9, 17.1, 4.0, 5.5),
    8: (17.2, 20.7, 5.5, 7.5),
    9: (20.8, 24.4, 7.0, 10.0),
    10: (24.5, 28.4, 9.0, 12.5),
    11: (28.5, 32.6, 11.5, 16.0),
    12: (32.7, None, 14.0, None),
}

_SPECTRUM_NAMES = tuple(spectra.SPECTRA)
_MAX_WIND = 75.0  # m/s, beyond the strongest tropical cyclones (common practice bound)
_MAX_FETCH = 5.0e6  # m, 5000 km: larger than any ocean basin's wind field (common practice)
_MAX_ALPHA = 1.0e3  # Phillips constant; real seas hold 1e-3–5e-2 (bound, common practice)
_MOMENT_LOW, _MOMENT_HIGH, _MOMENT_PANELS = 0.02, 2000.0, 600
_GAUSS_NODES, _GAUSS_WEIGHTS = np.polynomial.legendre.leggauss(8)


def _check_number(name: str, value: object, low: float, high: float, *, low_open: bool = True) -> float:
    """Return ``value`` as float or raise ValueError naming it and the allowed range."""
    if isinstance(value, bool):
        raise ValueError(f"{name}: {value!r} is not a number; allowed: {_range_text(low, high, low_open)}")
    try:
        number = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise ValueError(f"{name}: {value!r} is not a number; allowed: {_range_text(low, high, low_open)}") from None
    above_low = number > low if low_open else number >= low
    if not (math.isfinite(number) and above_low and number <= high):
        raise ValueError(f"{name}: {value!r} is out of range; allowed: {_range_text(low, high, low_open)}")
    return number


def _range_text(low: float, high: float, low_open: bool) -> str:
    return f"{'>' if low_open else '>='} {low:g} and <= {high:g}"


def beaufort_wind_speed(force: int) -> float:
    """Wind speed at 10 m in m/s that stands for a Beaufort force: the middle of its WMO range.

    Force 12 has no upper limit; it is taken as its lower limit plus half the width of
    force 11's range (34.75 m/s).
    """
    number = _check_number("beaufort", force, 0, 12, low_open=False)
    if number != int(number):
        raise ValueError(f"beaufort: {force!r} is not allowed; allowed: an integer force from 0 to 12")
    low, high, _, _ = BEAUFORT[int(number)]
    if high is None:
        width = BEAUFORT[11][1] - BEAUFORT[11][0]  # type: ignore[operator]
        return low + 0.5 * width
    return 0.5 * (low + high)


def beaufort_force(wind_speed: float) -> int:
    """Beaufort force of a wind speed at 10 m in m/s (WMO scale).

    The table's ranges are printed to 0.1 m/s with gaps between them; a speed belongs to
    the force whose printed upper limit it does not exceed by 0.05 m/s or more.
    """
    wind_speed = _check_number("wind_speed", wind_speed, 0.0, _MAX_WIND, low_open=False)
    for force in range(12):
        if wind_speed < BEAUFORT[force][1] + 0.05:  # type: ignore[operator]
            return force
    return 12


def beaufort_force_for_height(hs: float) -> int:
    """The Beaufort force whose WMO probable wave height is closest to ``hs`` (metres).

    Nearest in log height, since the table's steps grow with the force; the table is for
    well-developed open-sea wind waves, so this is a description, not a forecast.
    """
    if hs <= 0.05:
        return 0
    forces = range(1, 13)
    return min(forces, key=lambda f: abs(math.log(hs / BEAUFORT[f][2])))


@dataclass(frozen=True)
class Component:
    """One wave system: a frequency spectrum, a mean direction and a spreading model.

    Parameters
    ----------
    spectrum : str
        One of ``jonswap``, ``pierson_moskowitz``, ``tma``, ``phillips``.
    peak_frequency : float
        Peak angular frequency ωp in rad/s.
    alpha : float
        Phillips constant scaling the spectrum (dimensionless).
    gamma : float
        JONSWAP/TMA peak enhancement (1 for the other models).
    wind_speed : float or None
        Wind speed at 10 m in m/s, when the sea is wind-driven (Phillips needs it; the
        frequency-dependent spreading models use U10/c_p from it).
    direction : float
        Direction the waves travel towards, radians counter-clockwise from +x.
    spreading : str
        One of :data:`oceanfield.physics.spreading.SPREADING`.
    spread_s : float
        Exponent s of the fixed cos-2s model.
    suppress_opposing : bool
        Drop energy travelling more than 90° from ``direction``.
    cutoff_length : float
        Damp waves shorter than about this length in metres by exp(−k²l²) (0 = none).
    label : str
        A name for reports.
    """

    spectrum: str
    peak_frequency: float
    alpha: float
    gamma: float = spectra.JONSWAP_GAMMA
    wind_speed: float | None = None
    direction: float = 0.0
    spreading: str = "cos2s"
    spread_s: float = 10.0
    suppress_opposing: bool = False
    cutoff_length: float = 0.0
    label: str = ""

    def __post_init__(self) -> None:
        if self.spectrum not in spectra.SPECTRA:
            raise ValueError(f"spectrum: {self.spectrum!r} is not a model; allowed: {', '.join(_SPECTRUM_NAMES)}")
        if self.spreading not in SPREADING:
            raise ValueError(f"spreading: {self.spreading!r} is not a model; allowed: {', '.join(SPREADING)}")
        _check_number("peak_frequency", self.peak_frequency, 0.0, 1.0e4)
        _check_number("alpha", self.alpha, 0.0, _MAX_ALPHA)
        _check_number("gamma", self.gamma, 1.0, 10.0, low_open=False)
        _check_number("spread_s", self.spread_s, 0.0, 1.0e6)
        _check_number("cutoff_length", self.cutoff_length, 0.0, 1.0e3, low_open=False)
        _check_number("direction", self.direction, -1.0e6, 1.0e6)
        if self.wind_speed is not None:
            _check_number("wind_speed", self.wind_speed, 0.0, _MAX_WIND)
        if self.spectrum in ("phillips", "elfouhaily") and self.wind_speed is None:
            raise ValueError(f"wind_speed: None is not allowed for the {self.spectrum} spectrum; allowed: > 0 m/s")
        if self.spreading == "elfouhaily" and self.wind_speed is None:
            raise ValueError("wind_speed: None is not allowed for the elfouhaily spreading; allowed: > 0 m/s")

    def spectral_density(
        self,
        omega: NDArray[np.float64],
        k: NDArray[np.float64],
        depth: float,
        gravity: float,
        group_speed: NDArray[np.float64] | None = None,
    ) -> NDArray[np.float64]:
        """S(ω) in m²·s/rad at angular frequencies ``omega`` whose wavenumbers are ``k``.

        ``group_speed`` dω/dk (m/s) at ``k`` converts a wavenumber spectrum (``elfouhaily``)
        to S(ω) = S(k)/c_g; without it deep-water gravity waves are assumed.
        """
        name = self.spectrum
        if name == "elfouhaily":
            assert self.wind_speed is not None
            k = np.asarray(k, dtype=np.float64)
            kk = np.where(k > 0, k, 1.0)
            if group_speed is None:
                group_speed = 0.5 * np.sqrt(gravity / kk)
            value = spectra.elfouhaily(
                kk, wind_speed=self.wind_speed, inverse_wave_age=self.inverse_wave_age(gravity), gravity=gravity
            ) / np.where(k > 0, group_speed, 1.0)
            value = np.where((k > 0) & (np.asarray(omega) > 0), value, 0.0)
        elif name == "phillips":
            assert self.wind_speed is not None
            value = spectra.phillips(omega, wind_speed=self.wind_speed, alpha=self.alpha, gravity=gravity)
        elif name == "pierson_moskowitz":
            value = spectra.pierson_moskowitz(
                omega, peak_frequency=self.peak_frequency, alpha=self.alpha, gravity=gravity
            )
        else:
            value = spectra.jonswap(
                omega, peak_frequency=self.peak_frequency, alpha=self.alpha, gamma=self.gamma, gravity=gravity
            )
            if name == "tma":
                value = value * spectra.depth_factor_from_wavenumber(k, depth)
        if self.cutoff_length > 0:
            value = value * np.exp(-((k * self.cutoff_length) ** 2))
        return value

    def inverse_wave_age(self, gravity: float) -> float:
        """U10/c_p with c_p = g/ωp the deep-water phase speed at the peak (None wind: fully developed)."""
        if self.wind_speed is None:
            from .spreading import DEFAULT_INVERSE_WAVE_AGE

            return DEFAULT_INVERSE_WAVE_AGE
        return self.wind_speed * self.peak_frequency / gravity

    def directional_density(
        self, theta: ArrayLike, omega: ArrayLike, gravity: float, k: ArrayLike | None = None
    ) -> NDArray[np.float64]:
        """D(θ; ω) in 1/rad, θ the absolute direction of travel in radians.

        ``k`` (rad/m) of each ω is needed by the ``elfouhaily`` spreading only; without it
        deep-water gravity waves are assumed (k = ω²/g).
        """
        delta = None
        if self.spreading == "elfouhaily":
            delta = self.elfouhaily_delta(np.asarray(omega) ** 2 / gravity if k is None else k, gravity)
        return spreading(
            self.spreading,
            np.asarray(theta) - self.direction,
            np.asarray(omega) / self.peak_frequency,
            s=self.spread_s,
            inverse_wave_age=self.inverse_wave_age(gravity),
            suppress_opposing=self.suppress_opposing,
            delta=delta,
        )

    def elfouhaily_delta(self, k: ArrayLike, gravity: float) -> NDArray[np.float64]:
        """Δ(k) of the unified spectrum's spreading for this component's wind and wave age."""
        assert self.wind_speed is not None
        k = np.asarray(k, dtype=np.float64)
        kk = np.where(k > 0, k, 1.0)
        omega_c = self.inverse_wave_age(gravity)
        c = spectra.elfouhaily_phase_speed(kk, gravity=gravity)
        c_p = self.wind_speed / omega_c
        friction = spectra.elfouhaily_friction_velocity(self.wind_speed, omega_c, gravity=gravity)
        c_m = spectra.ELFOUHAILY_MINIMUM_PHASE_SPEED
        return elfouhaily_delta(c / c_p, friction / c_m, c_m / c)


@dataclass(frozen=True)
class SeaStatistics:
    """Integral statistics of a sea state from its spectral moments (WMO-No. 702).

    Lengths in metres, periods in seconds, speeds in m/s, angles in radians (counter-
    clockwise from +x, direction of travel).
    """

    m0: float
    hs: float
    tp: float
    tm01: float
    tm02: float
    peak_wavelength: float
    peak_phase_speed: float
    peak_group_speed: float
    mean_direction: float
    directional_spread: float
    significant_steepness: float
    beaufort: int

    def to_dict(self) -> dict[str, float]:
        """Plain dictionary, angles converted to degrees (keys say so)."""
        data = asdict(self)
        data["mean_direction_deg"] = math.degrees(data.pop("mean_direction"))
        data["directional_spread_deg"] = math.degrees(data.pop("directional_spread"))
        return data


@dataclass(frozen=True)
class SeaState:
    """A sea as a sum of components sharing depth and the fluid's properties.

    Parameters
    ----------
    components : tuple of Component
        At least one.
    depth : float
        Water depth in metres (``inf`` = deep).
    gravity : float
        m/s².
    surface_tension : float
        N/m (0 = gravity waves only).
    density : float
        kg/m³.
    """

    components: tuple[Component, ...]
    depth: float = np.inf
    gravity: float = GRAVITY
    surface_tension: float = 0.0
    density: float = SEAWATER_DENSITY
    _cache: dict = field(default_factory=dict, init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "components", tuple(self.components))
        if not self.components:
            raise ValueError("components: an empty list is not allowed; allowed: one or more components")
        check_depth(self.depth)
        _check_number("gravity", self.gravity, 0.0, 1.0e3)
        _check_number("surface_tension", self.surface_tension, 0.0, 1.0, low_open=False)
        _check_number("density", self.density, 0.0, 1.0e5)

    # -- dispersion with this sea's shared physics -----------------------------------
    def _physics(self) -> dict[str, float]:
        return {"gravity": self.gravity, "surface_tension": self.surface_tension, "density": self.density}

    def angular_frequency(self, k: ArrayLike) -> NDArray[np.float64]:
        """ω(k) in rad/s with this sea's depth, gravity and surface tension."""
        return angular_frequency(k, self.depth, **self._physics())

    def group_velocity(self, k: ArrayLike) -> NDArray[np.float64]:
        """dω/dk in m/s."""
        return group_velocity(k, self.depth, **self._physics())

    def wavenumber(self, omega: ArrayLike) -> NDArray[np.float64]:
        """k(ω) in rad/m, the inverse of :meth:`angular_frequency`."""
        return wavenumber(omega, self.depth, **self._physics())

    # -- spectra ---------------------------------------------------------------------
    def component_spectrum(self, index: int, omega: ArrayLike) -> NDArray[np.float64]:
        """S(ω) of one component in m²·s/rad."""
        omega = np.asarray(omega, dtype=np.float64)
        k = self.wavenumber(np.maximum(omega, 0.0))
        speed = self.group_velocity(np.where(k > 0, k, 1.0))
        return self.components[index].spectral_density(omega, k, self.depth, self.gravity, speed)

    def frequency_spectrum(self, omega: ArrayLike) -> NDArray[np.float64]:
        """Total S(ω) in m²·s/rad, the sum over components."""
        omega = np.asarray(omega, dtype=np.float64)
        k = self.wavenumber(np.maximum(omega, 0.0))
        speed = self.group_velocity(np.where(k > 0, k, 1.0))
        return sum(c.spectral_density(omega, k, self.depth, self.gravity, speed) for c in self.components)

    def directional_spectrum(self, kx: ArrayLike, ky: ArrayLike) -> NDArray[np.float64]:
        """Ψ(kx, ky) in m⁴ (m² per (rad/m)²): Σ S(ω)·D(θ; ω)·(dω/dk)/k, 0 at k = 0.

        ∫Ψ dkx dky = m0 (the DESIGN convention that makes the lattice's variance sum
        approach the sea's m0).
        """
        kx = np.asarray(kx, dtype=np.float64)
        ky = np.asarray(ky, dtype=np.float64)
        shape = np.broadcast_shapes(kx.shape, ky.shape)
        if all(getattr(c, "suppress_opposing", False) for c in self.components) and math.prod(shape) > _WHOLE_PLANE:
            # Every component drops the waves running against it: where all of them do, Ψ is
            # exactly 0 (a finite density times D = 0). Only the rest is evaluated; each value
            # is its own, so they are the same bits as evaluating the whole plane.
            theta = np.arctan2(ky, kx)
            ahead = np.zeros(shape, dtype=bool)
            for component in self.components:
                ahead |= np.abs(wrap_angle(theta - component.direction)) <= 0.5 * np.pi
            out = np.zeros(shape)
            out[ahead] = self._directional_spectrum(np.broadcast_to(kx, shape)[ahead], np.broadcast_to(ky, shape)[ahead])
            return out
        return self._directional_spectrum(kx, ky)

    def _directional_spectrum(self, kx: NDArray[np.float64], ky: NDArray[np.float64]) -> NDArray[np.float64]:
        k = np.hypot(kx, ky)
        mask = k > 0
        kk = np.where(mask, k, 1.0)
        omega = self.angular_frequency(kk)
        speed = self.group_velocity(kk)
        jacobian = speed / kk
        theta = np.arctan2(ky, kx)
        total = np.zeros(np.broadcast_shapes(kx.shape, ky.shape))
        for component in self.components:
            density = component.spectral_density(omega, kk, self.depth, self.gravity, speed)
            total += density * component.directional_density(theta, omega, self.gravity, kk)
        return np.where(mask, total * jacobian, 0.0)

    # -- moments ---------------------------------------------------------------------
    def _moment(self, index: int, order: float, omega_low: float = 0.0, omega_high: float = np.inf) -> float:
        """∫ ω^order S_i(ω) dω over [omega_low, omega_high] by composite Gauss–Legendre.

        Integrated in ln ω from 0.02 ωp to 2000 ωp in 600 panels of 8 nodes, with a panel
        edge at ωp where the JONSWAP width changes. The parts left out hold less than
        exp(−1.25·0.02⁻⁴) and (1/2000)^(4−n) of m_n: below 1e-6 relative for n ≤ 2. The
        rule matches adaptive quadrature to better than 1e-9 (tested).
        """
        wp = self.components[index].peak_frequency
        # A measured record's S(ω) has kinks and steps at its frequencies and band edges:
        # the range reaches its lowest edge, and panel edges there keep every panel smooth.
        breaks = np.asarray(getattr(self.components[index], "frequency_breaks", ()), dtype=np.float64)
        lo = max(omega_low, min((_MOMENT_LOW * wp, *breaks[:1])))
        hi = min(omega_high, _MOMENT_HIGH * wp)
        if not hi > lo:
            return 0.0
        edges = np.linspace(math.log(lo), math.log(hi), _MOMENT_PANELS + 1)
        if lo < wp < hi:
            edges = np.unique(np.append(edges, math.log(wp)))
        breaks = breaks[(breaks > lo) & (breaks < hi)]
        if breaks.size:
            edges = np.unique(np.concatenate((edges, np.log(breaks))))
        mid = 0.5 * (edges[1:] + edges[:-1])
        half = 0.5 * (edges[1:] - edges[:-1])
        u = (mid[:, None] + half[:, None] * _GAUSS_NODES[None, :]).ravel()
        weights = (half[:, None] * _GAUSS_WEIGHTS[None, :]).ravel()
        omega = np.exp(u)
        # dω = ω du
        return float(np.sum(weights * omega ** (order + 1.0) * self.component_spectrum(index, omega)))

    def moment(self, order: float, omega_low: float = 0.0, omega_high: float = np.inf) -> float:
        """Spectral moment m_n = ∫ ω^n S(ω) dω over the components, in m²·(rad/s)^n."""
        return sum(self._moment(i, order, omega_low, omega_high) for i in range(len(self.components)))

    def band_variance(self, k_low: float, k_high: float) -> float:
        """Variance in m² carried by wavenumbers between ``k_low`` and ``k_high`` rad/m."""
        w_low = float(self.angular_frequency(max(k_low, 0.0)))
        w_high = float(self.angular_frequency(k_high)) if np.isfinite(k_high) else np.inf
        return self.moment(0, w_low, w_high)

    def slope_variance(self, k_low: float, k_high: float, *, panels: int = 1200) -> float:
        """Mean-square slope ∫ k² F(k) dk of the wavenumbers between ``k_low`` and ``k_high`` rad/m.

        F(k) = S(ω(k))·c_g(k) is the omnidirectional wavenumber spectrum (∫F dk = m0);
        composite Gauss–Legendre in ln k, ``panels`` panels of 8 nodes. Dimensionless.
        """
        if not (0.0 < k_low < k_high < np.inf):
            raise ValueError(f"k_low, k_high: ({k_low!r}, {k_high!r}) is not allowed; allowed: 0 < k_low < k_high < inf")
        edges = np.linspace(math.log(k_low), math.log(k_high), panels + 1)
        mid = 0.5 * (edges[1:] + edges[:-1])
        half = 0.5 * (edges[1:] - edges[:-1])
        u = (mid[:, None] + half[:, None] * _GAUSS_NODES[None, :]).ravel()
        weights = (half[:, None] * _GAUSS_WEIGHTS[None, :]).ravel()
        k = np.exp(u)
        density = self.frequency_spectrum(self.angular_frequency(k)) * self.group_velocity(k)
        return float(np.sum(weights * k**3 * density))  # dk = k du

    def peak_frequency(self) -> float:
        """ωp of the total spectrum in rad/s: the global maximum of S(ω)."""
        candidates = [c.peak_frequency for c in self.components]
        grid = np.geomspace(min(candidates) * 0.2, max(candidates) * 5.0, 4000)
        density = self.frequency_spectrum(grid)
        i = int(np.argmax(density))
        lo, hi = grid[max(i - 1, 0)], grid[min(i + 1, len(grid) - 1)]
        peak = bounded_minimum(lambda w: -float(self.frequency_spectrum(np.array([w]))[0]), lo, hi, xatol=1e-10 * hi)
        return float(peak)

    def _direction_moments(self, index: int) -> tuple[float, float, float]:
        """(m0, a1, b1) of one component: a1 + i b1 = ∫∫ S D e^{iθ} dθ dω (Kuik et al. 1988)."""
        component = self.components[index]
        wp = component.peak_frequency
        # ω grid in log spacing resolving the peak; θ grid fine enough for s up to ~1e4.
        # Midpoint nodes, symmetric about the mean and never on the ±90° cut of
        # suppress_opposing (a node there falls on either side by rounding, tilting the mean).
        omega = np.geomspace(0.2 * wp, 20.0 * wp, 800)
        breaks = getattr(component, "frequency_breaks", ())
        if len(breaks):  # a measured record: its whole range, wherever its peak lies
            omega = np.geomspace(min(0.2 * wp, breaks[0]), max(20.0 * wp, breaks[-1]), 2000)
        theta = np.linspace(-np.pi, np.pi, 2049)[:-1] + np.pi / 2048 + component.direction
        density = self.component_spectrum(index, omega)
        d = component.directional_density(theta[None, :], omega[:, None], self.gravity, self.wavenumber(omega)[:, None])
        dtheta = 2.0 * np.pi / theta.size
        cos_mean = (d * np.cos(theta)[None, :]).sum(axis=1) * dtheta
        sin_mean = (d * np.sin(theta)[None, :]).sum(axis=1) * dtheta
        m0_grid = np.trapezoid(density, omega)
        a1 = np.trapezoid(density * cos_mean, omega) / m0_grid
        b1 = np.trapezoid(density * sin_mean, omega) / m0_grid
        m0 = self._moment(index, 0)
        return m0, a1 * m0, b1 * m0

    def statistics(self) -> SeaStatistics:
        """Integral statistics of the whole sea (see :class:`SeaStatistics`)."""
        return self._statistics_of(tuple(range(len(self.components))))

    def component_statistics(self) -> list[SeaStatistics]:
        """Statistics of each component on its own, in order."""
        return [self._statistics_of((i,)) for i in range(len(self.components))]

    def _statistics_of(self, indices: tuple[int, ...]) -> SeaStatistics:
        """Statistics of the components ``indices``, computed once (a sea of one component
        has the same figures on its own as in total: its warnings and its Ocean share them)."""
        key = ("statistics", indices)
        if key not in self._cache:
            self._cache[key] = self._statistics(indices)
        return self._cache[key]

    def _statistics(self, indices) -> SeaStatistics:
        indices = list(indices)
        m0 = sum(self._moment(i, 0) for i in indices)
        m1 = sum(self._moment(i, 1) for i in indices)
        m2 = sum(self._moment(i, 2) for i in indices)
        if len(indices) == len(self.components):
            wp = self.peak_frequency()
        else:
            wp = SeaState((self.components[indices[0]],), self.depth, self.gravity,
                          self.surface_tension, self.density).peak_frequency()
        kp = float(self.wavenumber(wp))
        a1 = b1 = 0.0
        for i in indices:
            _, a, b = self._direction_moments(i)
            a1 += a
            b1 += b
        resultant = math.hypot(a1, b1) / m0
        hs = 4.0 * math.sqrt(m0)
        tp = 2.0 * math.pi / wp
        winds = [self.components[i].wind_speed for i in indices if self.components[i].wind_speed]
        force = max(beaufort_force(w) for w in winds) if winds else beaufort_force_for_height(hs)
        return SeaStatistics(
            m0=m0,
            hs=hs,
            tp=tp,
            tm01=2.0 * math.pi * m0 / m1,
            tm02=2.0 * math.pi * math.sqrt(m0 / m2),
            peak_wavelength=2.0 * math.pi / kp,
            peak_phase_speed=float(phase_velocity(kp, self.depth, **self._physics())),
            peak_group_speed=float(self.group_velocity(kp)),
            mean_direction=float(wrap_angle(math.atan2(b1, a1))),
            directional_spread=math.sqrt(max(2.0 * (1.0 - resultant), 0.0)),
            # DNV-RP-C205 §3.5.5.4 (from memory): S_p = 2π Hs / (g Tp²), deep-water steepness.
            significant_steepness=2.0 * math.pi * hs / (self.gravity * tp**2),
            beaufort=force,
        )


# -- constructors ------------------------------------------------------------------------


#: Spectra of more points than this, of a sea whose every component drops its opposing
#: waves, are evaluated where they can be nonzero only (a lattice block, not a few nodes).
_WHOLE_PLANE = 4096


def _direction_and_spread(direction: float, spreading_name: str, spread: float | None) -> tuple[float, float]:
    direction = _check_number("direction", direction, -1.0e6, 1.0e6)
    if spreading_name not in SPREADING:
        raise ValueError(f"spreading: {spreading_name!r} is not a model; allowed: {', '.join(SPREADING)}")
    if spread is None:
        return direction, 10.0
    # Kuik et al. (1988): σθ < √2 rad for any unimodal distribution; 0.5° is the narrowest
    # we allow (s ≈ 26,000) so the lattice can still resolve it in practice.
    spread = _check_number("spread", spread, math.radians(0.5), math.radians(80.0), low_open=False)
    return direction, float(cos2s_exponent(spread))


def _peak_at(shape: Component, peak: float, depth: float, gravity: float) -> Component:
    """``shape`` with its ωp parameter moved so that the spectrum's actual peak is ``peak``.

    The depth factor of a TMA spectrum rises with ω and pulls the peak above the JONSWAP
    parameter (a 7 s sea in 5 m of water peaks at 6.9 s); the shift is smooth and small,
    so a few fixed-point steps ωp ← ωp · peak / found converge to 1e-9.
    """
    for _ in range(50):
        found = SeaState((shape,), depth=depth, gravity=gravity).peak_frequency()
        if abs(found / peak - 1.0) < 1e-10:
            break
        shape = Component(**{**_fields(shape), "peak_frequency": shape.peak_frequency * peak / found})
    return shape


def _fitted_alpha(shape: Component, hs: float, depth: float, gravity: float) -> float:
    """α such that 4√m0 = hs exactly for ``shape`` (whose own α is 1)."""
    probe = SeaState((shape,), depth=depth, gravity=gravity)
    return (hs / 4.0) ** 2 / probe._moment(0, 0)


def wind_sea(
    wind_speed: float,
    *,
    fetch: float | None = None,
    spectrum: str = "jonswap",
    gamma: float = spectra.JONSWAP_GAMMA,
    depth: float = np.inf,
    direction: float = 0.0,
    spreading: str = "mitsuyasu",
    spread: float | None = None,
    suppress_opposing: bool = False,
    cutoff_length: float = 0.0,
    gravity: float = GRAVITY,
    label: str = "wind sea",
) -> Component:
    """A wind sea from the wind speed at 10 m (m/s) and, optionally, the fetch (m).

    Without a fetch the sea is fully developed: Pierson–Moskowitz (α = 8.1e-3,
    ωp = 0.8772 g/U19.5, U19.5 = 1.026 U10). With a fetch, α and ωp follow the JONSWAP
    fetch laws (Hasselmann et al. 1973, as in Stewart 2008 eqs 16.37–16.38); once the
    fetch-limited sea would hold more energy than the fully developed one, growth stops
    and the fully developed sea is returned (common practice: seas saturate).

    ``spectrum`` chooses the shape: ``jonswap`` (default), ``pierson_moskowitz``,
    ``tma`` (JONSWAP × depth factor at ``depth``), ``phillips`` (Tessendorf's form) or
    ``elfouhaily`` (the unified long- and short-wave spectrum of Elfouhaily et al. 1997,
    whose own fetch law sets the wave age; deep water: its short waves need no depth).
    ``spread`` (radians) sets the cos-2s exponent when ``spreading`` is ``cos2s``.
    """
    wind_speed = _check_number("wind_speed", wind_speed, 0.0, _MAX_WIND)
    gravity = _check_number("gravity", gravity, 0.0, 1.0e3)
    depth = check_depth(depth)
    direction, spread_s = _direction_and_spread(direction, spreading, spread)
    gamma = _check_number("gamma", gamma, 1.0, 10.0, low_open=False)
    common = dict(
        wind_speed=wind_speed,
        direction=direction,
        spreading=spreading,
        spread_s=spread_s,
        suppress_opposing=suppress_opposing,
        cutoff_length=_check_number("cutoff_length", cutoff_length, 0.0, 1.0e3, low_open=False),
        label=label,
    )
    if spectrum not in spectra.SPECTRA:
        raise ValueError(f"spectrum: {spectrum!r} is not a model; allowed: {', '.join(_SPECTRUM_NAMES)}")
    if spectrum == "elfouhaily":
        # Elfouhaily et al. (1997): the wave age Ωc = U10/c_p sets the peak, c_p = g/ωp.
        if fetch is not None:
            fetch = _check_number("fetch", fetch, 0.0, _MAX_FETCH)
        omega_c = spectra.elfouhaily_inverse_wave_age(wind_speed, fetch, gravity=gravity)
        return Component(
            "elfouhaily",
            gravity * omega_c / wind_speed,
            spectra.elfouhaily_alpha_p(omega_c),
            gamma=spectra.elfouhaily_gamma(omega_c),
            **common,
        )
    if spectrum == "phillips":
        return Component(
            "phillips",
            spectra.phillips_peak_frequency(wind_speed, gravity=gravity),
            spectra.PHILLIPS_ALPHA,
            gamma=1.0,
            **common,
        )
    developed_peak = spectra.pierson_moskowitz_peak_frequency(wind_speed, gravity=gravity)
    developed = Component("pierson_moskowitz", developed_peak, spectra.PHILLIPS_ALPHA, gamma=1.0, **common)
    if spectrum == "tma":
        developed = Component("tma", developed_peak, spectra.PHILLIPS_ALPHA, gamma=1.0, **common)
    if fetch is None:
        return developed
    fetch = _check_number("fetch", fetch, 0.0, _MAX_FETCH)
    # A fetch-limited Pierson–Moskowitz sea keeps its shape (γ = 1) with the fetch laws'
    # peak and level: JONSWAP's form with γ = 1 is exactly PM.
    limited = Component(
        "jonswap" if spectrum == "pierson_moskowitz" else spectrum,
        spectra.jonswap_fetch_peak_frequency(wind_speed, fetch, gravity=gravity),
        spectra.jonswap_fetch_alpha(wind_speed, fetch, gravity=gravity),
        gamma=1.0 if spectrum == "pierson_moskowitz" else gamma,
        **common,
    )
    sea = dict(depth=depth, gravity=gravity)
    if SeaState((limited,), **sea)._moment(0, 0) >= SeaState((developed,), **sea)._moment(0, 0):
        return developed
    return limited


def height_period(
    hs: float,
    tp: float,
    *,
    spectrum: str = "jonswap",
    gamma: float = spectra.JONSWAP_GAMMA,
    depth: float = np.inf,
    direction: float = 0.0,
    spreading: str = "cos2s",
    spread: float | None = None,
    wind_speed: float | None = None,
    suppress_opposing: bool = False,
    cutoff_length: float = 0.0,
    gravity: float = GRAVITY,
    label: str = "",
) -> Component:
    """A component from significant wave height ``hs`` (m) and peak period ``tp`` (s).

    The shape is the DNV-RP-C205 (Hs, Tp) form; α is found by integrating the shape (with
    the depth factor for ``tma`` and the cut-off) so that 4√m0 = hs to 1e-9, not by the
    approximate factor 1 − 0.287 ln γ alone.
    """
    hs = _check_number("hs", hs, 0.0, 40.0)
    tp = _check_number("tp", tp, 0.0, 60.0)
    depth = check_depth(depth)
    direction, spread_s = _direction_and_spread(direction, spreading, spread)
    gamma = _check_number("gamma", gamma, 1.0, 10.0, low_open=False)
    if spectrum not in spectra.SPECTRA:
        raise ValueError(f"spectrum: {spectrum!r} is not a model; allowed: {', '.join(_SPECTRUM_NAMES)}")
    if spectrum in ("phillips", "elfouhaily"):
        raise ValueError(
            f"spectrum: {spectrum!r} cannot be sized by height and period; "
            f"allowed: jonswap, pierson_moskowitz, tma (or size {spectrum} by wind speed)"
        )
    if wind_speed is not None:
        wind_speed = _check_number("wind_speed", wind_speed, 0.0, _MAX_WIND)
    shape = Component(
        spectrum,
        2.0 * math.pi / tp,
        1.0,
        gamma=1.0 if spectrum == "pierson_moskowitz" else gamma,
        wind_speed=wind_speed,
        direction=direction,
        spreading=spreading,
        spread_s=spread_s,
        suppress_opposing=suppress_opposing,
        cutoff_length=_check_number("cutoff_length", cutoff_length, 0.0, 1.0e3, low_open=False),
        label=label,
    )
    if spectrum == "tma" and math.isfinite(depth):
        shape = _peak_at(shape, 2.0 * math.pi / tp, depth, gravity)
    alpha = _fitted_alpha(shape, hs, depth, gravity)
    if not alpha <= _MAX_ALPHA:  # name the user's arguments, not the derived constant
        where = "" if math.isinf(depth) else f" in {depth:g} m of water"
        raise ValueError(
            f"hs: {hs!r} is too high for tp: {tp!r}{where} (the {spectrum} shape would need "
            f"alpha = {alpha:.3g}); allowed: alpha <= {_MAX_ALPHA:g}, so a lower hs or a longer tp"
        )
    return Component(**{**_fields(shape), "alpha": alpha})


def _fields(component: Component) -> dict:
    return {name: getattr(component, name) for name in component.__dataclass_fields__}


def beaufort_sea(
    force: int,
    *,
    fetch: float | None = None,
    spectrum: str = "jonswap",
    gamma: float = spectra.JONSWAP_GAMMA,
    depth: float = np.inf,
    direction: float = 0.0,
    spreading: str = "mitsuyasu",
    spread: float | None = None,
    suppress_opposing: bool = False,
    cutoff_length: float = 0.0,
    gravity: float = GRAVITY,
    label: str = "wind sea",
) -> Component:
    """A wind sea for a Beaufort force (0–12): :func:`wind_sea` at :func:`beaufort_wind_speed`.

    Force 0 (calm) has no waves and is refused; allowed: 1–12.
    """
    if isinstance(force, bool) or not isinstance(force, (int, np.integer)) or not 1 <= force <= 12:
        raise ValueError(f"beaufort: {force!r} is not allowed; allowed: an integer force from 1 to 12")
    return wind_sea(
        beaufort_wind_speed(int(force)),
        fetch=fetch,
        spectrum=spectrum,
        gamma=gamma,
        depth=depth,
        direction=direction,
        spreading=spreading,
        spread=spread,
        suppress_opposing=suppress_opposing,
        cutoff_length=cutoff_length,
        gravity=gravity,
        label=label,
    )
