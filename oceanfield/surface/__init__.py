"""One frame of one periodic tile: the FFT synthesis of a sea state.

A ``SeaState`` (from ``physics``) on a ``Tile``'s wavenumber lattice becomes amplitudes,
then per-frame spectra and packed inverse FFTs (``synth``, with the numba kernels in
``_kernels``), giving ``Fields`` (height, lateral displacement, Jacobian, normals, foam),
which ``maps`` turns into named maps in a 3D package's axes and units. The surface knows
nothing of presets, files or render jobs.

=============  ====================================================================
``tile``       ``Tile``: the periodic wavenumber lattice of one square patch
``synth``      ``Ocean``: amplitudes, time evolution, packed FFTs, ``Ocean.frame(t)``
``_kernels``   the numba kernels of a frame (loaded on first synthesis)
``fields``     ``Fields``: one frame's arrays, the synthesiser's output contract
``maps``       ``Fields`` → named maps (displacement, normal, foam, ...) in scene axes
``modes``      ``WaveModes``: the sinusoids a sea sums, as arrays (``Ocean.modes()``)
``probes``     ``surface_at``: the displaced surface above any point, by exact sums
``bodies``     ``Body``, ``body_motion``: heave, pitch, roll of a floating waterplane
``course``     ``Hull``, ``Course``, ``WakeRegion``: a moving body and where its wake is drawn
``wake``       ``Wake``: the linear wakes of moving hulls on a non-periodic region
``riding``     ``ride``: a body on a course (or standing) riding the sea plus the wakes
=============  ====================================================================
"""

from __future__ import annotations

from . import tile as _tile, fields as _fields, maps as _maps, synth as _synth
from . import modes as _modes, probes as _probes, bodies as _bodies, wake as _wake
from .tile import *  # noqa: F401,F403  (the names in tile.__all__)
from .fields import *  # noqa: F401,F403  (the names in fields.__all__)
from .maps import *  # noqa: F401,F403  (the names in maps.__all__)
from .synth import *  # noqa: F401,F403  (the names in synth.__all__)
from .modes import *  # noqa: F401,F403  (the names in modes.__all__)
from .probes import *  # noqa: F401,F403  (the names in probes.__all__)
from .bodies import *  # noqa: F401,F403  (the names in bodies.__all__)
from .wake import *  # noqa: F401,F403  (the names in wake.__all__)

__all__ = [*_tile.__all__, *_fields.__all__, *_maps.__all__, *_synth.__all__,
           *_modes.__all__, *_probes.__all__, *_bodies.__all__, *_wake.__all__]

from . import riding as _riding  # bodies on courses, riding the sea and the wakes
from .riding import *  # noqa: F401,F403,E402  (the names in riding.__all__)

__all__ += _riding.__all__
