"""A preset sized by a measured record: reading (io/records.py), the preset plumbing
(preset/record.py), the wavespectra oracle, bad records, and render → analyze.

Oracle: wavespectra 4.9 builds JONSWAP/Pierson–Moskowitz spectra with Cartwright's cos-2s
spreading (Longuet-Higgins et al. 1963) and writes them as netCDF; its own statistics
(``hs``, ``tp``, ``dm``, ``dspr``: WMO-No. 702 moments, Kuik et al. 1988 direction and
spread) are the reference for ours computed from the imported file.
"""

from __future__ import annotations

import math
import shutil
import sys
from pathlib import Path

import numpy as np
import pytest

from oceanfield.cli import main
from oceanfield.preset import PresetError, dump_preset, load_preset, preset_hash, to_sea_state

wavespectra = pytest.importorskip("wavespectra")
from wavespectra.construct import construct_partition  # noqa: E402

#: The issue's oracle tolerances: Hs 0.5 %, Tp one frequency bin, direction 2°, spread 2°.
HS_TOLERANCE = 0.005
DIRECTION_TOLERANCE_DEG = 2.0
SPREAD_TOLERANCE_DEG = 2.0
#: Render → analyze: the imported Hs within 2 % (the issue's figure).
RENDERED_HS_TOLERANCE = 0.02
#: Analyzed mean direction of travel against the record's, degrees (as tests/test_analyze.py:
#: lattice sampling of a 25° spread over ~1000 modes moves the realised mean by about 1°).
RENDERED_DIRECTION_TOLERANCE_DEG = 5.0


def _angle_deg(a: float, b: float) -> float:
    return abs(math.remainder(a - b, 360.0))


# -- records built by wavespectra ----------------------------------------------------------

_CASES = {
    # name: (partitions [(freq kind, freq kwargs, dm from°, dspr°)], freq grid, direction step°)
    "jonswap_5deg": ([("jonswap", {"fp": 0.1, "hs": 2.5, "gamma": 3.3}, 250.0, 25.0)], "uniform", 5.0),
    "pm_swell_geometric": ([("pierson_moskowitz", {"fp": 0.07, "hs": 1.5}, 10.0, 12.0)], "geometric", 2.0),
    "jonswap_10deg_broad": ([("jonswap", {"fp": 0.2, "hs": 1.0, "gamma": 2.0}, 135.0, 40.0)], "uniform", 10.0),
    "swell_and_wind_sea": (
        [("jonswap", {"fp": 0.07, "hs": 1.2, "gamma": 5.0}, 240.0, 12.0),
         ("jonswap", {"fp": 0.2, "hs": 1.0, "gamma": 3.3}, 330.0, 30.0)],
        "uniform", 5.0,
    ),
}


def _grid(kind: str) -> np.ndarray:
    if kind == "geometric":  # the 1.1 ratio wave models write
        return 0.035 * 1.1 ** np.arange(32)
    return np.round(np.arange(0.03, 0.5001, 0.005), 6)


def _build(name: str):
    """The wavespectra DataArray efth(freq, dir) of a case."""
    partitions, kind, step = _CASES[name]
    freq, dirs = _grid(kind), np.arange(0.0, 360.0, step)
    total = None
    for shape, kwargs, dm, dspr in partitions:
        part = construct_partition(shape, "cartwright", {"freq": freq, **kwargs}, {"dir": dirs, "dm": dm, "dspr": dspr})
        total = part if total is None else total + part
    return total


def _write_netcdf(folder: Path, name: str) -> Path:
    path = folder / f"{name}.nc"
    _build(name).to_dataset(name="efth").spec.to_netcdf(path)  # wavespectra's own writer
    return path


def _write_moments_csv(folder: Path, name: str, efth) -> Path:
    """The spectrum as a buoy table: E(f) and a1, b1, a2, b2 over compass 'coming from'
    directions (Longuet-Higgins et al. 1963), from wavespectra's 2-D spectrum."""
    freq = efth.freq.values
    alpha = np.radians(efth.dir.values)
    step = math.radians(float(efth.dir.values[1] - efth.dir.values[0]))
    table = np.asarray(efth.values, dtype=np.float64) * 180.0 / math.pi  # per radian
    one_d = table.sum(axis=1) * step
    rows = ["# test record", "frequency_hz,density_m2_per_hz,a1,b1,a2,b2"]
    for i, f in enumerate(freq):
        d = table[i] / one_d[i] if one_d[i] > 0 else np.full(alpha.size, 1.0 / (2 * math.pi))
        c = [float(np.sum(d * g(n * alpha)) * step) for n, g in ((1, np.cos), (1, np.sin), (2, np.cos), (2, np.sin))]
        rows.append(",".join(repr(float(v)) for v in (f, one_d[i], *c)))
    path = folder / f"{name}.csv"
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    return path


def _preset(folder: Path, record: str, *, north: float = 90.0, extra: str = "", top: str = "",
            name: str = "imported") -> Path:
    """A preset of one record component; ``extra`` lines go into the component, ``top``
    lines at the top level."""
    path = folder / f"{name}.yaml"
    path.write_text(
        f"description: imported record\n"
        f"sea:\n  components:\n    - label: record\n      record:\n        file: {record}\n{extra}"
        f"{top}scene:\n  north_deg: {north}\n",
        encoding="utf-8",
    )
    return path


def _from_bearing(theta_rad: float, north_deg: float) -> float:
    """Our direction of travel → nautical 'coming from' bearing, degrees clockwise from north."""
    return (north_deg - math.degrees(theta_rad) + 180.0) % 360.0


def _oracle(efth) -> dict[str, float]:
    spec = efth.spec
    return {"hs": float(spec.hs(tail=False)), "tp": float(spec.tp()), "dm": float(spec.dm()),
            "dspr": float(spec.dspr())}


@pytest.mark.parametrize("north", [90.0, 30.0])
@pytest.mark.parametrize("kind", ["netcdf", "csv"])
@pytest.mark.parametrize("name", list(_CASES))
def test_imported_statistics_match_wavespectra(tmp_path, name, kind, north):
    """Hs within 0.5 %, Tp within one frequency bin, mean direction and spread within 2° of
    wavespectra's own statistics of the same spectrum (the file read back by wavespectra)."""
    netcdf = _write_netcdf(tmp_path, name)
    efth = wavespectra.read_netcdf(netcdf).efth.load()
    record = netcdf if kind == "netcdf" else _write_moments_csv(tmp_path, name, efth)
    stats = to_sea_state(load_preset(_preset(tmp_path, record.name, north=north))).statistics()
    expected = _oracle(efth)
    assert stats.hs == pytest.approx(expected["hs"], rel=HS_TOLERANCE)
    freq = efth.freq.values
    peak = int(np.argmin(np.abs(freq - 1.0 / expected["tp"])))
    assert abs(1.0 / stats.tp - 1.0 / expected["tp"]) <= np.gradient(freq)[peak]
    assert _angle_deg(_from_bearing(stats.mean_direction, north), expected["dm"]) <= DIRECTION_TOLERANCE_DEG
    assert abs(math.degrees(stats.directional_spread) - expected["dspr"]) <= SPREAD_TOLERANCE_DEG


def test_tail_matches_wavespectras_high_frequency_tail(tmp_path):
    """wavespectra's hs(tail=True) adds ∫ E_N (f/f_N)^−5 df = E_N f_N/4 above 0.333 Hz; an
    f-5 tail named in the preset adds the same power law from the top band edge."""
    netcdf = _write_netcdf(tmp_path, "jonswap_5deg")
    efth = wavespectra.read_netcdf(netcdf).efth.load()
    path = _preset(tmp_path, netcdf.name, extra="        tail: f-5\n")
    stats = to_sea_state(load_preset(path)).statistics()
    assert stats.hs == pytest.approx(float(efth.spec.hs(tail=True)), rel=HS_TOLERANCE)
    assert stats.hs > float(efth.spec.hs(tail=False))


def test_north_deg_turns_the_record_on_the_tile(tmp_path):
    """Coming from 250° (WSW), north at +y: the waves run towards 70° clockwise from north,
    i.e. 20° counter-clockwise from +x; with north at +x (0°), towards −70°."""
    netcdf = _write_netcdf(tmp_path, "jonswap_5deg")
    for north, expected in ((90.0, 20.0), (0.0, -70.0), (-45.0, -115.0)):
        stats = to_sea_state(load_preset(_preset(tmp_path, netcdf.name, north=north))).statistics()
        assert _angle_deg(math.degrees(stats.mean_direction), expected) <= 0.1


def test_going_to_records_are_not_turned_round(tmp_path):
    netcdf = _write_netcdf(tmp_path, "jonswap_5deg")
    path = _preset(tmp_path, netcdf.name, extra="        directions: going_to\n")
    stats = to_sea_state(load_preset(path)).statistics()
    assert _angle_deg(math.degrees(stats.mean_direction), 90.0 - 250.0) <= 0.1


def test_demo_record_preset_carries_both_seas():
    """The shipped demo: a 13.5 s swell from about 235° and a 5.2 s wind sea from about
    318° (invented numbers); the record's spectrum peaks at the swell."""
    preset = load_preset("headland_buoy_record")
    sea = to_sea_state(preset)
    component = sea.components[0]
    stats = sea.statistics()
    assert stats.hs == pytest.approx(math.hypot(1.3, 1.1), rel=0.02)
    assert stats.tp == pytest.approx(13.5, rel=0.04)
    direction, _ = component.mean_directions()
    bearings = [(_from_bearing(d, 90.0)) for d in direction]
    at = {round(f, 3): b for f, b in zip(component.frequency, bearings)}
    assert _angle_deg(at[0.075], 235.0) <= 2.0
    assert _angle_deg(at[0.2], 318.0) <= 3.0


# -- the preset: round trip, hash, pin -----------------------------------------------------


def test_dump_round_trip_and_hash_follow_the_contents_not_the_path(tmp_path):
    record = Path(load_preset("headland_buoy_record").sea.components[0].record.file)
    first, second = tmp_path / "a", tmp_path / "b"
    first.mkdir(), second.mkdir()
    for folder in (first, second):
        shutil.copy(record, folder / record.name)
    one = load_preset(_preset(first, record.name))
    two = load_preset(_preset(second, record.name))
    assert one != two  # different files
    assert preset_hash(one) == preset_hash(two)  # the same contents render the same frames
    dumped = tmp_path / "dumped.yaml"
    dumped.write_text(dump_preset(one), encoding="utf-8")
    again = load_preset(dumped)
    assert again == one and preset_hash(again) == preset_hash(one)
    # An edited record changes the render hash, and the dump's sha256 pin refuses it.
    with open(first / record.name, "a", encoding="utf-8") as handle:
        handle.write("0.600,0.00001,0.1,0.0,0.0,0.0\n")
    assert preset_hash(load_preset(_preset(first, record.name))) != preset_hash(one)
    with pytest.raises(PresetError, match="sha256.*has changed"):
        load_preset(dumped)


def test_a_table_without_directions_takes_the_presets(tmp_path):
    """A heave-only record: E(f) from the table, one direction and spread from the preset
    (from 200°, spread 20°; north +y → towards 20° clockwise from north = 70° from +x)."""
    (tmp_path / "heave.csv").write_text(
        "frequency_hz,density_m2_per_hz\n0.08,0.2\n0.09,1.0\n0.10,0.6\n0.11,0.2\n", encoding="utf-8"
    )
    path = _preset(tmp_path, "heave.csv", extra="        direction_deg: 200\n        spread_deg: 20\n")
    stats = to_sea_state(load_preset(path)).statistics()
    assert stats.hs == pytest.approx(4.0 * math.sqrt(2.0 * 0.01), rel=1e-9)  # Σ E Δf, Δf = 0.01 Hz
    assert _angle_deg(math.degrees(stats.mean_direction), 70.0) <= 0.1
    assert math.degrees(stats.directional_spread) == pytest.approx(20.0, abs=0.1)
    half = _preset(tmp_path, "heave.csv", extra="        direction_deg: 200\n")
    with pytest.raises(PresetError, match="spread_deg: needs a value"):
        load_preset(half)


def test_record_component_takes_only_label_and_record(tmp_path):
    shutil.copy(Path(load_preset("headland_buoy_record").sea.components[0].record.file), tmp_path / "r.csv")
    path = _preset(tmp_path, "r.csv", extra="      wind_speed_mps: 10\n")
    with pytest.raises(PresetError, match=r"imported.yaml:\d+: sea.components.0.wind_speed_mps: does not apply"):
        load_preset(path)


# -- bad records: one line with the file and the row, exit 2 -------------------------------

_GOOD_ROWS = ["0.05,0.1,0.5,0.1,0.2,0.0", "0.06,0.5,0.6,0.1,0.3,0.0", "0.07,0.2,0.6,0.2,0.3,0.1"]
_HEADER = "frequency_hz,density_m2_per_hz,a1,b1,a2,b2"


@pytest.mark.parametrize(
    "text, line, fragment",
    [
        ([_HEADER, _GOOD_ROWS[0], _GOOD_ROWS[2], _GOOD_ROWS[1]], 4, "frequencies must rise"),
        ([_HEADER, _GOOD_ROWS[0], _GOOD_ROWS[1], _GOOD_ROWS[1]], 4, "repeats"),
        ([_HEADER, _GOOD_ROWS[0], "0.06,-0.5,0.6,0.1,0.3,0.0", _GOOD_ROWS[2]], 3, "negative"),
        ([_HEADER, _GOOD_ROWS[0], "0.06,nan,0.6,0.1,0.3,0.0", _GOOD_ROWS[2]], 3, "finite"),
        ([_HEADER, _GOOD_ROWS[0], "0.06,0.5,0.9,0.6,0.3,0.0", _GOOD_ROWS[2]], 3, "r1"),
        ([_HEADER, _GOOD_ROWS[0], "0.06,0.5,0.5,0.1,1.1,0.0", _GOOD_ROWS[2]], 3, "r2"),
        ([_HEADER, _GOOD_ROWS[0], "0.06,0.5,abc,0.1,0.3,0.0", _GOOD_ROWS[2]], 3, "`abc` is not a number"),
        ([_HEADER, _GOOD_ROWS[0], "0.06,0.5,0.1", _GOOD_ROWS[2]], 3, "3 cells"),
        (["frequency_hz,a1,b1,a2,b2", "0.05,0.5,0.1,0.2,0.0"], 1, "no column `density_m2_per_hz`"),
        (["frequency_hz,density_m2_per_hz", "0.05,0.1", "0.06,0.2"], 1, "no directions"),
        (["# just a note", "name,colour", "1,2"], 2, "no column `frequency_hz`"),
        (["# nothing but comments"], None, "holds no table"),
    ],
)
def test_bad_tables_exit_2_with_file_and_row(tmp_path, capsys, text, line, fragment):
    (tmp_path / "bad.csv").write_text("\n".join(text) + "\n", encoding="utf-8")
    path = _preset(tmp_path, "bad.csv")
    assert main(["stats", str(path)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1, err
    assert "imported.yaml" in err and "sea.components.0.record" in err
    assert fragment in err
    if line is not None:
        assert f"bad.csv:{line}" in err or f"line {line}" in err


def test_a_binary_file_is_not_a_table(tmp_path, capsys):
    (tmp_path / "bad.csv").write_bytes(b"\x89PNG\r\n\x1a\n\x00\x00\x00")
    assert main(["stats", str(_preset(tmp_path, "bad.csv"))]) == 2
    err = capsys.readouterr().err
    assert "bad.csv" in err and "not a text table" in err


def test_a_netcdf_without_a_spectrum_is_refused(tmp_path, capsys):
    import xarray

    xarray.Dataset({"hs": ("time", np.ones(3))}).to_netcdf(tmp_path / "waves.nc")
    assert main(["stats", str(_preset(tmp_path, "waves.nc"))]) == 2
    err = capsys.readouterr().err
    assert "waves.nc" in err and "no variable `efth`" in err


def test_a_netcdf_with_several_times_needs_one(tmp_path, capsys):
    efth = _build("jonswap_5deg")
    import xarray

    times = np.array(["2026-03-14T09:00", "2026-03-14T10:00"], dtype="datetime64[ns]")
    series = xarray.concat([efth, efth * 2.0], dim=xarray.DataArray(times, dims="time", name="time"))
    series.to_dataset(name="efth").to_netcdf(tmp_path / "series.nc")
    assert main(["stats", str(_preset(tmp_path, "series.nc"))]) == 2
    assert "holds 2 times" in capsys.readouterr().err
    later = load_preset(_preset(tmp_path, "series.nc", extra="        time: '2026-03-14T10:00'\n"))
    earlier = load_preset(_preset(tmp_path, "series.nc", extra="        time: '2026-03-14T09:00'\n"))
    ratio = to_sea_state(later).statistics().hs / to_sea_state(earlier).statistics().hs
    assert ratio == pytest.approx(math.sqrt(2.0), rel=1e-6)
    unquoted = load_preset(_preset(tmp_path, "series.nc", extra="        time: 2026-03-14T10:00:00Z\n"))
    assert to_sea_state(unquoted).statistics().hs == pytest.approx(to_sea_state(later).statistics().hs)
    assert main(["stats", str(_preset(tmp_path, "series.nc", extra="        time: '2026-03-15T00:00'\n"))]) == 2
    assert "no spectrum at 2026-03-15T00:00" in capsys.readouterr().err


def test_missing_netcdf_support_is_one_clear_line(tmp_path, capsys, monkeypatch):
    netcdf = _write_netcdf(tmp_path, "jonswap_5deg")
    monkeypatch.setitem(sys.modules, "xarray", None)  # import xarray now raises ImportError
    assert main(["stats", str(_preset(tmp_path, netcdf.name))]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    assert "pip install 'oceanfield[measured]'" in err


def test_missing_record_file_names_the_key(tmp_path, capsys):
    assert main(["stats", str(_preset(tmp_path, "nowhere.csv"))]) == 2
    err = capsys.readouterr().err
    assert "sea.components.0.record.file" in err and "no such file" in err


# -- render → analyze -----------------------------------------------------------------------


def test_rendered_record_analyzes_to_its_height_direction_and_spectrum(tmp_path):
    """A deep JONSWAP record (Hs 1 m, fp 0.25 Hz, from 300°, spread 25°) with north at
    30°: the lattice carries the record's variance; the rendered frames' Hs is the record's
    within 2 % (the tile holds 64 peak wavelengths, so a random realisation strays by about
    0.8 %, one standard deviation of Σ|h0|²), their mean direction of travel
    the record's (−90°: towards 120° clockwise from north is 90° clockwise from a north at
    30°), and every resolved band of the analyzer's verdict is "ok"."""
    from oceanfield.analysis import analyze_heights
    from oceanfield.surface.synth import Ocean

    freq = np.round(np.arange(0.1, 0.4501, 0.005), 6)  # inside the tile's Nyquist (0.5 Hz)
    efth = construct_partition("jonswap", "cartwright", {"freq": freq, "fp": 0.25, "hs": 1.0, "gamma": 3.3},
                               {"dir": np.arange(0.0, 360.0, 5.0), "dm": 300.0, "dspr": 25.0})
    efth.to_dataset(name="efth").spec.to_netcdf(tmp_path / "deep.nc")
    wavelength = 9.80665 / (2 * math.pi * 0.25**2)
    size = 64.0 * wavelength  # ~16000 energetic lattice modes: realised Hs within ~0.8 % (1σ)
    overrides = [f"tile.size_m={size}", "tile.resolution=512", "surface.lateral_factor=0", "seed=0"]
    preset = load_preset(_preset(tmp_path, "deep.nc", north=30.0), overrides=overrides)
    sea = preset.sea_state()
    record_hs = float(efth.spec.hs(tail=False))
    assert sea.statistics().hs == pytest.approx(record_hs, rel=1e-3)
    ocean = Ocean.from_preset(preset)
    # The lattice carries the record's variance (energy conserved onto the wavenumbers).
    assert 4.0 * math.sqrt(ocean.lattice_variance) == pytest.approx(record_hs, rel=1e-3)
    fps = 2.0
    heights = np.array([ocean.frame(i / fps).height for i in range(32)])
    result = analyze_heights(heights, size, fps, target=sea)
    assert result.hs == pytest.approx(record_hs, rel=RENDERED_HS_TOLERANCE)
    assert _angle_deg(math.degrees(result.mean_direction), -90.0) <= RENDERED_DIRECTION_TOLERANCE_DEG
    verdicts = [band.verdict for band in result.bands]
    assert set(verdicts) <= {"ok", "negligible", "not resolved"}, verdicts
    assert verdicts.count("ok") >= 3


def test_render_then_analyze_through_the_command_line(tmp_path, capsys):
    """`oceanfield render` of a record preset, then `oceanfield analyze --against` it: the
    frames carry the record's direction and every resolved band is "ok". The 16-wavelength
    tile holds ~1000 modes, so Hs is checked against the record within 3 standard errors
    of a random realisation (5 %); the 2 % figure is the larger tile's, above."""
    import json

    freq = np.round(np.arange(0.1, 0.4501, 0.005), 6)
    efth = construct_partition("jonswap", "cartwright", {"freq": freq, "fp": 0.25, "hs": 1.0, "gamma": 3.3},
                               {"dir": np.arange(0.0, 360.0, 5.0), "dm": 300.0, "dspr": 25.0})
    efth.to_dataset(name="efth").spec.to_netcdf(tmp_path / "deep.nc")
    size = 16.0 * 9.80665 / (2 * math.pi * 0.25**2)
    path = _preset(tmp_path, "deep.nc", north=30.0, top=(
        f"tile:\n  size_m: {size}\n  resolution: 128\nsurface:\n  lateral_factor: 0.0\nmaps: [height]\n"
        f"time:\n  fps: 2.0\n  first_frame: 1\n  last_frame: 32\n"
    ))
    out = tmp_path / "renders"
    assert main(["render", str(path), "--out", str(out), "--workers", "1"]) == 0
    capsys.readouterr()
    assert main(["analyze", str(out / "imported"), "--against", str(path), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["target_hs_m"] == pytest.approx(float(efth.spec.hs(tail=False)), rel=1e-3)
    assert data["hs_m"] == pytest.approx(data["target_hs_m"], rel=0.05)
    assert _angle_deg(data["towards_deg"], 270.0) <= RENDERED_DIRECTION_TOLERANCE_DEG
    verdicts = [band["verdict"] for band in data["bands"]]
    assert set(verdicts) <= {"ok", "negligible", "not resolved"}, verdicts
    assert verdicts.count("ok") >= 3


@pytest.mark.parametrize("depth", ["deep", 8.0, 3.0])
def test_the_lattice_carries_the_records_variance_at_the_presets_depth(tmp_path, depth):
    """Frequencies reach wavenumbers through the dispersion relation at the preset's depth
    (Ψ = S(ω(k)) D (dω/dk)/k): the lattice's variance Σ Ψ Δk² is the record's m0 = Σ E Δf
    (midpoint sums over ~1000 energetic cells: 1 %), shallow water or deep."""
    from oceanfield.surface.synth import Ocean

    freq = np.arange(0.15, 0.4501, 0.01)
    rows = "".join(f"{f:.3f},{e:.6f},200,30\n" for f, e in zip(freq, _wide_peak(freq)))
    (tmp_path / "r.csv").write_text("frequency_hz,density_m2_per_hz,direction_deg,spread_deg\n" + rows, encoding="utf-8")
    preset = load_preset(_preset(tmp_path, "r.csv"),
                         overrides=[f"sea.depth_m={depth}", "tile.size_m=400", "tile.resolution=256"])
    sea = preset.sea_state()
    record = float(np.sum(sea.components[0].density * np.gradient(sea.components[0].frequency)))
    assert sea.moment(0) == pytest.approx(record, rel=1e-9)
    assert Ocean.from_preset(preset).lattice_variance == pytest.approx(record, rel=0.01)


def _wide_peak(f: np.ndarray) -> np.ndarray:
    """A smooth invented spectrum peaking at 0.25 Hz (m²/Hz)."""
    return 0.5 * np.exp(-(((f - 0.25) / 0.06) ** 2))


def test_a_record_and_the_other_sizings_replace_each_other(tmp_path):
    """--set or an extending preset that sizes a component one way replaces the other way:
    a Beaufort force replaces a record; a record replaces every parametric key but the label."""
    record = load_preset("headland_buoy_record").sea.components[0].record.file
    beaufort = load_preset("headland_buoy_record", overrides=["sea.components.0.beaufort=5"])
    assert beaufort.sea.components[0].record is None and beaufort.sea.components[0].beaufort == 5
    swapped = load_preset("swell_under_wind_sea", overrides=[f"sea.components.1.record.file={record}"])
    assert swapped.sea.components[1].record is not None
    assert swapped.sea.components[1].label == "local wind sea"
    assert swapped.sea.components[0].significant_height_m == 1.5
    shutil.copy(record, tmp_path / "r.csv")
    child = tmp_path / "child.yaml"
    child.write_text("extends: swell_under_wind_sea\nsea:\n  components:\n    0:\n      record: {file: r.csv}\n",
                     encoding="utf-8")
    extended = load_preset(child)
    assert extended.sea.components[0].record is not None and extended.sea.components[1].beaufort == 5
    again = tmp_path / "again.yaml"
    again.write_text(dump_preset(extended), encoding="utf-8")
    assert load_preset(again) == extended
