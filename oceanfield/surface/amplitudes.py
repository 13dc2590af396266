"""How much variance each lattice wave carries: the spectrum integrated over its cell, and
the per-annulus rescale that gives a tile the variance asked for.

Knows nothing of presets or files; the random numbers themselves come from ``synth``.

Two steps turn a directional spectrum Ψ(kx, ky) into the variance of each lattice wave:

* **Cell integration.** Wave (nx, ny) stands for the square cell of the wavenumber plane
  around k = Δk·(nx, ny), so its expected variance is ∫_cell Ψ dk, not Ψ(k)·Δk². On a
  tile a few peak wavelengths wide a JONSWAP peak or a narrow swell is about one lattice
  step wide, and sampling Ψ at the cell centres misplaces its energy by tens of per cent.
  :func:`cell_variance` integrates each cell with a tensor-product Gauss–Legendre rule
  whose order falls with the distance from k = 0 (cells far out are many times narrower
  than the spectrum's features there and the centre value suffices). The order depends
  only on the wave index and the sea, never on the resolution, so a cell carries the same
  variance at 256² and 2048².
* **Variance as asked.** A tile holds few independent waves near its spectral peak, so
  with freely drawn (Rayleigh) amplitudes its variance strays from the one asked for by
  tens of per cent from seed to seed. :func:`ring_scale` gives the factor that makes the
  realised variance of every ring of equal |k| (the waves sharing one q = nx² + ny²)
  equal its target, while keeping the amplitudes' random ratios within the ring (how the
  energy of one wavelength is shared between directions) and every phase. Any band of
  wavenumbers is a union of rings, so every band, whatever its edges, holds its target
  exactly; half-octave annuli would leave bands placed across their edges tens of per
  cent off. Tucker, Challenor & Carter (1984) discuss what fixing amplitudes does to wave
  groups (see the README). A ring lying wholly inside two lattices of the same tile and
  seed (q < (N/2)² for the smaller) gets the same factor in both.

A lattice split into bands of wavenumbers (several tile sizes) uses both per band: the
cells of each band's own lattice, and the rings of each band's own modes.

References
----------
Tucker, M. J., Challenor, P. G. & Carter, D. J. T. (1984). Numerical simulation of a
random sea: a common error and its effect upon wave group statistics. Applied Ocean
Research 6(2), 118–122.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..physics.seastate import SeaState

__all__ = ["WAVE_HEIGHTS", "cell_variance", "feature_width", "ring_scale"]

#: How a tile's amplitudes are drawn: ``as_requested`` rescales each ring of equal |k| to
#: its target variance; ``random`` keeps the freely drawn (Rayleigh) amplitudes.
WAVE_HEIGHTS = ("as_requested", "random")

#: Relative width of the JONSWAP peak in wavenumber: σ = 0.07 in ω (Hasselmann et al.
#: 1973) is 0.14 in k in deep water (k ∝ ω²). Narrower features come from the spreading.
_RADIAL_WIDTH = 0.14
#: Gauss–Legendre nodes per feature width across a cell (order = ceil(_NODES_PER_WIDTH /
#: (|n|·width))): the rule then resolves a Gaussian feature to better than 1e-4 (tested
#: against a rule of twice the order).
_NODES_PER_WIDTH = 3.0
_MAX_ORDER = 24
_CUT_ORDER = 12
_SPREAD_SAMPLES = 2048


@lru_cache(maxsize=None)
def _gauss_legendre(order: int) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Nodes as offsets within a unit cell (−½…½) and weights summing to 1."""
    nodes, weights = np.polynomial.legendre.leggauss(order)
    return 0.5 * nodes, 0.5 * weights


@lru_cache(maxsize=None)
def _uniform(order: int) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Midpoints of ``order`` equal sub-cells (−½…½) and equal weights summing to 1."""
    offsets = (np.arange(order) + 0.5) / order - 0.5
    return offsets, np.full(order, 1.0 / order)


def feature_width(sea: SeaState) -> float:
    """The narrowest relative scale of Ψ: the JONSWAP peak's width in k or the
    directional spread (circular standard deviation, radians) at any component's peak."""
    theta = np.linspace(-math.pi, math.pi, _SPREAD_SAMPLES, endpoint=False)
    width = _RADIAL_WIDTH
    for component in sea.components:
        density = component.directional_density(theta + component.direction, component.peak_frequency, sea.gravity)
        total = float(np.sum(density))
        if total > 0:
            r1 = abs(complex(np.sum(density * np.cos(theta)), np.sum(density * np.sin(theta)))) / total
            width = min(width, math.sqrt(max(2.0 * (1.0 - r1), 0.0)))
    return max(width, 1e-3)


def cell_variance(
    sea: SeaState, dk: float, ny: ArrayLike, nx: ArrayLike, *, width: float | None = None
) -> NDArray[np.float64]:
    """∫ Ψ dkx dky over the lattice cell of each wave index (m²): its expected variance.

    ``ny``, ``nx`` are broadcastable integer wave indices and ``dk`` the lattice spacing
    in rad/m. Cells within ``_NODES_PER_WIDTH / width`` lattice steps of k = 0 are
    integrated by an m×m Gauss–Legendre rule, m = ceil(3 / (|n|·width)) up to 24; cells
    crossed by a component's cut-off of opposing waves by a uniform sub-grid of at least
    12×12; the rest by their centre value. ``width`` defaults to :func:`feature_width`.
    """
    ny, nx = np.broadcast_arrays(np.asarray(ny, dtype=np.int64), np.asarray(nx, dtype=np.int64))
    if width is None:
        width = feature_width(sea)
    area = dk * dk
    out = sea.directional_spectrum(nx * dk, ny * dk) * area
    radius = np.hypot(nx, ny)
    order = np.where(
        radius < _NODES_PER_WIDTH / width,
        np.minimum(_MAX_ORDER, np.ceil(_NODES_PER_WIDTH / (np.maximum(radius, 0.5) * width))),
        1.0,
    )
    # A component that drops the energy running against it is cut along the line through
    # k = 0 at right angles to its direction: cells that line crosses hold a jump, which
    # neither the centre value nor Gauss–Legendre integrates well. They take a uniform
    # midpoint sub-grid (error below a 1/(2m) share of the jump, of either sign).
    cut = np.zeros(radius.shape, dtype=bool)
    for component in sea.components:
        if getattr(component, "suppress_opposing", False):  # a measured record has no cut-off
            c, s = math.cos(component.direction), math.sin(component.direction)
            cut |= np.abs(nx * c + ny * s) < 0.5 * (abs(c) + abs(s))
    cut &= radius > 0
    refine = (order > 1) | cut
    if not refine.any():
        return out
    cells = np.flatnonzero(refine)
    flat = out.reshape(-1)
    cy, cx = ny.ravel()[cells], nx.ravel()[cells]
    m = order.ravel()[cells].astype(np.int64)
    uniform = cut.ravel()[cells]
    m = np.where(uniform, np.maximum(_CUT_ORDER, 2 * m), m)
    for rule in np.unique(np.stack([m, uniform]), axis=1).T:
        pick = (m == rule[0]) & (uniform == bool(rule[1]))
        offsets, weights = (_uniform if rule[1] else _gauss_legendre)(int(rule[0]))
        ky = (cy[pick][:, None, None] + offsets[None, :, None]) * dk
        kx = (cx[pick][:, None, None] + offsets[None, None, :]) * dk
        psi = sea.directional_spectrum(kx, ky)
        flat[cells[pick]] = np.einsum("cij,i,j->c", psi, weights, weights) * area
    return out


def ring_scale(realised: ArrayLike, target: ArrayLike) -> NDArray[np.float64]:
    """Amplitude factor per ring, √(target / realised) (1 where nothing was realised)."""
    realised = np.asarray(realised, dtype=np.float64)
    target = np.asarray(target, dtype=np.float64)
    return np.where(realised > 0, np.sqrt(target / np.where(realised > 0, realised, 1.0)), 1.0)
