"""The analyzer's report picture: spectrum against target, ω–k diagram, directions.

Knows nothing of synthesis or of files other than its own PNG.

One PNG with four panels and the verdict: the omnidirectional wavenumber spectrum on log
axes (with the target's, and the compared bands shaded by verdict, each labelled with its
wavelengths and periods); the frequency–wavenumber diagram in log power with the declared
and the fitted dispersion curves and the Nyquist frequency (drawn, or marked as above the
plot); a polar plot of the energy by direction of travel; the frequency spectrum of the
time series with its peak and the periods the clip is too short to resolve shaded. Every
wavenumber axis also reads in wavelength (m), every frequency axis in period (s). Under
the panels: the text verdict with its notes. matplotlib (Agg) is imported here only, when
a report is asked for, and the file is written atomically.
"""

from __future__ import annotations

import math
import os
from pathlib import Path

import numpy as np

from .results import SequenceAnalysis, whole_degrees
from .reliability import MIN_CYCLES, assess, band_scales
from ..physics.dispersion import angular_frequency
from ..io.atomic import atomic_output

__all__ = ["report_figure", "write_report"]

_VERDICT_COLOURS = {"ok": "#4daf4a", "too much": "#e41a1c", "too little": "#377eb8", "negligible": "#bbbbbb"}
_DPI = 100


def write_report(
    result: SequenceAnalysis,
    path: str | os.PathLike[str],
    *,
    title: str = "",
    against: str | None = None,
    verdict: str = "",
) -> Path:
    """Write the report picture of an analysis as a PNG, atomically; returns its path.

    ``verdict`` (the text of `oceanfield.analysis.verdict.format_verdict`) is printed under
    the panels.

    Raises
    ------
    OutputError
        When the file cannot be written (no partial file is left).
    """
    figure = report_figure(result, title=title, against=against, verdict=verdict)
    final = Path(path)
    with atomic_output(final) as temporary:
        figure.savefig(temporary, format="png", dpi=_DPI)
    return final


def report_figure(result: SequenceAnalysis, *, title: str = "", against: str | None = None, verdict: str = ""):
    """The report as a matplotlib Figure (Agg canvas), for `write_report` and for tests."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    lines = _wrapped(verdict)
    text_height = 0.16 * len(lines) + 0.3 if lines else 0.0
    figure = Figure(figsize=(13.0, 10.5 + text_height), dpi=_DPI)
    FigureCanvasAgg(figure)
    bottom = (text_height + 0.2) / (10.5 + text_height)
    grid = figure.add_gridspec(2, 2, hspace=0.42, wspace=0.25, bottom=bottom + 0.04, top=0.88)
    if lines:
        figure.text(0.03, bottom, "\n".join(lines), family="monospace", fontsize=8, va="top", ha="left",
                    transform=figure.transFigure)
    _spectrum_panel(figure.add_subplot(grid[0, 0]), result, against)
    _omega_k_panel(figure.add_subplot(grid[0, 1]), result)
    _direction_panel(figure.add_subplot(grid[1, 0], projection="polar"), result)
    _frequency_panel(figure.add_subplot(grid[1, 1]), result)
    fit = result.dispersion
    timing = (
        f"g_eff/g = {fit.g_ratio:.3f} ({fit.status})" if math.isfinite(fit.g_ratio) else "timing not measurable"
    )
    verdict_line = next((line[len("Verdict"):].strip() for line in lines if line.startswith("Verdict")), "")
    unreliable = assess(result).unreliable
    tp = f"{result.tp:#.3g} s" + (" (unreliable)" if "tp_s" in unreliable else "")
    towards = f"{_bearing(result.mean_direction)}°" + (" (unreliable)" if "towards_deg" in unreliable else "")
    figure.suptitle(
        f"{title}\nHs {result.hs:#.3g} m   Tp {tp}   towards {towards}   {timing}" + (f"\n{verdict_line.split('. ')[0]}" if verdict_line else ""),
        fontsize=12,
    )
    return figure


def _spectrum_panel(axes, result: SequenceAnalysis, against: str | None) -> None:
    k, e = result.wavenumbers, result.wavenumber_spectrum
    shown = e > 0
    axes.loglog(k[shown], e[shown], color="black", lw=1.5, label="measured")
    if result.target_spectrum is not None:
        target = result.target_spectrum
        positive = target > 0
        axes.loglog(k[positive], target[positive], color="#ff7f00", lw=1.5, ls="--",
                    label=f"target {against}" if against else "target")
    named = set()
    for band in result.bands or ():
        colour = _VERDICT_COLOURS.get(band.verdict)
        if colour is None:
            continue
        label = None if band.verdict in named else f"band {band.verdict}"
        named.add(band.verdict)
        axes.axvspan(band.k_low, band.k_high, color=colour, alpha=0.15, lw=0, label=label)
        long_l, _, long_t, _ = band_scales(band.omega_low, band.omega_high, band.k_low, band.k_high)
        axes.text(math.sqrt(band.k_low * band.k_high), 0.97, f"{long_l:.3g} m\n{long_t:.3g} s\n{band.verdict}",
                  transform=axes.get_xaxis_transform(), ha="center", va="top", fontsize=6, color=colour)
    if shown.any():
        top = float(e[shown].max())
        axes.set_ylim(top * 1e-7, top * 3.0)
    _label(axes, "wavenumber |k| (rad/m)", "E(k) (m³/rad)", "Omnidirectional wavenumber spectrum", "lower left")
    _reciprocal_axis(axes, "wavelength (m)")


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
    # Show up to 1.6× the fastest expected frequency (declared or fitted), and Nyquist if near.
    fastest = float(declared[-1]) * max(1.0, math.sqrt(fit.g_ratio) if math.isfinite(fit.g_ratio) else 1.0)
    top = max(1.6 * fastest, 4.0 * d_omega)
    nyquist = result.nyquist_frequency
    if nyquist <= 1.5 * top:  # near enough to draw: show it
        top = 1.08 * nyquist
        axes.axhline(nyquist, color="#ffffff", lw=1.4, ls=":", label=f"Nyquist fps·π = {nyquist:.3g} rad/s")
    else:
        axes.text(0.99, 0.02, f"Nyquist fps·π = {nyquist:.3g} rad/s, above the plot ↑", transform=axes.transAxes,
                  ha="right", va="bottom", fontsize=8, color="black",
                  bbox=dict(facecolor="white", alpha=0.8, lw=0))
    axes.set_xlim(0.5 * dk, k_edges[-1])  # from half a step: the wavelength axis above stays finite
    axes.set_ylim(0.0, top)
    axes.set_xlabel("wavenumber |k| (rad/m)")
    axes.set_ylabel("angular frequency ω (rad/s)")
    axes.set_title("Frequency–wavenumber spectrum")
    axes.legend(loc="upper left", fontsize=8)
    _reciprocal_axis(axes, "wavelength (m)")


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
    unreliable = assess(result).unreliable
    towards = f"{_bearing(result.mean_direction)}°" + (" (unreliable)" if "towards_deg" in unreliable else "")
    spread = f"{math.degrees(result.directional_spread):.0f}°" + (
        " (unreliable)" if "directional_spread_deg" in unreliable else "")
    axes.set_title(f"Energy by direction of travel (towards {towards}, spread {spread})", fontsize=10)
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
    # Periods longer than a third of the clip sit in its first bins: the clip cannot resolve them.
    unresolved = MIN_CYCLES * 2.0 * math.pi * result.fps / result.frames
    axes.axvspan(omega[0] * 0.5 if omega.size else 0.0, unresolved, color="#999999", alpha=0.25, lw=0,
                 label=f"periods over {result.frames / result.fps / MIN_CYCLES:.3g} s: too long for the clip")
    if shown.any():
        top = float(s[shown].max())
        axes.set_ylim(top * 1e-6, top * 3.0)
        visible = omega[s > top * 1e-6]
        axes.set_xlim(omega[0] * 0.5, min(float(omega[-1]), 1.3 * float(visible.max())))
    _label(axes, "angular frequency ω (rad/s)", "S(ω) (m²·s/rad)", "Frequency spectrum of the time series", "best")
    _reciprocal_axis(axes, "period (s)")


def _label(axes, x: str, y: str, title: str, legend: str) -> None:
    axes.set_xlabel(x)
    axes.set_ylabel(y)
    axes.set_title(title)
    axes.grid(True, which="both", alpha=0.2)
    axes.legend(loc=legend, fontsize=8)


def _reciprocal_axis(axes, label: str) -> None:
    """A top axis reading 2π/x: wavelength (m) over wavenumber, period (s) over frequency."""

    def reciprocal(x):
        x = np.asarray(x, dtype=float)
        return 2.0 * math.pi / np.maximum(x, 1e-12)

    top = axes.secondary_xaxis("top", functions=(reciprocal, reciprocal))
    top.set_xlabel(label, fontsize=8)
    top.tick_params(labelsize=7)
    # Round values (1, 2, 5 × 10ⁿ) spaced at least 7 % of the width apart: a reciprocal of a
    # linear axis crowds its automatic ticks at one end.
    import matplotlib.ticker

    low, high = sorted(axes.get_xlim())
    log = axes.get_xscale() == "log"
    place = (lambda x: math.log(x)) if log else (lambda x: x)
    if low <= 0 or high <= low:
        return
    span = place(high) - place(low)
    values = sorted(
        (m * 10.0**e for e in range(-4, 7) for m in (1, 2, 5) if low <= 2 * math.pi / (m * 10.0**e) <= high),
        key=lambda v: -v,
    )
    ticks, last = [], None
    for value in values:
        at = place(2 * math.pi / value)
        if last is None or (at - last) / span >= 0.07:
            ticks.append(value)
            last = at
    top.xaxis.set_major_locator(matplotlib.ticker.FixedLocator(ticks))
    top.xaxis.set_minor_locator(matplotlib.ticker.NullLocator())
    top.xaxis.set_major_formatter(matplotlib.ticker.FuncFormatter(lambda v, _: f"{v:g}"))


def _wrapped(text: str, width: int = 170) -> list[str]:
    """The verdict's lines, long ones wrapped under their own indent."""
    import textwrap

    lines = []
    for line in text.splitlines():
        indent = " " * 10 if len(line) > 10 and line[:10].strip() else ""
        lines += textwrap.wrap(line, width=width, subsequent_indent=indent) or [""]
    return lines


def _bearing(angle: float | None) -> str:
    value = whole_degrees(angle)
    return "n/a" if value is None else f"{value:.0f}"
