"""The bands section of a preset: reading, stats, render files, hash of single tiles."""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield.io.exr import read_exr, read_exr_attributes
from oceanfield.preset.schema import PresetError, load_preset, preset_hash
from oceanfield.preset.stats import sea_report
from oceanfield.render.job import render
from oceanfield.render.plan import plan_render

SMALL = """\
description: small banded sea for tests
sea:
  components:
    - spectrum: elfouhaily
      wind_speed_mps: 8
      spreading: elfouhaily
      suppress_opposing: true
tile:
  resolution: 64
bands:
  reach_m: 60
  shortest_wave_m: 0.05
  max_resolution: 128
  composite_extent_m: 60
  composite_resolution: 48
maps: [displacement, normal]
time:
  first_frame: 1
  last_frame: 4
"""


def _write(tmp_path, text, name="banded.yaml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_single_tile_presets_keep_their_hash():
    """Adding the bands section changed no single-tile render: the hash leaves `bands` out
    (the canonical form as before bands existed), and a banded preset hashes differently.
    So does a preset without vessels leave out `vessels` and `wake`."""
    import hashlib
    import json

    from oceanfield.preset.resolved import _as_tree

    preset = load_preset("moderate_breeze")
    tree = _as_tree(preset)
    del tree["description"], tree["bands"], tree["vessels"], tree["wake"]
    canonical = json.dumps(tree, sort_keys=True, separators=(",", ":"), allow_nan=False)
    assert preset_hash(preset) == hashlib.sha256(canonical.encode("utf-8")).hexdigest()


def test_stats_report_each_band_and_the_totals(tmp_path):
    preset = load_preset(_write(tmp_path, SMALL))
    assert preset.sea.surface_tension_npm == pytest.approx(0.0728)  # bands reach 5 cm: clean water
    report = sea_report(preset)
    bands = report["bands"]
    assert len(bands) >= 2 and report["band_layout"]["chosen"]
    for a, b in zip(bands[:-1], bands[1:]):
        assert b["k_low_radpm"] == pytest.approx(a["k_high_radpm"])
    assert bands[-1]["k_high_radpm"] == pytest.approx(2 * math.pi / 0.05)
    assert report["hs_m"] == pytest.approx(math.sqrt(sum(b["hs_m"] ** 2 for b in bands)), rel=1e-12)
    assert report["mean_square_slope"] == pytest.approx(sum(b["mean_square_slope"] for b in bands), rel=1e-12)
    # Variance accounting (DESIGN: lattice sums approach ∫Ψ): to 1 % of the covered range
    sea = preset.sea_state()
    covered = sea.band_variance(0.5 * 2 * math.pi / bands[0]["size_m"], bands[-1]["k_high_radpm"])
    assert (report["hs_m"] / 4) ** 2 == pytest.approx(covered, rel=0.01)
    assert {"size_m", "resolution", "k_low_radpm", "k_high_radpm", "hs_m", "mean_square_slope"} <= set(bands[0])


@pytest.mark.parametrize(
    "change, message",
    [
        ("", "bands.shortest_wave_m: needs a value"),
        ("  tiles: [{size_m: 10, resolution: 32}]\n", "give either reach_m with shortest_wave_m or tiles"),
        ("  reach_m: 0.5\n", "bands.reach_m"),
    ],
)
def test_mistakes_name_the_key(tmp_path, change, message):
    text = SMALL.replace("  max_resolution: 128\n", change + "  max_resolution: 128\n")
    if "reach_m: 0.5" in change:
        text = text.replace("  reach_m: 60\n", "")
    if not change:
        text = text.replace("  shortest_wave_m: 0.05\n", "")
    with pytest.raises(PresetError, match=message):
        load_preset(_write(tmp_path, text))


def test_tile_size_with_a_reach_and_overlapping_tiles_are_refused(tmp_path):
    with pytest.raises(PresetError, match="tile.size_m has no effect with reach_m"):
        load_preset(_write(tmp_path, SMALL.replace("tile:\n", "tile:\n  size_m: 100\n")))
    listed = """\
tiles:
    - {size_m: 100, resolution: 64, shortest_wave_m: 4}
    - {size_m: 7.1, resolution: 64, longest_wave_m: 5, shortest_wave_m: 0.5}
"""
    text = SMALL.replace("tile:\n  resolution: 64\n", "").replace("  reach_m: 60\n  shortest_wave_m: 0.05\n", "  " + listed)
    with pytest.raises(PresetError, match="tiles 1 and 0 carry overlapping wavelengths"):
        load_preset(_write(tmp_path, text))
    fine = load_preset(_write(tmp_path, text.replace("longest_wave_m: 5", "longest_wave_m: 4")))
    assert fine.bands.active and fine.sea.surface_tension_npm == 0.0  # shortest 0.5 m: no tension
    with pytest.raises(PresetError, match="composite_extent_m: has no effect without bands"):
        load_preset(_write(tmp_path, "bands:\n  composite_extent_m: 100\n"))


def test_render_writes_each_band_and_the_composite_identically_however_split(tmp_path):
    """One run, two chunks and two worker processes write the same bytes (DESIGN: determinism)."""
    preset = load_preset(_write(tmp_path, SMALL))
    whole = plan_render(preset, root=tmp_path / "whole")
    summary = render(whole, workers=1)
    assert summary.ok
    files = whole.files(1)
    count = len(sea_report(preset)["bands"])
    assert set(files) == {f"band{b}_{m}" for b in range(count) for m in ("displacement", "normal")} | {
        "composite_displacement", "composite_normal"}
    channels, attributes = read_exr(files["band1_displacement"])
    assert attributes["oceanfield.tile_size"] == pytest.approx(sea_report(preset)["bands"][1]["size_m"])
    assert attributes["oceanfield.map"] == "displacement" and attributes["oceanfield.band"] == "band1"
    assert read_exr_attributes(files["composite_normal"])["oceanfield.tile_size"] == pytest.approx(60.0)
    split = tmp_path / "split"
    for chunk in ("1/2", "2/2"):
        assert render(plan_render(preset, root=split, chunk=chunk), workers=1).ok
    assert render(plan_render(preset, root=tmp_path / "workers"), workers=2).ok
    for frame in preset.time.frames:
        for name, path in whole.files(frame).items():
            for root in (split, tmp_path / "workers"):
                other = plan_render(preset, root=root).files(frame)[name]
                assert path.read_bytes() == other.read_bytes()


def test_preview_shows_the_composite_over_the_reach(tmp_path):
    import matplotlib.pyplot as plt

    from oceanfield.preset.preview import preview_figure

    preset = load_preset(_write(tmp_path, SMALL))
    figure = preview_figure(preset)
    title = figure._suptitle.get_text()
    assert "bands summed over 60 m" in title
    top = figure.axes[0].images[0]
    assert top.get_extent()[1] == pytest.approx(60.0)  # the whole reach, in metres
    plt.close(figure)


def test_flipbook_of_a_banded_preset(tmp_path):
    import imageio.v3 as iio

    from oceanfield.preset.preview import write_flipbook

    preset = load_preset(_write(tmp_path, SMALL))
    path = write_flipbook(preset, [1, 2], out=tmp_path / "clip.gif")
    frames = iio.imread(path)
    assert frames.shape[0] == 2 and frames.shape[1] >= 384


def test_probe_on_a_laid_out_banded_preset_reports_every_band(tmp_path, capsys):
    """What replaced the old refusal: a probe on a laid-out stack answers, and its height
    is the sum of every band's (each band's modes alone, summed at the probe's rest point)."""
    from oceanfield.cli import main
    from oceanfield.preset.banding import band_stack
    from oceanfield.surface.probes import surface_at

    path = _write(tmp_path, SMALL.replace("shortest_wave_m: 0.05", "shortest_wave_m: 2"))
    assert main(["probe", str(path), "--at", "1,2", "--frames", "1-1", "--json"]) == 0
    record = __import__("json").loads(capsys.readouterr().out)["records"][0]
    stack = band_stack(load_preset(path))
    assert len(stack.oceans) >= 2
    rest = (record["rest_x_m"], record["rest_y_m"])
    parts = [surface_at(o.modes(bound_share=1.0), *rest, 0.0, invert=False).displacement[2] for o in stack.oceans]
    # float64 sums of the same modes in another grouping: roundoff only
    assert record["height_m"] == pytest.approx(sum(parts), abs=1e-9)


def test_stats_json_of_the_shipped_banded_preset_carries_its_mean_square_slope(capsys):
    """Issue 24: ``stats --json`` of open_ocean_horizon reports the top-level
    ``mean_square_slope`` (not under ``tile`` or ``total``: a missing key reads null in a
    JSON query tool): a number, the sum of its bands', and within the ±0.004 scatter of
    Cox & Munk's (1954) clean-surface fit 0.003 + 5.12e-3 U at its 9.5 m/s wind (the fit
    from memory, see REFERENCES.md)."""
    import json

    from oceanfield.cli import main

    assert main(["stats", "open_ocean_horizon", "--json"]) == 0
    report = json.loads(capsys.readouterr().out)
    slope = report["mean_square_slope"]
    assert isinstance(slope, float)
    assert slope == pytest.approx(sum(b["mean_square_slope"] for b in report["bands"]), rel=1e-12)
    assert slope == pytest.approx(0.003 + 5.12e-3 * 9.5, abs=0.004)
    assert report["cox_munk_mean_square_slope"] == pytest.approx(0.003 + 5.12e-3 * 9.5, rel=1e-12)


@pytest.mark.parametrize("key, value, attribute", [("tile.wave_heights", "random", "wave_heights"),
                                                   ("surface.whitecap_scale", 2.0, "whitecap_scale")])
def test_a_banded_preset_builds_its_bands_with_its_own_tile_and_surface_settings(tmp_path, key, value, attribute):
    """Issue 24 (found re-measuring Hs): every band of a stack is built with the preset's
    ``tile.wave_heights`` and ``surface.whitecap_scale`` (they were left at their defaults,
    so ``wave_heights: random`` still held every ring to its target)."""
    from oceanfield.preset.banding import band_stack

    preset = load_preset(_write(tmp_path, SMALL), overrides=[f"{key}={value}"])
    stack = band_stack(preset, foam_memory=0.0)
    assert {getattr(ocean, attribute) for ocean in stack.oceans} == {value}
    if attribute == "wave_heights":  # freely drawn: some band strays from its target
        ratios = [ocean.realised_variance / ocean.lattice_variance for ocean in stack.oceans]
        assert max(abs(r - 1.0) for r in ratios) > 0.02
