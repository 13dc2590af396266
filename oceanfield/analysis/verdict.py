"""The analyzer's verdict: what a measured sequence is, what is right, what is off.

Knows nothing of synthesis or formulas: it reads, measures (``measure``) and words the result.

`format_verdict` turns a `oceanfield.analysis.results.SequenceAnalysis` into a short text: the
sequence, its heights, periods and direction, the timing (g_eff/g, and for wrong timing
the scale the motion implies and the playback speed that corrects it: Froude scaling,
time ∝ √length), the spectrum band by band against a preset, then one line of verdict
and the notes. `run_analyze_command` is ``oceanfield analyze``: it reads a sequence
(`oceanfield.io.sequence`), settles its size, frame rate, units and up axis from the
command line or else the files' own headers, measures it (`oceanfield.analysis.measure`) and
prints the verdict or JSON, and writes the report picture if asked
(`oceanfield.analysis.plot`).
"""

from __future__ import annotations

import argparse
import json
import math
import os
from dataclasses import replace
from pathlib import Path
from typing import Any, Sequence

import numpy as np

from .measure import (
    MIN_FRAMES,
    MIN_RESOLUTION,
    TIMING_TOLERANCE,
    SequenceAccumulator,
    check_positive,
)
from .results import SequenceAnalysis, whole_degrees
from .reliability import Reliability, assess, band_scales
from ..physics.dispersion import check_depth
from ..io.exr import set_encoder_threads
from ..io.sequence import (
    choose_layout,
    expand_sequence,
    header_number,
    mixed_settings_note,
    parse_crop,
    read_channels,
    select_frames,
)

__all__ = ["format_verdict", "reliability_notes", "run_analyze_command"]


# -- the verdict -------------------------------------------------------------------------


def _depth_text(depth: float) -> str:
    return "deep water" if not math.isfinite(depth) else f"depth {depth:g} m"


def _retime_text(speed: float) -> str:
    """How to retime footage whose correct playback speed is ``speed`` (× real time)."""
    if speed < 1.0:
        return f"slow it down by ×{1.0 / speed:.2f} (play at {speed:.2f}× speed)"
    return f"speed it up by ×{speed:.2f} (play at {speed:.2f}× speed)"


def _timing_lines(result: SequenceAnalysis) -> list[str]:
    fit = result.dispersion
    if fit.status == "not measurable":
        reason = (
            "no wavenumber bin holds resolved, unaliased waves"
            if fit.bins_energetic else "the frames hold no moving waves"
        )
        return [f"Timing    not measurable: {reason}."]
    error = f" ± {fit.g_ratio_error:.3f}" if math.isfinite(fit.g_ratio_error) else ""
    head = (
        f"Timing    g_eff/g = {fit.g_ratio:.3f}{error} from {fit.bins_used} wavenumber bins "
        f"({fit.k_low:.3g}–{fit.k_high:.3g} rad/m, {_depth_text(fit.depth)})"
    )
    if fit.status == "ok":
        lines = [head + ": OK", "          The waves move at the right speed for their size."]
    else:
        speed = math.sqrt(fit.g_ratio)  # wave speed against the declared relation, ω ∝ √g
        declared = result.size
        lines = [
            head + ": WRONG TIMING",
            f"          The waves run at ×{speed:.2f} the speed their wavelengths call for: the surface moves like "
            f"one {fit.scale_factor:.3g}× its declared size",
            f"          (the {declared:.4g} m area behaves as {declared * fit.scale_factor:.4g} m). "
            f"To correct it, {_retime_text(fit.playback_speed)}: Froude scaling, time ∝ √length.",
        ]
    if (
        math.isfinite(fit.g_ratio_low) and math.isfinite(fit.g_ratio_high)
        and abs(fit.g_ratio_low / fit.g_ratio_high - 1.0) > 2.0 * TIMING_TOLERANCE
    ):
        lines.append(
            f"          g_eff/g changes across the range ({fit.g_ratio_low:.3f} on the longer waves, "
            f"{fit.g_ratio_high:.3f} on the shorter): the depth is probably not {_depth_text(fit.depth)} "
            f"(shallow water slows the long waves); try --depth."
        )
    return lines


def _band_lines(result: SequenceAnalysis, against: str | None) -> list[str]:
    if result.bands is None:
        return []
    name = f"'{against}'" if against else "the target"
    lines = [
        f"Spectrum  against {name} (Hs {result.target_hs:.3g} m, Tp {result.target_tp:.3g} s): "
        f"measured Hs is {_percent(result.hs / result.target_hs - 1.0)} of the target's",
        "          energy per half-octave band around the target's peak, by wavelength and period "
        "(measured as the wavenumbers of its dispersion):",
    ]
    for band in result.bands:
        long_l, short_l, long_t, short_t = band_scales(band.omega_low, band.omega_high, band.k_low, band.k_high)
        label = f"{long_l:.3g}–{short_l:.3g} m, {long_t:.3g}–{short_t:.3g} s"
        if band.verdict == "not resolved":
            lines.append(f"          {label:<30} not resolved by the frames")
            continue
        ratio = f"×{band.ratio:.3g}" if math.isfinite(band.ratio) else "—"
        verdict = band.verdict if band.verdict in ("negligible",) else (
            f"{band.verdict} (ok within ±{band.tolerance:.0%})"
        )
        partial = " [partly beyond the frames' resolution]" if band.partial else ""
        lines.append(
            f"          {label:<30} {band.measured:10.4g} / {band.target:10.4g} m²  {ratio:>8}  {verdict}{partial}"
        )
    return lines


def _num(value: float | None, spec: str = "#.3g") -> str:
    """A figure for the verdict, or "n/a" where it could not be measured."""
    if value is None or not math.isfinite(value):
        return "n/a"
    return format(value, spec).removesuffix(".")  # '#' keeps 1.90's zero, and 114's point


def _percent(value: float) -> str:
    return f"{value:+.0%}" if math.isfinite(value) else "n/a"


def format_verdict(result: SequenceAnalysis, *, against: str | None = None, source: str = "") -> str:
    """A short text verdict: what the sequence is, what is right, what is off and by how much.

    ``against`` names the preset compared with; ``source`` says where the heights came
    from (files, channel), for the first line.
    """
    fit = result.dispersion
    texel = result.size / result.resolution
    seam = (
        "repeats across its edges (no window)" if result.periodic
        else "does not repeat across its edges (Hann window)"
    )
    lines = []
    if source:
        lines.append(f"Source    {source}")
    lines.append(
        f"Sequence  {result.frames} frames of {result.resolution}×{result.resolution} texels over {result.size:.4g} m "
        f"({texel:.3g} m texels) at {result.fps:g} fps ({result.frames / result.fps:.3g} s); {seam}"
    )
    folded = "" if result.folded_fraction is None else f"   folded {result.folded_fraction:.1%} of the surface"
    trust = assess(result)

    def figure(key: str, value: float | None, unit: str = "") -> str:
        mark = " [unreliable]" if key in trust.unreliable else ""
        return f"{_num(value)}{unit}{mark}"

    steep_k = trust.steepness_from_wavenumber
    steep_k_text = f" ({_num(steep_k)} from the wavenumber peak)" if "significant_steepness" in trust.unreliable else ""
    lines += [
        f"Heights   Hs {_num(result.hs)} m   Tp {figure('tp_s', result.tp, ' s')} (time series), "
        f"{figure('tp_from_wavenumber_s', result.tp_from_wavenumber, ' s')} "
        f"(wavenumber peak, {_depth_text(fit.depth)})   Tm01 {figure('tm01_s', result.tm01, ' s')}   "
        f"Tm02 {figure('tm02_s', result.tm02, ' s')}",
        f"          travelling towards {_num(whole_degrees(result.mean_direction), '.0f')}°"
        f"{' [unreliable]' if 'towards_deg' in trust.unreliable else ''} "
        f"(counter-clockwise from +x, spread {_num(math.degrees(result.directional_spread), '.0f')}°"
        f"{' [unreliable]' if 'directional_spread_deg' in trust.unreliable else ''})   "
        f"significant steepness {figure('significant_steepness', result.significant_steepness)}{steep_k_text}"
        f"{folded}",
    ]
    lines += _timing_lines(result)
    lines += _band_lines(result, against)

    problems = []
    if fit.status in ("too fast", "too slow"):
        problems.append(
            f"timing: the waves run at ×{math.sqrt(fit.g_ratio):.2f} their right speed; "
            f"{_retime_text(fit.playback_speed)}"
        )
    for band in result.bands or ():
        if band.verdict in ("too much", "too little"):
            long_l, short_l, long_t, short_t = band_scales(band.omega_low, band.omega_high, band.k_low, band.k_high)
            problems.append(
                f"{band.verdict} energy in the {long_l:.3g}–{short_l:.3g} m waves ({long_t:.3g}–{short_t:.3g} s; "
                f"×{band.ratio:.3g} the target)"
            )
    caveat = ""
    if trust.unreliable:
        caveat = f" The clip cannot support {len(trust.unreliable)} figure(s) marked [unreliable]; see the notes."
    if problems:
        lines.append("Verdict   OFF: " + "; ".join(problems) + "." + caveat)
    elif fit.status == "ok":
        checked = "the timing and every resolved band of the spectrum are" if result.bands else "the timing is"
        lines.append(f"Verdict   RIGHT: {checked} as declared." + caveat)
    else:
        lines.append("Verdict   the timing could not be measured; see the notes." + caveat)
    for note in (*result.notes, *reliability_notes(trust, result.fps, timing=fit.status)):
        lines.append(f"Note      {note}.")
    return "\n".join(lines)


def reliability_notes(trust: Reliability, fps: float, *, timing: str = "ok") -> list[str]:
    """One note per figure the clip cannot support, and the clip that would."""
    notes = [f"unreliable: {why}" for why in trust.unreliable.values()]
    need = trust.need_text(fps)
    if need and (trust.unreliable or timing == "not measurable"):
        what = "the peak period and the figures built on it" if trust.unreliable else "the peak for timing"
        notes.append(f"{need} would resolve {what}: three peak periods ({trust.duration:.3g} s now)")
    return notes



# -- the command -----------------------------------------------------------------------


def _header_notes(
    first: dict[str, Any], last: dict[str, Any], count: int, fps: float, size: float, metres_per_unit: float
) -> list[str]:
    """Where the files' own headers (their frame rate or time stamps, their tile size)
    disagree with what the command line says; the command line wins."""
    notes = []
    header_fps = header_number(first, "oceanfield.fps")
    t_first = header_number(first, "oceanfield.time_s", positive=False)
    t_last = header_number(last, "oceanfield.time_s", positive=False)
    if header_fps is None and t_first is not None and t_last is not None and count > 1 and t_last > t_first:
        header_fps = (count - 1) / (t_last - t_first)
    if header_fps is not None and abs(header_fps / fps - 1.0) > 1e-3:
        notes.append(f"the files say {header_fps:.4g} fps; using --fps {fps:g}")
    header_size = header_number(first, "oceanfield.tile_size")
    if header_size is not None and abs(header_size * metres_per_unit / size - 1.0) > 1e-3:
        notes.append(
            f"the files say the tile is {header_size * metres_per_unit:g} m ({header_size:g} scene units); "
            f"using --tile-size {size:g} m"
        )
    return notes


def _size_and_rate(args: argparse.Namespace, attributes: dict[str, Any], metres_per_unit: float) -> tuple[float, float]:
    """Tile size in metres and frame rate: the command line's, else the files' own headers."""
    size = _given_or_header(
        args.tile_size, "--tile-size", "metres", attributes, "oceanfield.tile_size",
        missing="how large an area they cover", allowed="the side of the area in metres, e.g. --tile-size 256",
        scale=metres_per_unit,
    )
    fps = _given_or_header(
        args.fps, "--fps", "frames per second", attributes, "oceanfield.fps",
        missing="their frame rate", allowed="frames per second, e.g. --fps 24",
    )
    return size, fps


def _given_or_header(
    given: object, option: str, unit: str, attributes: dict[str, Any], attribute: str,
    *, missing: str, allowed: str, scale: float = 1.0,
) -> float:
    """An option's value when given (a finite number > 0), else the header attribute's
    times ``scale``; ValueError when neither says (what the files do not say: ``missing``)."""
    if given is not None:
        return check_positive(option, given, unit)
    value = header_number(attributes, attribute)
    if value is None:
        raise ValueError(f"{option}: not given, and the files do not say {missing}; allowed: {allowed}")
    return value * scale


def run_analyze_command(args: argparse.Namespace) -> int:
    """``oceanfield analyze``: read a sequence, measure it, print the verdict (or JSON),
    write the report picture if asked. User errors raise ValueError (exit status 2)."""
    if args.report is not None:
        report = Path(args.report)
        if report.suffix.lower() != ".png":
            raise ValueError(f"--report: {args.report!r} is not allowed; allowed: a file name ending in .png")
        from ..io.atomic import prepare_option_output

        prepare_option_output("--report", report)  # its folder made if missing, before any frame is read
    files = select_frames(expand_sequence(args.sequence), args.frames)
    # Decompress each file's chunks on every core (the OpenEXR binding's pool; 1024² ZIP
    # displacement files: 19 ms a file on 2 threads against 25-27 ms on one).
    set_encoder_threads(os.cpu_count() or 1)
    if files and args.channel is None:
        foam_channel = _foam_channel(*read_channels(files[0][1]))
        if foam_channel is not None:
            return _analyze_foam(args, files, foam_channel)
    if len(files) < MIN_FRAMES:
        raise ValueError(
            f"sequence: {len(files)} frame{'s' if len(files) != 1 else ''} matched {args.sequence!r}; "
            f"the frequency analysis needs at least {MIN_FRAMES} (64 or more resolve a sea well)"
        )
    channels, attributes = read_channels(files[0][1])
    if args.metres_per_unit is not None:
        metres_per_unit = check_positive("--metres-per-unit", args.metres_per_unit, "metres per scene unit")
    else:
        metres_per_unit = header_number(attributes, "oceanfield.metres_per_unit") or 1.0
    size, fps = _size_and_rate(args, attributes, metres_per_unit)
    header_up = attributes.get("oceanfield.up_axis")
    up_axis = args.up_axis or (header_up if header_up in ("y", "z") else "y")
    layout = choose_layout(channels, attributes, channel=args.channel, up_axis=up_axis, path=files[0][1])
    rows, cols = channels[layout.height].shape
    if args.crop is not None:
        x0, y0, n = parse_crop(args.crop, rows, cols, min_size=MIN_RESOLUTION)
        periodic: bool | None = False if n < min(rows, cols) or rows != cols else None
    elif rows != cols:
        raise ValueError(
            f"sequence: the frames are {cols}×{rows} texels; the analysis needs a square region: pass --crop X,Y,SIZE"
        )
    else:
        x0, y0, n, periodic = 0, 0, rows, None
    region = (slice(y0, y0 + n), slice(x0, x0 + n))
    spacing = size / cols
    depth = np.inf
    target = None
    if args.against is not None:
        from ..preset.schema import load_preset, to_sea_state

        target = to_sea_state(load_preset(args.against))
        depth = target.depth
    if args.depth is not None:
        depth = check_depth(args.depth, "--depth")

    accumulator = SequenceAccumulator(len(files), n, n * spacing, fps, periodic=periodic)
    first_shape = (rows, cols)
    needed = [layout.height] + ([layout.lateral[0], layout.lateral[2]] if layout.lateral else [])
    last_attributes = attributes
    settings = []  # (frame, settings hash in its header)
    for index, (frame_number, path) in enumerate(files):
        if index:
            channels, last_attributes = read_channels(path)
            missing = [name for name in needed if name not in channels]
            if missing:
                raise ValueError(
                    f"sequence: '{path}' has no channel {missing[0]!r}; available: {', '.join(sorted(channels))}"
                )
        settings.append((frame_number, last_attributes.get("oceanfield.preset_hash")))
        shape = channels[layout.height].shape
        if shape != first_shape:
            raise ValueError(
                f"sequence: '{path}' is {shape[1]}×{shape[0]} texels but '{files[0][1]}' is "
                f"{first_shape[1]}×{first_shape[0]}; all frames must share one resolution"
            )
        height = channels[layout.height][region] * np.float32(metres_per_unit)
        lateral = None
        if layout.lateral is not None:
            x_name, x_sign, y_name, y_sign = layout.lateral
            lateral = (
                channels[x_name][region] * np.float32(x_sign * metres_per_unit),
                channels[y_name][region] * np.float32(y_sign * metres_per_unit),
            )
        accumulator.add(height, lateral)
        del channels
    result = accumulator.finish(depth=depth, target=target)
    notes = _header_notes(attributes, last_attributes, len(files), fps, size, metres_per_unit)
    mixed = mixed_settings_note(settings)
    if mixed:
        notes.insert(0, mixed)
    if layout.lateral is not None and args.up_axis is None and header_up not in ("y", "z"):
        notes.append("the up axis of the displacement map was assumed to be y; pass --up-axis if it is z")
    if notes:
        result = _with_notes(result, notes)
    frame_numbers = [frame for frame, _ in files]
    source = (
        f"{len(files)} files {files[0][1].name} … {files[-1][1].name}, {layout.description}, "
        f"× {metres_per_unit:g} m per unit" + (f", crop {x0},{y0},{n}" if args.crop is not None else "")
    )
    if args.json:
        data = result.to_dict()
        data["source"] = {
            "sequence": args.sequence,
            "files": len(files),
            "first_frame": frame_numbers[0],
            "last_frame": frame_numbers[-1],
            "channel": layout.height,
            "layout": layout.description,
            "metres_per_unit": metres_per_unit,
            "crop": None if args.crop is None else [x0, y0, n],
            "against": args.against,
        }
        trust = assess(result)
        data.update(trust.to_dict(result.fps))
        for band, record in zip(result.bands or (), data["bands"] or ()):
            long_l, short_l, long_t, short_t = band_scales(band.omega_low, band.omega_high, band.k_low, band.k_high)
            record.update(wavelength_long_m=long_l, wavelength_short_m=short_l, period_long_s=long_t,
                          period_short_s=short_t)
        data["notes"] = data["notes"] + reliability_notes(trust, result.fps, timing=result.dispersion.status)
        print(json.dumps(data, indent=2))
    else:
        print(format_verdict(result, against=args.against, source=source))
    if args.report is not None:
        from .plot import write_report

        try:
            verdict = format_verdict(result, against=args.against)
            written = write_report(result, args.report, title=f"{args.sequence}", against=args.against,
                                   verdict=verdict)
        except OSError as error:  # an unwritable folder or a full disk: the user's to fix
            raise ValueError(str(error)) from None
        if not args.json:
            print(f"report written to {written}")
    return 0


def _foam_channel(channels: dict[str, Any], attributes: dict[str, Any]) -> str | None:
    """The channel of a foam map (``oceanfield.map`` = foam), else None."""
    if attributes.get("oceanfield.map") != "foam":
        return None
    for name in ("Y", "foam.Y"):
        if name in channels:
            return name
    return None


def _analyze_foam(args: argparse.Namespace, files: list, channel: str) -> int:
    """``oceanfield analyze`` on a foam sequence: the measured foam coverage."""
    from .foam import FoamAccumulator, format_foam_coverage

    accumulator = FoamAccumulator()
    for _, path in files:
        channels, _ = read_channels(path)
        if channel not in channels:
            raise ValueError(f"sequence: '{path}' has no channel {channel!r}; available: {', '.join(sorted(channels))}")
        accumulator.add(channels[channel])
    result = accumulator.finish()
    if args.json:
        data = result.to_dict()
        data["source"] = {"sequence": args.sequence, "files": len(files), "channel": channel}
        print(json.dumps(data, indent=2))
    else:
        print(format_foam_coverage(result, f"{len(files)} files {files[0][1].name} … {files[-1][1].name}, channel {channel}"))
    return 0


def _with_notes(result: SequenceAnalysis, notes: Sequence[str]) -> SequenceAnalysis:
    """The result with ``notes`` put before its own."""
    return replace(result, notes=tuple(notes) + result.notes)
