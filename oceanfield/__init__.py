"""oceanfield: tileable animated ocean surfaces for visual effects, checked against physics.

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
    "GRAVITY": "constants",
    "SEAWATER_DENSITY": "constants",
    "WATER_DENSITY": "constants",
    "SURFACE_TENSION": "constants",
    "SPECTRA": "spectra",
    "jonswap": "spectra",
    "pierson_moskowitz": "spectra",
    "tma": "spectra",
    "phillips": "spectra",
    "SPREADING": "spreading",
    "angular_frequency": "dispersion",
    "group_velocity": "dispersion",
    "phase_velocity": "dispersion",
    "wavenumber": "dispersion",
    "Component": "seastate",
    "SeaState": "seastate",
    "SeaStatistics": "seastate",
    "wind_sea": "seastate",
    "height_period": "seastate",
    "beaufort_sea": "seastate",
    "Tile": "tile",
    "Ocean": "synth",
    "Fields": "fields",
    "MAPS": "maps",
    "map_channels": "maps",
    "Preset": "preset",
    "PresetError": "preset",
    "load_preset": "preset",
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
