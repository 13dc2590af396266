"""oceanfield: tileable animated ocean surfaces for visual effects, checked against physics.

The public names are re-exported here from the rooms of the data flow (``physics`` →
``surface`` → ``preset`` → ``render`` / ``analysis``, with ``io`` beside); this module knows
nothing of any of them until a name is first used.

The public names are re-exported here. Modules with heavy imports (numba kernels, OpenEXR,
matplotlib, Dask) load on first use, so importing the package stays fast and never
compiles anything.
"""

from __future__ import annotations

import importlib
from typing import Any

__version__ = "0.1.0"

# public name -> module that defines it
_EXPORTS = {
    "GRAVITY": "physics.constants",
    "SEAWATER_DENSITY": "physics.constants",
    "WATER_DENSITY": "physics.constants",
    "SURFACE_TENSION": "physics.constants",
    "SPECTRA": "physics.spectra",
    "jonswap": "physics.spectra",
    "pierson_moskowitz": "physics.spectra",
    "tma": "physics.spectra",
    "phillips": "physics.spectra",
    "SPREADING": "physics.spreading",
    "angular_frequency": "physics.dispersion",
    "group_velocity": "physics.dispersion",
    "phase_velocity": "physics.dispersion",
    "wavenumber": "physics.dispersion",
    "Component": "physics.seastate",
    "SeaState": "physics.seastate",
    "SeaStatistics": "physics.seastate",
    "wind_sea": "physics.seastate",
    "height_period": "physics.seastate",
    "beaufort_sea": "physics.seastate",
    "MeasuredComponent": "physics.measured",
    "measured_from_moments": "physics.measured",
    "measured_from_mean_spread": "physics.measured",
    "measured_from_frequency_direction": "physics.measured",
    "Tile": "surface.tile",
    "Ocean": "surface.synth",
    "Fields": "surface.fields",
    "MAPS": "surface.maps",
    "map_channels": "surface.maps",
    "WaveModes": "surface.modes",
    "surface_at": "surface.probes",
    "Body": "surface.bodies",
    "Response": "surface.bodies",
    "body_motion": "surface.bodies",
    "Hull": "surface.wake",
    "Course": "surface.wake",
    "WakeRegion": "surface.wake",
    "Wake": "surface.wake",
    "Preset": "preset.schema",
    "PresetError": "preset.schema",
    "load_preset": "preset.schema",
}

__all__ = ["__version__", *_EXPORTS]


def __getattr__(name: str) -> Any:
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'oceanfield' has no attribute {name!r}")
    value = getattr(importlib.import_module(f".{module}", __name__), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(__all__)
