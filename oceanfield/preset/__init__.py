"""Presets: a sea state, a tile and an output described in YAML, read safely and checked.

A preset file becomes a resolved ``Preset`` (every default filled, every value checked),
which makes its ``SeaState`` and ``Ocean``; this package also reports a preset in numbers
(``stats``) and pictures (``preview``). It knows nothing of render jobs or the analyzer.

==============  ==================================================================
``_yamltree``   located YAML: safe parse with file:line, ``extends``, ``--set`` overrides
``schema``      ``load_preset`` by name or path; re-exports the three below
``settings``    the resolved settings (``Preset`` and its sections); ``to_sea_state``
``reading``     every key's default and check, from the located tree
``resolved``    the resolved preset as editable YAML (``dump_preset``) and its hash
``record``      a component sized by a measured wave record (file, directions, tail)
``courses``     a vessel's course: keyframes, a CSV table or a USD prim, in SI units
``vessels``     the ``vessels`` and ``wake`` sections: region, the preset's ``Wake``, report
``warnings``    physically doubtful choices in a valid preset, one sentence each
``stats``       the numbers behind ``oceanfield stats``; the folded share
``preview``     the preview picture (matplotlib)
==============  ==================================================================
"""

from __future__ import annotations

from . import schema as _schema, warnings as _warnings, stats as _stats, preview as _preview, record as _record
from .schema import *  # noqa: F401,F403  (the names in schema.__all__)
from .record import *  # noqa: F401,F403  (the names in record.__all__)
from .warnings import *  # noqa: F401,F403  (the names in warnings.__all__)
from .stats import *  # noqa: F401,F403  (the names in stats.__all__)
from .preview import *  # noqa: F401,F403  (the names in preview.__all__)

__all__ = [*_schema.__all__, *_record.__all__, *_warnings.__all__, *_stats.__all__, *_preview.__all__]

from . import courses as _courses, vessels as _vessels  # moving bodies and their wake
from .courses import *  # noqa: F401,F403,E402  (the names in courses.__all__)
from .vessels import *  # noqa: F401,F403,E402  (the names in vessels.__all__)

__all__ += [*_courses.__all__, *_vessels.__all__]
