"""The look: a preset's sea seen as a camera will, lit by a clear sky and the sun.

Knows nothing of render jobs or map files: it reads a preset's frames and writes
pictures. Uses the preset, surface and io rooms; the command line calls it.

============  ====================================================================
``optics``    water's Fresnel reflectance, the sun's disc, the horizon's dip, Cox & Munk
``sky``       the Preetham, Shirley & Smits (1999) clear sky and the sun's radiance
``camera``    the pinhole camera: heading, pitch, field of view, the horizon's row
``pyramid``   the displaced surface resampled, and its height and slope pyramid
``_kernels``  the ray march and the shading (numba), with their references
``picture``   Look: frames to radiance, tone mapping, caption
``writing``   the still (PNG + EXR) and the flipbook, and the ``look`` command
============  ====================================================================
"""

from __future__ import annotations

from . import optics as _optics, sky as _sky, camera as _camera, picture as _picture
from .optics import *  # noqa: F401,F403
from .sky import *  # noqa: F401,F403
from .camera import *  # noqa: F401,F403
from .picture import *  # noqa: F401,F403

__all__ = [*_optics.__all__, *_sky.__all__, *_camera.__all__, *_picture.__all__]
