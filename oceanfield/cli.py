"""The ``oceanfield`` command line: parse, call, report.

Knows nothing of formulas, files or frames: each command calls the room that does the work.

Every user error passes through :func:`_fail`, which prints one clear block to stderr and
returns exit status 2. Heavy imports (numba kernels, OpenEXR, matplotlib, Dask) happen
inside the commands that need them, so ``oceanfield --help`` is instant.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import math
import signal
import sys
import threading
from typing import Sequence

__all__ = ["build_parser", "main"]

_PROG = "oceanfield"


class UserError(Exception):
    """A mistake in what the user asked for: reported in one block, exit status 2."""


def _fail(message: str) -> int:
    print(f"{_PROG}: error: {message}", file=sys.stderr)
    return 2


def _add_preset_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("preset", help="a shipped preset's name (see 'oceanfield presets') or a YAML file")
    parser.add_argument(
        "--set",
        dest="overrides",
        action="append",
        default=[],
        metavar="KEY=VALUE",
        help="override a preset key, e.g. --set sea.components.0.wind_speed_mps=14 (repeatable)",
    )


def _add_shot_arguments(parser: argparse.ArgumentParser, *, table: bool) -> None:
    parser.add_argument("--frames", default=None, help="frame range A-B or list A,B,C (default: the preset's)")
    parser.add_argument("--scene-units", action="store_true",
                        help="positions and body lengths in the scene's horizontal axes and units instead of tile metres")
    if table:
        parser.add_argument("--out", default=None, metavar="FILE", help="write a .csv or .json file (default: CSV on stdout)")
        parser.add_argument("--json", action="store_true", help="print JSON instead of CSV")


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of every command."""
    parser = argparse.ArgumentParser(
        prog=_PROG,
        description="Tileable animated ocean surfaces for visual effects, checked against physics.",
    )
    parser.add_argument("--version", action="version", version=f"%(prog)s {_version()}")
    commands = parser.add_subparsers(dest="command", metavar="COMMAND")
    commands.required = True

    listing = commands.add_parser("presets", help="list the shipped presets with their sea statistics")
    listing.add_argument("--json", action="store_true", help="print JSON instead of a table")

    stats = commands.add_parser("stats", help="print a preset's sea: heights, periods, wavelengths, Beaufort")
    _add_preset_arguments(stats)
    stats.add_argument("--json", action="store_true", help="print JSON instead of text")

    resolve = commands.add_parser("resolve", help="print the preset with every default filled in (YAML)")
    _add_preset_arguments(resolve)

    preview = commands.add_parser(
        "preview", help="write one picture of a preset (top view, height, foam, spectrum), or a flipbook"
    )
    _add_preset_arguments(preview)
    shown = preview.add_mutually_exclusive_group()
    shown.add_argument("--frame", type=int, default=None, help="frame number (default: the first)")
    shown.add_argument("--frames", default=None, metavar="A-B",
                       help="write a flipbook of these frames' top view instead (GIF, or MP4 with the video extra)")
    preview.add_argument("--out", default=None,
                         help="file to write (default: renders/<preset>_preview.png, or .gif with --frames)")

    render = commands.add_parser("render", help="render a preset's map sequence")
    _add_preset_arguments(render)
    render.add_argument("--frames", default=None, help="frame range A-B or list A,B,C (default: the preset's)")
    render.add_argument("--chunk", default=None, metavar="I/N", help="render only chunk I of N of the frames (1-based)")
    render.add_argument("--workers", type=int, default=None, help="local worker processes (default: chosen from the job size, the cores and the free memory)")
    render.add_argument("--scheduler", default=None, metavar="ADDRESS", help="a Dask distributed scheduler to render on")
    render.add_argument("--out", default=None, metavar="DIR", help="output root (default: ./renders)")
    render.add_argument("--overwrite", action="store_true", help="render every frame again, complete ones too, after removing the folder's "
                        "frames of other settings (all of them, also outside --frames)")

    probe = commands.add_parser("probe", help="the surface above points: height, displacement, normal, velocity per frame")
    _add_preset_arguments(probe)
    probe.add_argument("--at", action="append", required=True, metavar="[NAME=]X,Y",
                       help="a horizontal position in the tile's axes, metres (x along image columns, y along rows); repeatable")
    _add_shot_arguments(probe, table=True)

    float_ = commands.add_parser("float", help="floating bodies riding the sea: position and rotation per frame")
    _add_preset_arguments(float_)
    float_.add_argument("--body", action="append", default=[], metavar="KEY=VALUE,...",
                        help="a waterplane: x_m, y_m, length_m, beam_m, optional heading_deg (bow, counter-clockwise "
                             "from +x), name, and per motion (heave, pitch, roll) a damped response: "
                             "<motion>_period_s with <motion>_damping; repeatable (optional when the preset has "
                             "vessels: they float on their courses)")
    _add_shot_arguments(float_, table=True)

    scene = commands.add_parser("scene", help="write the animated sea, its material, probes and bodies as a USD stage")
    _add_preset_arguments(scene)
    scene.add_argument("--out", required=True, metavar="FILE.usda", help="the stage to write (.usda text, .usd/.usdc binary)")
    scene.add_argument("--at", action="append", default=[], metavar="[NAME=]X,Y", help="a probe, as for 'probe'; repeatable")
    scene.add_argument("--body", action="append", default=[], metavar="KEY=VALUE,...", help="a floating body, as for 'float'; repeatable")
    scene.add_argument("--mesh-resolution", type=int, default=None, metavar="N",
                       help="sea mesh quads per side, a divisor of the tile resolution (default: up to 128)")
    scene.add_argument("--maps", default=None, metavar="DIR", help="the render output root the material's map files are under (default: ./renders)")
    scene.add_argument("--render-maps", action="store_true", help="render the map sequences into --maps first")
    _add_shot_arguments(scene, table=False)
    _add_look_parser(commands)
    compile_ = commands.add_parser(
        "compile", help="compile the frame, probe, wake and look kernels into numba's cache once (for a farm image)",
        description="Compile every frame kernel, the probes', the wakes' and the look's into numba's on-disk cache, so "
                    "that no render, probe, float, scene or look pays for compilation. Run it once when a farm image is built; point the nodes at the same "
                    "folder with the NUMBA_CACHE_DIR environment variable.")
    compile_.add_argument("--cache-dir", default=None, metavar="DIR",
                          help="cache folder (default: $NUMBA_CACHE_DIR, else numba's own beside the package)")

    analyze = commands.add_parser("analyze", help="measure a height sequence's spectrum, statistics and wave timing; of a foam sequence, its foam coverage")
    analyze.add_argument("sequence", help="a folder of frames, a glob, or a pattern with #### for the frame number")
    analyze.add_argument("--tile-size", type=float, default=None, metavar="METRES",
                         help="side of the area the frames cover (default: from oceanfield's EXR header)")
    analyze.add_argument("--fps", type=float, default=None, help="frames per second (default: from oceanfield's EXR header)")
    analyze.add_argument("--channel", default=None, help="EXR channel holding height (default: from our header, else Y, else the up "
                         "channel of RGB: G, or B for z up)")
    analyze.add_argument("--depth", type=float, default=None, metavar="METRES", help="water depth (default: deep)")
    analyze.add_argument("--against", default=None, metavar="PRESET", help="compare with a preset's target spectrum")
    analyze.add_argument("--frames", default=None, help="frame range A-B to read")
    analyze.add_argument("--crop", default=None, metavar="X,Y,SIZE", help="analyse a square region (texels from the bottom-left corner); not periodic")
    analyze.add_argument("--metres-per-unit", type=float, default=None, help="scene scale of the values (default: from header, else 1)")
    analyze.add_argument("--up-axis", choices=("y", "z"), default=None, help="up axis of RGB displacement maps")
    analyze.add_argument("--json", action="store_true", help="print every figure as JSON")
    analyze.add_argument("--report", default=None, metavar="FILE.png", help="write a report picture")
    return parser


# -- look: the sea seen as the camera will (one self-contained block) -----------------------


def _add_look_parser(commands) -> None:
    look = commands.add_parser(
        "look", help="a perspective picture of the sea from a camera, lit by a clear sky and the sun (PNG + EXR)",
        description="Render the preset's sea as a camera at a height sees it, toward the horizon: the sky mirrored "
                    "with water's Fresnel reflectance, the sun's glitter from the slopes (Cox & Munk roughness "
                    "beyond the tile), the deep water's colour and the foam. Writes a PNG with a caption and a "
                    "linear EXR beside it, or with --frames a flipbook. Angles in degrees, counter-clockwise "
                    "from the tile's +x axis like towards_deg; the Earth is a sphere (--flat-sea for a plane).")
    _add_preset_arguments(look)
    shown = look.add_mutually_exclusive_group()
    shown.add_argument("--frame", type=int, default=None, help="frame number (default: the first)")
    shown.add_argument("--frames", default=None, metavar="A-B", help="write a flipbook of these frames (GIF, or MP4 with the video extra)")
    look.add_argument("--camera-height", type=float, default=None, metavar="METRES", help="lens height above the mean sea (default 10)")
    look.add_argument("--heading", type=float, default=None, metavar="DEG",
                      help="where the camera looks, counter-clockwise from +x (default: into the oncoming waves)")
    look.add_argument("--pitch", type=float, default=None, metavar="DEG", help="above the horizontal, negative looks down (default -8)")
    look.add_argument("--fov", type=float, default=None, metavar="DEG", help="field of view across the picture (default 60)")
    look.add_argument("--sun-elevation", type=float, default=None, metavar="DEG", help="the sun above the horizon (default 25)")
    look.add_argument("--sun-azimuth", type=float, default=None, metavar="DEG",
                      help="the sun's direction, counter-clockwise from +x (default: 20 to the left of the heading)")
    look.add_argument("--turbidity", type=float, default=None, help="haze of the Preetham sky, 2 (very clear) to 10 (default 3)")
    look.add_argument("--exposure", type=float, default=None, metavar="EV", help="stops brighter than the grey-card exposure (default 0)")
    look.add_argument("--size", default=None, metavar="WxH", help="picture size in pixels (default 1280x720)")
    look.add_argument("--flat-sea", action="store_true", help="a flat sea to infinity (horizon at eye level) instead of the round Earth")
    look.add_argument("--clear-air", action="store_true", help="no haze between the camera and the sea (it fades into the horizon's sky by default)")
    look.add_argument("--out", default=None,
                      help="file to write (default: renders/<preset>_look.png and .exr beside it, or .gif with --frames)")


def _cmd_look(args: argparse.Namespace) -> int:
    from .look.writing import look_from_arguments, write_look_flipbook, write_still

    preset = _load(args, allow_outside_output=True)
    _warn(preset)
    look = look_from_arguments(preset, args)
    _warn_wakes_left_out(preset, "look", "`oceanfield preview` shows them")
    if args.frames is not None:
        from .render.plan import parse_frames

        path = write_look_flipbook(look, parse_frames(args.frames, preset.time.frames), out=args.out)
        print(f"look flipbook written to {path}")
        return 0
    png, exr = write_still(look, frame=args.frame, out=args.out)
    print(f"look written to {png} (linear beauty: {exr})")
    return 0


def _version() -> str:
    from . import __version__

    return __version__


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit status.

    Run as a program (``argv`` None: the ``oceanfield`` command, ``python -m
    oceanfield.cli``), it tunes the garbage collector for a process that loads numba and
    then exits. During a render its full collections come ten times less often (numba's
    set-up makes millions of objects, and the two full scans of them took 0.07 s of a
    one-frame render; the young generations are still collected as usual), and once any
    command is done the collector is frozen: the interpreter's last collections over those
    objects took a fifth of a second more (atexit handlers, flushes and the files written
    are untouched; only cycles still alive are left to the operating system). Called with
    arguments (tests, scripts), it leaves the collector alone.
    """
    try:
        return _main(argv, program=argv is None)
    finally:
        if argv is None:
            import gc

            gc.freeze()


def _tune_collector(command: str) -> None:
    """Rarer full collections for a render (see :func:`main`); other commands as they are."""
    if command == "render":
        from .render.job import collect_rarely

        collect_rarely()


def _main(argv: Sequence[str] | None, *, program: bool) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    handler = _COMMANDS[args.command]
    if program:
        _tune_collector(args.command)
    try:
        with _terminate_interrupts():
            status = handler(args)
            sys.stdout.flush()  # here, where a reader gone away is caught, not at exit
            return status
    except UserError as error:
        return _fail(str(error))
    except ValueError as error:  # validation at a public boundary: the user's input
        return _fail(str(error))
    except MemoryError as error:  # a size the schema allows, more than this machine holds
        first = str(error).strip().splitlines()[0] if str(error).strip() else "the machine's memory is full"
        return _fail(f"out of memory ({first}); allowed: smaller sizes (tile.resolution, wake.resolution, "
                     "bands.composite_resolution, --workers) or a machine with more memory")
    except BrokenPipeError:  # the reader went away (`oceanfield presets | head -1`)
        return _closed_pipe()
    except OSError as error:  # a file the command could not read or write: one line naming it
        return _fail(_file_error_text(error))
    except KeyboardInterrupt as error:  # Ctrl-C, or SIGTERM (see _terminate_interrupts)
        signum = getattr(error, "signum", signal.SIGINT)
        print(f"{_PROG}: {'interrupted (Ctrl-C)' if signum == signal.SIGINT else 'stopped by SIGTERM'}",
              file=sys.stderr)
        return 128 + signum  # the shell's convention: 130 for SIGINT, 143 for SIGTERM


def _file_error_text(error: OSError) -> str:
    """``path: reason`` for the operating system's errors; our own file errors say it already."""
    text = str(error)
    if text.startswith("[Errno") and error.filename is not None:
        return f"{error.filename}: {error.strerror}"
    return text


def _closed_pipe() -> int:
    """Stop quietly when stdout's reader has gone: point stdout at /dev/null so the
    interpreter's last flush does not fail again, and return SIGPIPE's status (141), as
    a program killed by the signal would."""
    import os

    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os.close(devnull)
    except (OSError, ValueError, AttributeError):  # no real stdout (a test's capture)
        pass
    return 128 + getattr(signal, "SIGPIPE", 13)


class _Terminated(KeyboardInterrupt):
    """SIGTERM, turned into an exception so a command stops as cleanly as on Ctrl-C."""

    signum = signal.SIGTERM


@contextlib.contextmanager
def _terminate_interrupts():
    """While a command runs in the main thread, SIGTERM raises :class:`_Terminated`."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def handler(signum, frame) -> None:  # noqa: ARG001 - a signal handler's signature
        signal.signal(signal.SIGTERM, signal.SIG_IGN)  # once: let the command clean up
        raise _Terminated

    previous = signal.signal(signal.SIGTERM, handler)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


# -- commands ------------------------------------------------------------------------------


def _load(args: argparse.Namespace, *, allow_outside_output: bool = False):
    from .preset.schema import load_preset

    return load_preset(args.preset, overrides=tuple(args.overrides), allow_outside_output=allow_outside_output)


def _warn(preset, *, folding: bool = True) -> None:
    from .preset.warnings import preset_warnings
    from .preset.stats import fold_warning

    messages = list(preset_warnings(preset))
    if folding:
        message = fold_warning(preset)
        if message:
            messages.append(message)
    for message in messages:
        print(f"{_PROG}: warning: {message}", file=sys.stderr)


def _cmd_presets(args: argparse.Namespace) -> int:
    from .preset.schema import PresetError, list_presets, load_preset, to_sea_state
    from .preset.stats import figure_text

    rows = []
    for name, _path, description in list_presets():
        if name == "reference":
            continue
        try:
            preset = load_preset(name)
        except PresetError as error:  # a broken shipped preset is a bug, but list the rest
            rows.append({"name": name, "description": description, "error": str(error)})
            continue
        stats = to_sea_state(preset).statistics()
        rows.append(
            {
                "name": name,
                "description": description,
                "hs_m": stats.hs,
                "tp_s": stats.tp,
                "peak_wavelength_m": stats.peak_wavelength,
                "towards_deg": round(math.degrees(stats.mean_direction), 6) % 360.0,
                "beaufort": stats.beaufort,
            }
        )
    if args.json:
        print(json.dumps(rows, indent=2))
        return 0
    print(f"{'preset':<24} {'Hs m':>7} {'Tp s':>6} {'λp m':>8} {'towards':>8} {'Bft':>4}  description")
    for row in rows:
        if "error" in row:
            print(f"{row['name']:<24} (does not load: {row['error']})")
            continue
        print(
            f"{row['name']:<24} {figure_text(row['hs_m'], 2):>7} {figure_text(row['tp_s'], 2):>6} "
            f"{figure_text(row['peak_wavelength_m'], 1):>8} "
            f"{round(row['towards_deg']) % 360:>7d}° {row['beaufort']:>4d}  {row['description']}"
        )
    return 0


def _cmd_stats(args: argparse.Namespace) -> int:
    from .preset.stats import sea_report

    preset = _load(args)
    _warn(preset, folding=False)  # the report states the folded share itself
    bar = None
    if preset.tile.resolution >= _STATS_ESTIMATE_RESOLUTION and not preset.bands.active:
        # A large tile: say what building it and measuring four frames costs, and show the build.
        import os

        from tqdm import tqdm

        from .render.estimate import estimate_work

        cores = os.cpu_count() or 1
        estimate = estimate_work(preset, _STATS_FRAMES, 1, cores, written=False)
        print(f"{_PROG}: stats at {preset.tile.resolution}² builds the ocean and measures folding and foam on "
              f"{_STATS_FRAMES} frames: {estimate.line(_STATS_FRAMES, 1).removeprefix('estimate: ')}",
              file=sys.stderr, flush=True)
        bar = tqdm(total=preset.tile.resolution, unit="row", desc="building the ocean", file=sys.stderr,
                   mininterval=0.5 if sys.stderr.isatty() else 10.0)
    try:
        report = sea_report(preset, build_progress=None if bar is None else bar.update)
    finally:
        if bar is not None:
            bar.close()
    if preset.vessels:  # the vessels and their wake (preset.vessels)
        from .preset.vessels import wake_report

        report["wake"] = wake_report(preset)
    if args.json:
        print(json.dumps(report, indent=2))
    else:
        from .preset.stats import format_sea_report

        print(format_sea_report(report))
        if preset.vessels:
            from .preset.vessels import format_wake_report

            print("\n".join(format_wake_report(report["wake"])))
    return 0


#: `stats` on tiles this large first says what it will cost and shows the ocean's build.
_STATS_ESTIMATE_RESOLUTION = 4096
_STATS_FRAMES = 4  # frames `stats` synthesises to measure the folded and foamy shares


def _cmd_resolve(args: argparse.Namespace) -> int:
    from .preset.schema import dump_preset

    print(dump_preset(_load(args)), end="")
    return 0


def _warn_wakes_left_out(preset, command: str, shown: str) -> None:
    """One warning where a picture of the tiled (or banded) sea alone is made of a preset
    with vessels: their wakes are missing from it, and where to see them instead."""
    if preset.vessels:
        names = ", ".join(vessel.name for vessel in preset.vessels)
        print(f"{_PROG}: warning: {command}: the wakes of the vessels ({names}) are not drawn, only the sea; "
              f"{shown} and `oceanfield render` writes them (wake_* maps)", file=sys.stderr)


def _cmd_preview(args: argparse.Namespace) -> int:
    from .preset.preview import write_preview

    preset = _load(args, allow_outside_output=True)
    _warn(preset)
    if args.frames is not None:
        from .preset.preview import write_flipbook
        from .render.plan import parse_frames

        frames = parse_frames(args.frames, preset.time.frames)
        _warn_wakes_left_out(preset, "preview --frames", "the still preview shows them")
        path = write_flipbook(preset, frames, out=args.out)
        print(f"flipbook of {len(frames)} frames written to {path}")
        return 0
    path = write_preview(preset, frame=args.frame, out=args.out)
    print(f"preview written to {path}")
    return 0


def _cmd_render(args: argparse.Namespace) -> int:
    from .render.job import run_render_command

    return run_render_command(args)


def _cmd_compile(args: argparse.Namespace) -> int:
    import os

    if args.cache_dir is not None:
        if "numba" in sys.modules:  # numba reads the variable once, when it is imported
            raise UserError("--cache-dir: numba is already loaded in this process; set NUMBA_CACHE_DIR instead")
        folder = os.path.abspath(args.cache_dir)
        try:
            os.makedirs(folder, exist_ok=True)
        except OSError as error:
            raise UserError(f"--cache-dir: cannot create {folder!r} ({error.strerror or error})") from None
        os.environ["NUMBA_CACHE_DIR"] = folder
    import time

    from .io.exr import half_converter_ready
    from .surface.warmup import compile_kernels

    from .look.writing import compile_look_kernels

    seconds = compile_kernels()
    started = time.perf_counter()
    compile_look_kernels()  # the look's ray march and shading
    half_converter_ready()  # the EXR writer's half-float converter (io._half)
    seconds += time.perf_counter() - started
    where = os.environ.get("NUMBA_CACHE_DIR") or "numba's cache beside the package (__pycache__)"
    print(f"kernels compiled and cached in {where} ({seconds:.1f} s)")
    if args.cache_dir is not None:
        print(f"on every node that renders, set NUMBA_CACHE_DIR={os.environ['NUMBA_CACHE_DIR']}")
    return 0


def _cmd_analyze(args: argparse.Namespace) -> int:
    from .analysis.verdict import run_analyze_command

    return run_analyze_command(args)


def _cmd_probe(args: argparse.Namespace) -> int:
    from .render.shot import run_probe_command

    return run_probe_command(args)


def _cmd_float(args: argparse.Namespace) -> int:
    from .render.shot import run_float_command

    return run_float_command(args)


def _cmd_scene(args: argparse.Namespace) -> int:
    from .render.shot import run_scene_command

    return run_scene_command(args)


_COMMANDS = {
    "presets": _cmd_presets,
    "stats": _cmd_stats,
    "resolve": _cmd_resolve,
    "preview": _cmd_preview,
    "render": _cmd_render,
    "analyze": _cmd_analyze,
    "probe": _cmd_probe,
    "float": _cmd_float,
    "scene": _cmd_scene,
    "compile": _cmd_compile,
    "look": _cmd_look,
}


if __name__ == "__main__":
    raise SystemExit(main())
