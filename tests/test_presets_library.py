"""The shipped preset library: every preset loads cleanly and sizes the sea it promises."""

from __future__ import annotations

import math

import pytest
from scipy.optimize import brentq

from oceanfield.preset import list_presets, load_preset, preset_warnings, to_sea_state
from tolerances import CEM_EXAMPLE, MOMENT

LIBRARY = [name for name, _, _ in list_presets()]

#: WMO Beaufort scale as reproduced by the UK Met Office: force → (probable, maximum) wave
#: height in metres, for well-developed wind waves of the open sea.
BEAUFORT_HEIGHTS = {
    1: (0.1, 0.1),
    2: (0.2, 0.3),
    3: (0.6, 1.0),
    4: (1.0, 1.5),
    5: (2.0, 2.5),
    6: (3.0, 4.0),
    7: (4.0, 5.5),
    8: (5.5, 7.5),
    9: (7.0, 10.0),
    10: (9.0, 12.5),
    11: (11.5, 16.0),
}

#: Warnings each shipped preset is meant to raise (every shipped sea fits its tile): the boat
#: chase's launches plane (hull Froude numbers above 0.5), which the wake says it draws only
#: as a picture.
INTENDED_WARNINGS: dict[str, list[str]] = {
    "headland_launch_chase": [
        "wake: vessel `lead`: hull Froude number U/√(gL) reaches 1.46 (above 0.5): the hull climbs its bow wave "
        "or planes; the linear wake is a picture, its visible angle narrows below 19.5° in reality",
        "wake: vessel `chaser`: hull Froude number U/√(gL) reaches 1.30 (above 0.5): the hull climbs its bow wave "
        "or planes; the linear wake is a picture, its visible angle narrows below 19.5° in reality",
    ],
}


@pytest.fixture(scope="module")
def library():
    """name → (preset, sea state, warnings), built once for the module."""
    built = {}
    for name in LIBRARY:
        preset = load_preset(name)
        sea = to_sea_state(preset)
        built[name] = (preset, sea, preset_warnings(preset, sea_state=sea))
    return built


def test_the_library_spans_the_scenarios():
    required = {
        "reference", "glassy_calm", "moderate_breeze", "fresh_chop", "near_gale_long_fetch", "storm_force_ten",
        "long_swell", "swell_under_wind_sea", "shallow_coastal", "pond_ripples", "headland_launch_chase",
    }
    assert required <= set(LIBRARY)


@pytest.mark.parametrize("name", LIBRARY)
def test_preset_loads_with_a_description_and_only_intended_warnings(library, name):
    preset, _, warnings = library[name]
    assert preset.description and "\n" not in preset.description and len(preset.description) <= 120
    assert warnings == INTENDED_WARNINGS.get(name, [])
    assert len(preset.time.frames) <= 96  # short demo ranges


@pytest.mark.parametrize("name", LIBRARY)
def test_tile_holds_at_least_two_peak_wavelengths(library, name):
    """Common practice: a tile of 2–4 peak wavelengths (more for a tank, to resolve ripples)."""
    preset, sea, _ = library[name]
    longest = max(stats.peak_wavelength for stats in sea.component_statistics())
    assert preset.tile.size_m >= 2.0 * longest


def _beaufort_components():
    cases = []
    for name in LIBRARY:
        for index, component in enumerate(load_preset(name).sea.components):
            if component.beaufort is not None:
                cases.append((name, index, component.beaufort, component.fetch_km))
    return cases


def test_the_library_covers_calm_to_storm():
    forces = {force for _, _, force, _ in _beaufort_components()}
    assert {2, 4, 5, 6, 7, 10} <= forces


@pytest.mark.parametrize("name, index, force, fetch_km", _beaufort_components())
def test_beaufort_sea_height_lies_in_the_wmo_band(library, name, index, force, fetch_km):
    """Hs of a Beaufort-sized component lies between half the probable and the maximum height.

    WMO Beaufort scale (UK Met Office). The table's heights are for well-developed open-sea
    waves; a fetch-limited sea is younger and lower, so the band reaches down to half the
    probable height (common practice). The maximum height is the upper bound for any fetch.
    """
    _, sea, _ = library[name]
    probable, maximum = BEAUFORT_HEIGHTS[force]
    hs = sea.component_statistics()[index].hs
    assert 0.5 * probable <= hs <= maximum, (name, force, hs)
    if fetch_km is None:
        # Fully developed: within 40 % of the probable height. Pierson–Moskowitz (Hs ≈ 0.22
        # U10²/g, Stewart 2008 §16.5) and the table part by up to a third at light winds
        # (0.14 m against 0.2 m at force 2, derived).
        assert hs == pytest.approx(probable, rel=0.4)


def test_glassy_calm_is_small_and_broad(library):
    """Near calm (Beaufort 2): Hs under the table's 0.3 m maximum, spread of 40° or more."""
    preset, sea, _ = library["glassy_calm"]
    stats = sea.statistics()
    assert stats.hs < 0.3
    assert math.degrees(stats.directional_spread) >= 40.0
    assert preset.sea.surface_tension_npm > 0


def test_long_swell_meets_its_targets(library):
    """Target: Hs 1.8 m, Tp 15 s, deep-water peak wavelength L0 = g T²/2π.

    L0 from linear theory (Stewart 2008, §16.2; USACE Coastal Engineering Manual II-1):
    351.3 m at 15 s. Hs, Tp and L are spectral statistics: the moment tolerance.
    """
    preset, sea, _ = library["long_swell"]
    stats = sea.statistics()
    g = preset.sea.gravity_mps2
    assert stats.hs == pytest.approx(1.8, rel=MOMENT)
    assert stats.tp == pytest.approx(15.0, rel=MOMENT)
    assert stats.peak_wavelength == pytest.approx(g * 15.0**2 / (2 * math.pi), rel=MOMENT)
    assert math.degrees(stats.directional_spread) == pytest.approx(8.0, abs=0.5)


def test_crossing_sea_has_two_systems_at_seventy_degrees(library):
    """Targets: a 1.5 m, 13 s swell towards 70° and a Beaufort 5 wind sea towards 0°."""
    _, sea, _ = library["swell_under_wind_sea"]
    swell, wind = sea.component_statistics()
    assert swell.hs == pytest.approx(1.5, rel=MOMENT) and swell.tp == pytest.approx(13.0, rel=MOMENT)
    assert math.degrees(swell.mean_direction) == pytest.approx(70.0, abs=0.5)
    assert math.degrees(wind.mean_direction) == pytest.approx(0.0, abs=0.5)
    assert wind.tp < 0.5 * swell.tp  # the wind sea is the shorter system


def test_shallow_coastal_meets_its_targets(library):
    """Target: Hs 0.8 m in 3 m of water; the 10 s waves are 53.2 m long there.

    USACE (2002) Coastal Engineering Manual, Example II-1-1: T = 10 s, d = 3 m gives
    L = 53.2 m (printed to 3 figures). The TMA depth factor (Bouws et al.
    1985) grows with frequency, so the spectrum's peak sits a little above 1/Tp: the peak
    period lies between 9.5 and 10 s.
    """
    preset, sea, _ = library["shallow_coastal"]
    stats = sea.statistics()
    assert preset.sea.depth_m == 3.0
    assert stats.hs == pytest.approx(0.8, rel=MOMENT)
    assert 2 * math.pi / float(sea.wavenumber(2 * math.pi / 10.0)) == pytest.approx(53.2, rel=CEM_EXAMPLE)
    assert 9.5 <= stats.tp <= 10.0
    assert stats.hs / preset.sea.depth_m < 0.4


def test_pond_ripples_meet_their_targets(library):
    """Target: Hs 1 cm, Tp 0.3 s, peak wavelength from capillary–gravity dispersion.

    ω² = (g k + T k³/ρ) tanh(k h) (Lamb 1932, *Hydrodynamics* §267, from memory; the deep
    limit is checked in the dispersion tests), solved here independently: 14.25 cm, 1.4 %
    longer than the 14.05 cm of gravity alone. The tile resolves the 1.71 cm waves of
    minimum phase speed, 2π√(T/ρg), with at least 8 texels.
    """
    preset, sea, _ = library["pond_ripples"]
    stats = sea.statistics()
    g, tension, rho, depth = (preset.sea.gravity_mps2, preset.sea.surface_tension_npm,
                              preset.sea.density_kgpm3, preset.sea.depth_m)
    omega = 2 * math.pi / 0.3

    def wavelength(t):
        k = brentq(lambda k: (g * k + t * k**3 / rho) * math.tanh(k * depth) - omega**2, 1.0, 1.0e4, xtol=1e-12)
        return 2 * math.pi / k

    assert stats.hs == pytest.approx(0.01, rel=MOMENT)
    assert stats.tp == pytest.approx(0.3, rel=MOMENT)
    assert stats.peak_wavelength == pytest.approx(wavelength(tension), rel=MOMENT)
    assert stats.peak_wavelength > 1.01 * wavelength(0.0)
    texel = preset.tile.size_m / preset.tile.resolution
    assert 2 * math.pi * math.sqrt(tension / (rho * g)) / texel >= 8
    assert 1.0 <= preset.tile.size_m <= 2.0
