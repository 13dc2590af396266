"""The analyzer's report picture: spectrum against target, ω–k diagram, directions.

Knows nothing of synthesis or of files other than its own PNG.

One PNG with four panels: the omnidirectional wavenumber spectrum on log axes (with the
target's, and the compared bands shaded by verdict); the frequency–wavenumber diagram in
log power with the declared and the fitted dispersion curves and the Nyquist frequency
drawn over it; a polar plot of the energy by direction of travel; the frequency spectrum
of the time series with its peak. matplotlib (Agg) is imported here only, when a report
is asked for, and the file is written atomically.
"""

from __future__ import annotations

import math
import os
from pathlib import Path

import numpy as np

from .measure import SequenceAnalysis, whole_degrees
from ..physics.dispersion import angular_frequency
from ..io.atomic import atomic_output

__all__ = ["write_report"]

_VERDICT_COLOURS = {"ok": "#4daf4a", "too much": "#e41a1c", "too little": "#377eb8", "negligible": "#bbbbbb"}
_DPI = 100


def write_report(
    result: SequenceAnalysis,
    path: str | os.PathLike[str],
    *,
    title: str = "",
    against: str | None = None,
) -> Path:
    """Write the report picture of an analysis as a PNG, atomically; returns its path.

    Raises
    ------
    OutputError
        When the file cannot be written (no partial file is left).
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    figure = Figure(figsize=(13.0, 10.0), dpi=_DPI)
    FigureCanvasAgg(figure)
    grid = figure.add_gridspec(2, 2, hspace=0.3, wspace=0.25)
    _spectrum_panel(figure.add_subplot(grid[0, 0]), result, against)
    _omega_k_panel(figure.add_subplot(grid[0, 1]), result)
    _direction_panel(figure.add_subplot(grid[1, 0], projection="polar"), result)
    _frequency_panel(figure.add_subplot(grid[1, 1]), result)
    fit = result.dispersion
    timing = (
        f"g_eff/g = {fit.g_ratio:.3f} ({fit.status})" if math.isfinite(fit.g_ratio) else "timing not measurable"
    )
    figure.suptitle(
        f"{title}\nHs {result.hs:#.3g} m   Tp {result.tp:#.3g} s   towards "
        f"{_bearing(result.mean_direction)}°   {timing}",
        fontsize=12,
    )
    final = Path(path)
    with atomic_output(final) as temporary:
        figure.savefig(temporary, format="png", dpi=_DPI)
    return final


def _spectrum_panel(axes, result: SequenceAnalysis, against: str | None) -> None:
    k, e = result.wavenumbers, result.wavenumber_spectrum
    shown = e > 0
    axes.loglog(k[shown], e[shown], color="black", lw=1.5, label="measured")
    if result.target_spectrum is not None:
        target = result.target_spectrum
        positive = target > 0
        axes.loglog(k[positive], target[positive], color="#ff7f00", lw=1.5, ls="--",
                    label=f"target {against}" if against else "target")
    for band in result.bands or ():
        colour = _VERDICT_COLOURS.get(band.verdict)
        if colour is None:
            continue
        axes.axvspan(band.k_low, band.k_high, color=colour, alpha=0.15, lw=0)
        if band.verdict in ("too much", "too little"):
            axes.text(math.sqrt(band.k_low * band.k_high), 0.97, f"{band.centre:.2g}ωp\n{band.verdict}",
                      transform=axes.get_xaxis_transform(), ha="center", va="top", fontsize=7, color=colour)
    if shown.any():
        top = float(e[shown].max())
        axes.set_ylim(top * 1e-7, top * 3.0)
    _label(axes, "wavenumber |k| (rad/m)", "E(k) (m³/rad)", "Omnidirectional wavenumber spectrum", "lower left")


def _omega_k_panel(axes, result: SequenceAnalysis) -> None:
    fit = result.dispersion
    power = result.annulus_power  # (annuli, frequencies)
    dk = result.wavenumber_resolution
    d_omega = result.frequency_resolution
    n_annuli, n_freq = power.shape
    k_edges = (np.arange(n_annuli + 1) - 0.5) * dk
    w_edges = (np.arange(n_freq + 1) + 0.5) * d_omega
    positive = power[power > 0]
    if positive.size:
        floor = float(positive.max()) * 1e-8
        image = np.log10(np.maximum(power, floor)).T
        mesh = axes.pcolormesh(k_edges, w_edges, image, cmap="magma", shading="flat")
        axes.figure.colorbar(mesh, ax=axes, label="log10 power (m²)")
    k = np.linspace(dk * 0.5, k_edges[-1], 200)
    declared = angular_frequency(k, fit.depth, gravity=fit.gravity)
    axes.plot(k, declared, color="white", ls="--", lw=1.2, label="declared dispersion")
    if math.isfinite(fit.g_ratio):
        fitted = angular_frequency(k, fit.depth, gravity=fit.gravity * fit.g_ratio)
        axes.plot(k, fitted, color="#00e5ff", lw=1.2, label=f"fitted, g_eff/g = {fit.g_ratio:.3f}")
        used = fit.used
        axes.plot(fit.wavenumbers[used], fit.frequencies[used], "o", ms=3, color="#00e5ff", mfc="none")
    axes.axhline(result.nyquist_frequency, color="#cccccc", lw=0.8, ls=":", label="Nyquist fps·π")
    # Show up to 1.6× the fastest expected frequency (declared or fitted), and Nyquist if near.
    fastest = float(declared[-1]) * max(1.0, math.sqrt(fit.g_ratio) if math.isfinite(fit.g_ratio) else 1.0)
    axes.set_xlim(0.0, k_edges[-1])
    axes.set_ylim(0.0, min(w_edges[-1], max(1.6 * fastest, 4.0 * d_omega)))
    axes.set_xlabel("wavenumber |k| (rad/m)")
    axes.set_ylabel("angular frequency ω (rad/s)")
    axes.set_title("Frequency–wavenumber spectrum")
    axes.legend(loc="upper left", fontsize=8)


def _direction_panel(axes, result: SequenceAnalysis) -> None:
    theta = result.direction_bins
    energy = result.direction_energy
    total = energy.sum()
    share = energy / total if total > 0 else energy
    closed_theta = np.append(theta, theta[0])
    closed = np.append(share, share[0])
    axes.plot(closed_theta, closed, color="black", lw=1.2)
    axes.fill(closed_theta, closed, color="#377eb8", alpha=0.3)
    if math.isfinite(result.mean_direction) and closed.max() > 0:
        axes.annotate("", xy=(result.mean_direction, float(closed.max())), xytext=(0.0, 0.0),
                      arrowprops=dict(arrowstyle="->", color="#e41a1c", lw=1.5))
    axes.set_title(
        f"Energy by direction of travel (towards {_bearing(result.mean_direction)}°, "
        f"spread {math.degrees(result.directional_spread):.0f}°)",
        fontsize=10,
    )
    axes.set_yticklabels([])


def _frequency_panel(axes, result: SequenceAnalysis) -> None:
    omega, s = result.frequencies, result.frequency_spectrum
    shown = s > 0
    axes.semilogy(omega[shown], s[shown], color="black", lw=1.5, label="time series")
    if math.isfinite(result.tp) and result.tp > 0:
        axes.axvline(2.0 * math.pi / result.tp, color="#e41a1c", lw=1.0, ls="--", label=f"Tp {result.tp:.3g} s")
    if math.isfinite(result.tp_from_wavenumber) and result.tp_from_wavenumber > 0:
        axes.axvline(2.0 * math.pi / result.tp_from_wavenumber, color="#ff7f00", lw=1.0, ls=":",
                     label=f"Tp from wavenumber peak {result.tp_from_wavenumber:.3g} s")
    if shown.any():
        top = float(s[shown].max())
        axes.set_ylim(top * 1e-6, top * 3.0)
        visible = omega[s > top * 1e-6]
        axes.set_xlim(0.0, min(float(omega[-1]), 1.3 * float(visible.max())))
    _label(axes, "angular frequency ω (rad/s)", "S(ω) (m²·s/rad)", "Frequency spectrum of the time series", "best")


def _label(axes, x: str, y: str, title: str, legend: str) -> None:
    axes.set_xlabel(x)
    axes.set_ylabel(y)
    axes.set_title(title)
    axes.grid(True, which="both", alpha=0.2)
    axes.legend(loc=legend, fontsize=8)


def _bearing(angle: float | None) -> str:
    value = whole_degrees(angle)
    return "n/a" if value is None else f"{value:.0f}"
