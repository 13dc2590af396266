"""Writers and readers: OpenEXR and 16-bit PNG maps, written atomically; wave records read.

Used from above (``preset``, ``render``, ``analysis``, the command line). It knows
nothing of physics, synthesis or presets and imports none of them: the writers take named channel
arrays (see ``oceanfield.surface.maps``) and put them in files. ``table`` writes CSV/JSON
tables; ``usd`` (``oceanfield.io.usd``, needs the optional usd-core) writes a USD stage.
"""

from oceanfield.io.atomic import atomic_output, is_temporary, remove_stale_temporaries
from oceanfield.io.errors import CorruptFileError, OutputError
from oceanfield.io.exr import (
    COMPRESSIONS,
    LOSSLESS_COMPRESSIONS,
    PRECISIONS,
    exr_is_complete,
    read_exr,
    read_exr_attributes,
    set_encoder_threads,
    to_pixels,
    write_exr,
)
from oceanfield.io.png import read_png16, sidecar_path, write_png16
from oceanfield.io.records import MissingExtraError, read_frequency_direction, read_table
from oceanfield.io.table import format_csv, format_json, table_format, write_table

__all__ = [
    "COMPRESSIONS",
    "LOSSLESS_COMPRESSIONS",
    "PRECISIONS",
    "CorruptFileError",
    "MissingExtraError",
    "OutputError",
    "atomic_output",
    "exr_is_complete",
    "is_temporary",
    "read_exr",
    "read_exr_attributes",
    "read_frequency_direction",
    "read_png16",
    "read_table",
    "remove_stale_temporaries",
    "set_encoder_threads",
    "sidecar_path",
    "to_pixels",
    "write_exr",
    "write_png16",
    "format_csv",
    "format_json",
    "table_format",
    "write_table",
]
