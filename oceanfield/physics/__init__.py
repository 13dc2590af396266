"""What the sea is: physical constants, the dispersion relation, frequency spectra,
directional spreading and sea states built from them.

Data flows from here into ``surface`` (lattices and frames). Physics knows nothing of
lattices, tiles, frames or files: every function is a published formula on numpy arrays.

==============  ===================================================================
``constants``   named physical constants, each with its source
``dispersion``  ω(k, h) with gravity, depth and surface tension; group speed; k(ω, h)
``spectra``     frequency spectra S(ω) (PM, JONSWAP, TMA, ...); registry ``SPECTRA``
``spreading``   directional distributions D(θ; ω); registry ``SPREADING``
``seastate``    ``Component`` and ``SeaState``: a sea from wind, Hs/Tp or Beaufort
``measured``    ``MeasuredComponent``: a sea from a wave record (spectrum, directional moments)
``whitecaps``   whitecap coverage against wind speed (Monahan & O'Muircheartaigh 1980)
``wake``        a moving pressure patch's linear wake; Kelvin and Havelock angles
==============  ===================================================================
"""

from __future__ import annotations

from . import constants as _constants, dispersion as _dispersion, spectra as _spectra, spreading as _spreading, seastate as _seastate, measured as _measured
from . import whitecaps as _whitecaps, wake as _wake
from .constants import *  # noqa: F401,F403  (the names in constants.__all__)
from .dispersion import *  # noqa: F401,F403  (the names in dispersion.__all__)
from .spectra import *  # noqa: F401,F403  (the names in spectra.__all__)
from .spreading import *  # noqa: F401,F403  (the names in spreading.__all__)
from .seastate import *  # noqa: F401,F403  (the names in seastate.__all__)
from .measured import *  # noqa: F401,F403  (the names in measured.__all__)
from .whitecaps import *  # noqa: F401,F403  (the names in whitecaps.__all__)
from .wake import *  # noqa: F401,F403  (the names in wake.__all__)

spreading = _spreading  # the module; its entry point of the same name is spreading.spreading

__all__ = [
    *_constants.__all__, *_dispersion.__all__, *_spectra.__all__,
    *(name for name in _spreading.__all__ if name != "spreading"), *_seastate.__all__, *_measured.__all__,
    *_whitecaps.__all__, *_wake.__all__,
]
