"""A preset component sized by a wave record: its settings, how they are read, the component.

Knows nothing of rendering. The files are read through ``io.records`` (which knows no
physics) and become a :class:`~oceanfield.physics.measured.MeasuredComponent` here; every
problem is one line naming the record's file and row.

A record component is written in a preset as::

    - label: buoy, 14 March 09:00
      record:
        file: mixed_sea_record.csv   # relative to the preset file that names it
        directions: coming_from      # the record's compass frame: coming_from | going_to
        spreading: cos2s             # a1..b2 tables: cos2s | maximum_entropy
        tail: none                   # none | f-4 | f-5
        time: null                   # netCDF with several times: which one (ISO 8601)
        direction_deg: null          # a table without directions: its one mean direction
        spread_deg: null             #   and cos-2s spread, for every frequency
        sha256: null                 # optional pin: the file must have this digest

CSV tables hold the columns ``frequency_hz`` and ``density_m2_per_hz`` and one of the
direction sets ``a1, b1, a2, b2`` (``a1, b1`` suffice for ``spreading: cos2s``) or
``direction_deg, spread_deg``; a table without directions (a heave-only buoy) takes one
``direction_deg`` and ``spread_deg`` from the preset. netCDF files hold wavespectra's
``efth(freq, dir)``.
"""

from __future__ import annotations

import datetime
import hashlib
import math
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from ._yamltree import BAD, Section, valid
from ..io.errors import CorruptFileError
from ..io.records import MissingExtraError, read_frequency_direction, read_table
from ..physics.measured import (
    DIRECTION_FRAMES,
    TAILS,
    MeasuredComponent,
    RecordError,
    measured_from_frequency_direction,
    measured_from_mean_spread,
    measured_from_moments,
)

__all__ = [
    "RecordSettings",
    "TABLE_SUFFIXES",
    "NETCDF_SUFFIXES",
    "RECORD_SPREADING",
    "read_record",
    "record_component",
]

TABLE_SUFFIXES = (".csv", ".txt")
NETCDF_SUFFIXES = (".nc", ".nc4", ".cdf", ".netcdf")
RECORD_SPREADING = ("cos2s", "maximum_entropy")

#: CSV column names: frequency, density, and the two ways of giving directions.
FREQUENCY_COLUMN, DENSITY_COLUMN = "frequency_hz", "density_m2_per_hz"
COEFFICIENT_COLUMNS = ("a1", "b1", "a2", "b2")
MEAN_SPREAD_COLUMNS = ("direction_deg", "spread_deg")


@dataclass(frozen=True)
class RecordSettings:
    """Where a record is and how to read it (see the module notes).

    ``file`` is the resolved absolute path; ``sha256`` the digest of its contents when the
    preset was loaded (the render hash carries the digest, not the path, so a moved record
    renders the same frames and an edited one does not).
    """

    file: str
    directions: str
    spreading: str
    tail: str
    time: str | None
    direction_deg: float | None
    spread_deg: float | None
    sha256: str


def _file_digest(path: Path) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def _base_folder(where: str) -> Path:
    """The folder a relative path written at ``where`` (``file:line`` or ``--set ...``) is relative to."""
    if where.startswith("--set"):
        return Path.cwd()
    return Path(where.rsplit(":", 1)[0]).resolve().parent


def read_record(sec: Section) -> Any:
    """The ``record`` mapping of a component as :class:`RecordSettings`, or ``BAD``.

    The file must exist and have a known suffix; its contents are checked when the
    component is built (:func:`record_component`).
    """
    node = sec.node("file")
    directions = sec.choice("directions", "coming_from", DIRECTION_FRAMES)
    spreading = sec.choice("spreading", "cos2s", RECORD_SPREADING)
    tail = sec.choice("tail", "none", TAILS)
    time = _time_text(sec)
    direction = sec.number("direction_deg", None, low=-360, high=360, optional=True)
    spread = sec.number("spread_deg", None, low=1, high=80, optional=True)
    pinned = sec.text("sha256", "") or None
    if node is None or node.value is None:
        return sec.fail("file", "needs the record's file (a .csv table or a .nc netCDF spectrum)")
    if not isinstance(node.value, str) or not node.value.strip():
        return sec.fail("file", f"expected a file name, got `{node.text or node.value!r}`")
    path = Path(node.value.strip()).expanduser()
    if not path.is_absolute():
        path = _base_folder(node.where) / path
    path = path.resolve()
    if path.suffix.lower() not in TABLE_SUFFIXES + NETCDF_SUFFIXES:
        allowed = ", ".join(TABLE_SUFFIXES + NETCDF_SUFFIXES)
        return sec.fail("file", f"`{node.value}`: unknown kind of record (allowed suffixes: {allowed})")
    if not path.is_file():
        return sec.fail("file", f"`{node.value}`: no such file ({path})")
    try:
        digest = _file_digest(path)
    except OSError as error:
        return sec.fail("file", f"`{node.value}`: cannot read it ({error.strerror or error})")
    if pinned is not None and pinned.lower() != digest:
        return sec.fail(
            "sha256",
            f"{path} has changed since the preset was written (its sha256 is {digest}); "
            f"set sha256: null to take the file as it is now",
        )
    if time is not None and path.suffix.lower() in TABLE_SUFFIXES:
        return sec.fail("time", "applies to netCDF records only; a table holds one spectrum (set time: null)")
    if (direction is None) != (spread is None):
        missing = "spread_deg" if spread is None else "direction_deg"
        return sec.fail(missing, "needs a value: direction_deg and spread_deg give a record without directions its own")
    if direction is not None and path.suffix.lower() in NETCDF_SUFFIXES:
        return sec.fail("direction_deg", "a frequency–direction spectrum has its own directions (set it null)")
    if not valid(directions, spreading, tail, time, direction, spread):
        return BAD
    return RecordSettings(str(path), directions, spreading, tail, time, direction, spread, digest)


def _time_text(sec: Section) -> Any:
    """The record's ``time`` as ISO 8601 text: YAML reads an unquoted date and time as a timestamp."""
    node = sec.items.get("time")
    if node is not None and isinstance(node.value, (datetime.date, datetime.datetime)):
        sec.asked.append("time")
        value = node.value
        if isinstance(value, datetime.datetime) and value.tzinfo is not None:
            value = value.astimezone(datetime.timezone.utc).replace(tzinfo=None)
        return value.isoformat()
    return sec.text("time", "") or None


def record_component(record: RecordSettings, *, north_deg: float, label: str) -> MeasuredComponent:
    """Read and check a record, giving its component with directions on the tile.

    ``north_deg`` is where north lies on the tile, degrees counter-clockwise from +x.

    Raises
    ------
    ValueError
        One line naming the file and the row (or value) at fault; the optional netCDF
        support missing; the file changed since the preset was loaded.
    """
    path = Path(record.file)
    options = dict(north=math.radians(north_deg), frame=record.directions, tail=record.tail, label=label)
    try:
        if _file_digest(path) != record.sha256:
            raise ValueError(f"{path}: the record changed after the preset was loaded; load the preset again")
        if path.suffix.lower() in NETCDF_SUFFIXES:
            return _from_netcdf(record, options)
        return _from_table(path, record, options)
    except (CorruptFileError, MissingExtraError) as error:
        raise ValueError(str(error)) from None
    except OSError as error:
        raise ValueError(f"cannot read '{path}': {error.strerror or error}") from None


def _from_table(path: Path, record: RecordSettings, options: dict) -> MeasuredComponent:
    table = read_table(path)
    columns = table.columns
    missing = [name for name in (FREQUENCY_COLUMN, DENSITY_COLUMN) if name not in columns]
    if missing:
        raise ValueError(
            f"{table.where(None)}: no column `{missing[0]}` (columns: {', '.join(columns)}); a record table "
            f"needs {FREQUENCY_COLUMN} and {DENSITY_COLUMN}"
        )
    has_moments = all(name in columns for name in COEFFICIENT_COLUMNS[:2])
    has_mean_spread = all(name in columns for name in MEAN_SPREAD_COLUMNS)
    given = record.direction_deg is not None
    if not (has_moments or has_mean_spread or given):
        raise ValueError(
            f"{table.where(None)}: no directions: add the columns a1, b1, a2, b2 (directional Fourier "
            f"coefficients) or direction_deg, spread_deg, or give the record a direction_deg and spread_deg"
        )
    if has_moments and has_mean_spread:
        raise ValueError(f"{table.where(None)}: directions are given twice (a1, b1 and direction_deg); keep one set")
    if given and (has_moments or has_mean_spread):
        raise ValueError(
            f"{table.where(None)}: the table has its own directions; set the record's direction_deg and "
            f"spread_deg to null"
        )
    frequency, density = columns[FREQUENCY_COLUMN], columns[DENSITY_COLUMN]
    try:
        if given:
            ones = np.ones(frequency.size)
            return measured_from_mean_spread(
                frequency, density, math.radians(record.direction_deg) * ones,
                math.radians(record.spread_deg) * ones, **options,
            )
        if has_mean_spread:
            return measured_from_mean_spread(
                frequency, density, np.radians(columns["direction_deg"]), np.radians(columns["spread_deg"]), **options
            )
        second = [name for name in COEFFICIENT_COLUMNS[2:] if name not in columns]
        if record.spreading == "maximum_entropy" and second:
            raise ValueError(
                f"{table.where(None)}: no column `{second[0]}`: the maximum entropy method needs a1, b1, a2 "
                f"and b2 (or set the record's spreading: cos2s to use a1 and b1 alone)"
            )
        return measured_from_moments(
            frequency, density, columns["a1"], columns["b1"], columns.get("a2"), columns.get("b2"),
            method=record.spreading, **options,
        )
    except RecordError as error:
        column = {"frequency": FREQUENCY_COLUMN, "density": DENSITY_COLUMN, "direction": "direction_deg",
                  "spread": "spread_deg"}.get(error.column or "", error.column)
        prefix = f" column `{column}`:" if column else ""
        raise ValueError(f"{table.where(error.index)}:{prefix} {error}") from None


def _from_netcdf(record: RecordSettings, options: dict) -> MeasuredComponent:
    grid = read_frequency_direction(record.file, time=record.time)
    if "rad" in grid.units["freq"].lower():
        raise ValueError(f"{grid.path}: `freq` is in {grid.units['freq']}; a record's frequencies are in Hz")
    # wavespectra stores E(f, θ) per degree (units "m2 s degree-1"); per radian if the file says so.
    per_radian = "rad" in grid.units["efth"].lower()
    density = grid.density if per_radian else grid.density * (180.0 / math.pi)
    directions = np.radians(grid.direction) if "rad" not in grid.units["dir"].lower() else grid.direction
    try:
        return measured_from_frequency_direction(grid.frequency, directions, density, **options)
    except RecordError as error:
        if error.index is None:
            raise ValueError(f"{grid.path}: {error}") from None
        at = f"freq[{error.index}] = {grid.frequency[error.index]:g} Hz"
        raise ValueError(f"{grid.path}: {at}: {error}") from None
