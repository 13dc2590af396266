"""The command line's looking commands: presets, stats, resolve, preview, and its errors."""

from __future__ import annotations

import json
import math
import re
import subprocess
import sys

import numpy as np
import pytest

import oceanfield.cli as cli
from oceanfield.cli import main
from oceanfield.preset import dump_preset, list_presets, load_preset, to_sea_state
from oceanfield.surface.synth import Ocean

SMALL = ("--set", "tile.resolution=64")


def test_presets_lists_every_shipped_preset_with_its_figures(capsys):
    assert main(["presets", "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)
    shipped = {name for name, _path, _description in list_presets()} - {"reference"}
    assert {row["name"] for row in rows} == shipped
    assert len(shipped) >= 9
    for row in rows:
        expected = to_sea_state(load_preset(row["name"])).statistics()
        assert row["hs_m"] == pytest.approx(expected.hs, rel=1e-12)
        assert row["tp_s"] == pytest.approx(expected.tp, rel=1e-12)


def test_presets_table_is_readable(capsys):
    assert main(["presets"]) == 0
    out = capsys.readouterr().out
    assert out.splitlines()[0].split()[:3] == ["preset", "Hs", "m"]
    assert "storm_force_ten" in out


def test_stats_json_matches_the_sea_state(capsys):
    assert main(["stats", "fresh_chop", "--json", *SMALL]) == 0
    report = json.loads(capsys.readouterr().out)
    preset = load_preset("fresh_chop", overrides=("tile.resolution=64",))
    stats = to_sea_state(preset).statistics()
    assert report["total"]["hs_m"] == pytest.approx(stats.hs, rel=1e-12)
    assert report["total"]["tm02_s"] == pytest.approx(stats.tm02, rel=1e-12)
    assert report["total"]["peak_wavelength_m"] == pytest.approx(stats.peak_wavelength, rel=1e-12)
    # The lattice's cell-integrated Ψ over the sea's m0: near 1 for a tile of a few peak
    # wavelengths, and never above it (cells are disjoint).
    assert 0.8 < report["tile"]["captured_variance_share"] <= 1.0
    assert 0.0 <= report["folded_surface_share"] <= 1.0
    assert report["components"][0]["beaufort"] == 6
    # Second order (Longuet-Higgins 1963; Tayfun 1980): a Beaufort 6 chop skews by about
    # 3 kp σ = 0.19 if long-crested, less when spread; its bound waves are on by default.
    second = report["second_order"]
    assert second["on"] is True and second["setting"] == "auto"
    assert 0.1 < second["skewness"] < 0.19
    assert second["crest_trough_ratio"] > 1.05


def test_stats_reports_realised_height_and_whitecap_share(capsys):
    """The tile's Hs for the preset's seed beside the requested one, and the whitecap share
    the wind calls for, W(U10) = 3.84e-6 U10^3.41 (Monahan & O'Muircheartaigh 1980), beside
    the foam share measured on the report's frames (within a factor 1.5, the check of
    issue 11)."""
    from oceanfield.physics.whitecaps import whitecap_coverage

    assert main(["stats", "fresh_chop", "--json", *SMALL]) == 0
    report = json.loads(capsys.readouterr().out)
    preset = load_preset("fresh_chop", overrides=("tile.resolution=64",))
    ocean = Ocean.from_preset(preset, foam_memory=0.0)
    assert report["tile"]["realised_hs_m"] == pytest.approx(ocean.realised_hs, rel=1e-12)
    assert report["tile"]["realised_hs_m"] == pytest.approx(report["total"]["hs_m"], rel=0.02)
    wind = preset.sea_state().components[0].wind_speed
    assert report["whitecap_coverage"] == pytest.approx(float(whitecap_coverage(wind)), rel=1e-12)
    assert report["whitecap_coverage"] / 1.5 <= report["foam_surface_share"] <= 1.5 * report["whitecap_coverage"]
    assert main(["stats", "fresh_chop", *SMALL]) == 0
    out = capsys.readouterr().out
    assert f"{report['tile']['realised_hs_m']:.2f} m in this tile" in out and "whitecaps on" in out


def test_stats_text_names_each_component_and_the_total(capsys):
    assert main(["stats", "swell_under_wind_sea", *SMALL]) == 0
    out = capsys.readouterr().out
    assert "total" in out and "captured:" in out and "folding:" in out
    assert re.search(r"second order: skewness [0-9.]+, mean crest / mean trough [0-9.]+", out)


@pytest.mark.parametrize("size, texel", [("768", "(6 m texels"), ("20", "(31.2 cm texels")])
def test_stats_gives_the_texel_in_the_unit_that_suits_it(capsys, size, texel):
    """A 768 m tile at 128² has 6 m texels ("6 m", not "600.0 cm"); 20 m at 64², 31.2 cm ones."""
    assert main(["stats", "fresh_chop", "--set", f"tile.size_m={size}",
                 "--set", f"tile.resolution={128 if size == '768' else 64}"]) == 0
    assert texel in capsys.readouterr().out


def test_resolve_round_trips_to_identical_settings_and_pixels(capsys, tmp_path):
    assert main(["resolve", "shallow_coastal", *SMALL]) == 0
    text = capsys.readouterr().out
    saved = tmp_path / "resolved.yaml"
    saved.write_text(text, encoding="utf-8")
    original = load_preset("shallow_coastal", overrides=("tile.resolution=64",))
    again = load_preset(saved)
    assert again == original
    assert dump_preset(again).splitlines()[1:] == dump_preset(original).splitlines()[1:]
    first = Ocean.from_preset(original).frame(1.25)
    second = Ocean.from_preset(again).frame(1.25)
    assert np.array_equal(first.height, second.height)
    assert np.array_equal(first.normal, second.normal)


def test_preview_writes_a_picture_that_is_not_blank(tmp_path, capsys):
    out = tmp_path / "look.png"
    assert main(["preview", "swell_under_wind_sea", *SMALL, "--out", str(out)]) == 0
    assert str(out) in capsys.readouterr().out
    import imageio.v3 as iio

    picture = iio.imread(out)
    assert picture.shape[:2] == (1000, 1600)  # 16 × 10 inches at 100 dpi
    grey = picture[..., :3].astype(float).mean(axis=-1)
    assert grey.std() > 20.0  # panels, curves and a shaded sea, not a flat page


@pytest.mark.parametrize(
    "argv, fragment",
    [
        (["stats", "no_such_sea"], "no_such_sea"),
        (["stats", "fresh_chop", "--set", "tile.resolution=abc"], "tile.resolution"),
        (["stats", "fresh_chop", "--set", "sea.depth_m=-3"], "depth_m"),
        (["preview", "fresh_chop", *SMALL, "--out", "/dev/null/x.png"], "--out"),  # a folder under a file
        (["preview", "fresh_chop", *SMALL, "--out", "picture.jpg"], "--out"),
    ],
)
def test_user_errors_exit_2_with_one_clear_block(argv, fragment, capsys):
    assert main(argv) == 2
    captured = capsys.readouterr()
    assert captured.err.startswith("oceanfield: error: ")
    assert fragment in captured.err
    assert "Traceback" not in captured.err


def test_a_malformed_preset_file_names_its_line(tmp_path, capsys):
    bad = tmp_path / "storm.yaml"
    bad.write_text("seed: 3\ntile:\n  size_m: 100\n  resoluton: 128\n", encoding="utf-8")
    assert main(["stats", str(bad)]) == 2
    err = capsys.readouterr().err
    assert "storm.yaml:4" in err and "resolution" in err


def test_argparse_errors_exit_2(capsys):
    with pytest.raises(SystemExit) as stop:
        main(["stats"])
    assert stop.value.code == 2


def test_help_is_instant_and_compiles_nothing():
    """--help must not import numba, OpenEXR or matplotlib (STYLE: heavy imports inside commands)."""
    code = (
        "import sys\n"
        "from oceanfield.cli import main\n"
        "try:\n    main(['--help'])\nexcept SystemExit:\n    pass\n"
        "heavy = [m for m in ('numba', 'OpenEXR', 'matplotlib', 'distributed') if m in sys.modules]\n"
        "print('HEAVY', heavy)\n"
    )
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert "HEAVY []" in result.stdout, result.stdout + result.stderr


def test_the_installed_command_runs():
    result = subprocess.run(["oceanfield", "stats", "moderate_breeze", *SMALL], capture_output=True, text=True, timeout=120)
    assert result.returncode == 0, result.stderr
    assert "moderate_breeze" in result.stdout


def test_compile_command_warms_the_kernel_cache(capsys):
    """`oceanfield compile` runs every frame path (here the kernels are cached already)."""
    assert main(["compile"]) == 0
    assert "oceanfield.io._half" in sys.modules  # the EXR writer's half converter too
    out = capsys.readouterr().out
    assert out.startswith("kernels compiled and cached in ")


def test_compile_covers_the_probes_kernel_too():
    """`oceanfield probe`, `float` and `scene` sum waves at points with their own kernel: a
    farm image compiled with `oceanfield compile` must hold it as well, or every node pays
    its compilation (seconds) on each shot command."""
    code = ("from oceanfield.surface import _sums\n"
            "from oceanfield.surface.warmup import compile_kernels\n"
            "compile_kernels()\n"
            "print('SIGNATURES', len(_sums.surface_point_kernel.signatures))\n")
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=300)
    assert "SIGNATURES 1" in result.stdout, result.stdout + result.stderr


def test_compile_covers_the_wake_and_look_kernels():
    """A farm image compiled with `oceanfield compile` holds the wakes' kernels (a render of a
    preset with vessels) and the look's (its ray march), or each node compiles them again."""
    code = ("from oceanfield.cli import main\n"
            "from oceanfield.surface import _wake_kernels\n"
            "from oceanfield.look import _kernels\n"
            "assert main(['compile']) == 0\n"
            "print('WAKE', len(_wake_kernels.wake_spectra_kernel.signatures),"
            " len(_wake_kernels.wake_point_kernel.signatures))\n"
            "print('LOOK', len(_kernels.render_kernel.signatures))\n")
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=300)
    assert "WAKE 1 1" in result.stdout and "LOOK 1" in result.stdout, result.stdout + result.stderr


def test_compile_refuses_a_cache_dir_once_numba_is_loaded(capsys, tmp_path):
    import numba  # noqa: F401 - loaded, as in any process that has rendered

    assert main(["compile", "--cache-dir", str(tmp_path / "kernels")]) == 2
    err = capsys.readouterr().err
    assert err.startswith("oceanfield: error: --cache-dir:") and "NUMBA_CACHE_DIR" in err
    assert not (tmp_path / "kernels").exists()


def test_stats_on_a_large_tile_says_its_cost_and_shows_the_build(capsys, monkeypatch):
    """Past the size threshold (lowered here to fit a 64² test) stats prints its memory and
    time estimate and a build bar on stderr; stdout stays the report (here JSON)."""
    import oceanfield.cli as cli

    monkeypatch.setattr(cli, "_STATS_ESTIMATE_RESOLUTION", 64)
    assert main(["stats", "fresh_chop", "--json", *SMALL]) == 0
    captured = capsys.readouterr()
    assert json.loads(captured.out)["tile"]["resolution"] == 64
    assert re.search(r"oceanfield: stats at 64² builds the ocean and measures folding and foam on 4 frames: "
                     r"about [\d.]+ (KB|MB) of memory and \d+ s", captured.err), captured.err
    assert "building the ocean" in captured.err and "64/64" in captured.err


def test_run_as_a_program_the_collector_is_frozen_for_a_quick_exit(monkeypatch, capsys):
    """``oceanfield …`` (argv from the command line) makes full collections rarer and freezes
    the garbage collector when the command is done, so neither the start nor the exit scans
    numba's objects again and again (about 0.3 s of every farm chunk together); ``main([...])``
    from Python leaves the collector alone."""
    import gc

    gc.unfreeze()
    threshold = gc.get_threshold()
    try:
        assert main(["resolve", "moderate_breeze"]) == 0
        assert gc.get_freeze_count() == 0 and gc.get_threshold() == threshold
        monkeypatch.setattr(sys, "argv", ["oceanfield", "resolve", "moderate_breeze"])
        assert main() == 0
        assert gc.get_freeze_count() > 0
        assert gc.get_threshold() == threshold  # only a render makes full collections rarer
        cli._tune_collector("render")
        assert gc.get_threshold()[:2] == threshold[:2] and gc.get_threshold()[2] >= 100
    finally:
        gc.unfreeze()
        gc.set_threshold(*threshold)
    assert capsys.readouterr().out.count("seed:") == 2  # both runs printed the resolved preset


def test_output_cut_short_by_a_closed_pipe_ends_quietly():
    """`oceanfield presets | head -1`: the reader goes away; the command stops without a
    traceback and with the status of a process ended by SIGPIPE (141), as `yes | head` does."""
    process = subprocess.Popen([sys.executable, "-m", "oceanfield.cli", "presets"], stdout=subprocess.PIPE,
                               stderr=subprocess.PIPE)
    process.stdout.close()  # nobody reads: the first print meets a broken pipe
    _, err = process.communicate(timeout=120)
    assert process.returncode == 141, err.decode()
    assert err.decode() == ""


def test_a_file_error_reaching_the_command_line_is_one_line_and_exit_2(monkeypatch, capsys):
    """A file the command cannot read or write (an OSError no room turned into a message of
    its own) still ends as one line naming the path, exit 2, never a traceback."""
    def unwritable(args):
        raise FileNotFoundError(2, "No such file or directory", "/nowhere/table.csv")

    monkeypatch.setitem(cli._COMMANDS, "presets", unwritable)
    assert main(["presets"]) == 2
    error = capsys.readouterr().err.strip().splitlines()
    assert error == ["oceanfield: error: /nowhere/table.csv: No such file or directory"]


def test_small_seas_keep_their_figures_in_the_tables(capsys):
    """A pond's 0.14 m peak wavelength read "0.1" in `presets` (one decimal for metres):
    a figure keeps its column's decimals unless they leave it under two significant
    digits, then it keeps three."""
    from oceanfield.preset.stats import figure_text

    assert [figure_text(v, 1) for v in (0.1423, 76.14, 0.0, 0.00871)] == ["0.142", "76.1", "0.0", "0.00871"]
    assert [figure_text(v, 2) for v in (0.8, 0.3, 0.01, 0.0123, 2.171)] == ["0.80", "0.30", "0.01", "0.0123", "2.17"]
    assert main(["presets"]) == 0
    lines = capsys.readouterr().out.splitlines()
    pond = next(l for l in lines if l.startswith("pond_ripples"))
    assert pond.split()[1:4] == ["0.01", "0.30", "0.142"]
    assert next(l for l in lines if l.startswith("shallow_coastal")).split()[1] == "0.80"


@pytest.mark.parametrize("settings, cause", [
    (("tile.size_m=200",), "waves too long for the 200 m tile: raise tile.size_m"),
    (("tile.resolution=16",), "shorter than two texels: raise tile.resolution"),
])
def test_stats_says_why_a_tile_cannot_hold_the_hs_asked_and_what_to_change(capsys, settings, cause, tmp_path):
    """Issue 24: with wave heights as requested a tile's variance is its lattice's
    Σ Ψ Δk² exactly, so its Hs is 4√(captured share · m0); where that is more than 2 % off
    the Hs asked, ``stats`` says so in words (the share missing, and whether it is in waves
    too long for the tile or too short for its texels) and ``--json`` carries the figures.
    long_swell on a 200 m tile (0.6 peak wavelengths) and fresh_chop at 16² (10 m texels
    against its 49.5 m peak)."""
    name = "long_swell" if "size" in settings[0] else "fresh_chop"
    overrides = [item for setting in settings for item in ("--set", setting)]
    assert main(["stats", name, "--json", *overrides]) == 0
    report = json.loads(capsys.readouterr().out)
    tile = report["tile"]
    captured = tile["captured_variance_share"]
    assert tile["realised_over_requested_hs"] == pytest.approx(math.sqrt(captured), rel=1e-6)
    assert tile["realised_over_requested_hs"] < 0.98
    assert tile["long_wave_share"] + tile["unresolved_short_wave_share"] == pytest.approx(1.0 - captured, abs=1e-9)
    assert cause in tile["hs_shortfall"]
    assert f"{tile['realised_over_requested_hs'] * 100:.0f} % of the" in tile["hs_shortfall"]
    assert main(["stats", name, *overrides]) == 0
    assert cause in capsys.readouterr().out
    # the shipped preset holds its Hs: nothing to explain
    assert main(["stats", name, "--json", "--set", "tile.resolution=64"]) == 0
    shipped = json.loads(capsys.readouterr().out)["tile"]
    assert shipped["hs_shortfall"] is None and shipped["realised_over_requested_hs"] == pytest.approx(1.0, abs=0.02)


def test_running_out_of_memory_is_one_line_naming_the_sizes_to_lower(monkeypatch, capsys):
    """A size the schema allows can still be more than the machine holds (a 8192² wake region
    over a wide lattice, a 16384² composite): numpy's MemoryError becomes one line naming the
    settings that set the memory, exit 2, not a traceback."""
    def too_big(args):
        raise MemoryError("Unable to allocate 549. MiB for an array with shape (12000, 6001) and data type float64")

    monkeypatch.setitem(cli._COMMANDS, "stats", too_big)
    status = main(["stats", "fresh_chop"])
    err = capsys.readouterr().err
    assert status == 2
    assert len(err.strip().splitlines()) == 1
    assert err.startswith("oceanfield: error: out of memory (Unable to allocate 549. MiB")
    assert "tile.resolution, wake.resolution, bands.composite_resolution" in err
