"""Reading wave records: a CSV table of numbers by column, a netCDF frequency–direction grid.

Knows nothing of physics: it returns arrays with their column or variable names and where
each value was written (file and line), and leaves their meaning to the caller.

CSV: lines starting with ``#`` and blank lines are skipped; the first other line names the
columns (comma-separated, case and surrounding spaces ignored); every further line holds
one number per column. netCDF: read with xarray (the ``measured`` extra) in the names the
wavespectra library uses: the variable ``efth`` over the dimensions ``freq`` and ``dir``,
with at most a ``time`` dimension beside them (one time chosen by value) and any other
dimension of length 1.
"""

from __future__ import annotations

import csv
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from numpy.typing import NDArray

from .errors import CorruptFileError

__all__ = [
    "Table",
    "FrequencyDirectionGrid",
    "MissingExtraError",
    "read_table",
    "read_frequency_direction",
    "SPECTRUM_VARIABLE",
    "FREQUENCY_DIMENSION",
    "DIRECTION_DIMENSION",
    "TIME_DIMENSION",
]

#: Names wavespectra gives the spectrum, its frequency, direction and time (its attributes.yml).
SPECTRUM_VARIABLE, FREQUENCY_DIMENSION, DIRECTION_DIMENSION, TIME_DIMENSION = "efth", "freq", "dir", "time"

_MAX_TABLE_BYTES = 64 * 1024 * 1024  # a spectrum table is kilobytes; refuse to parse a wrong huge file


class MissingExtraError(ImportError):
    """An optional dependency is not installed; the message says which extra to install."""


@dataclass(frozen=True)
class Table:
    """Columns of numbers from a CSV file.

    ``columns`` maps each lower-cased column name to its values (float64, NaN where the
    file says ``nan``); ``lines[i]`` is the file line (from 1) of row ``i``.
    """

    path: Path
    columns: dict[str, NDArray[np.float64]]
    lines: NDArray[np.int64]

    def where(self, row: int | None) -> str:
        """``file:line`` of a row (the header's line for None)."""
        line = self.header_line if row is None else int(self.lines[row])
        return f"{self.path}:{line}"

    @property
    def header_line(self) -> int:
        return int(self.lines[0]) - 1 if self.lines.size else 1


@dataclass(frozen=True)
class FrequencyDirectionGrid:
    """A frequency–direction spectrum read from netCDF, as stored.

    ``density`` has shape (frequencies, directions); ``units`` holds the ``units``
    attribute of ``efth``, ``freq`` and ``dir`` ('' where absent); ``chosen`` says which
    time was taken ('' when the file has none).
    """

    path: Path
    frequency: NDArray[np.float64]
    direction: NDArray[np.float64]
    density: NDArray[np.float64]
    units: dict[str, str]
    chosen: str


def read_table(path: str | os.PathLike[str]) -> Table:
    """Read a CSV table of numbers (see the module notes).

    Raises
    ------
    CorruptFileError
        One line naming the file and the line at fault: no header, a repeated or empty
        column name, a row with too few or too many cells, a cell that is not a number.
    OSError
        The file cannot be opened.
    """
    path = Path(path)
    if path.stat().st_size > _MAX_TABLE_BYTES:
        raise CorruptFileError(path, f"is {path.stat().st_size} bytes, too large for a spectrum table")
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise CorruptFileError(path, "is not a text table (it is not UTF-8 text)") from None
    if "\x00" in text:
        raise CorruptFileError(path, "is not a text table (it holds binary data)")
    header: list[str] | None = None
    header_line = 0
    rows: list[list[float]] = []
    lines: list[int] = []
    for number, line in enumerate(text.splitlines(), start=1):
        stripped = line.strip()
        if not stripped or stripped.startswith("#"):
            continue
        cells = [cell.strip() for cell in next(csv.reader([stripped]))]
        if header is None:
            header, header_line = [cell.lower() for cell in cells], number
            empty = [i for i, name in enumerate(header) if not name]
            if empty:
                raise CorruptFileError(path, f"line {number}: column {empty[0] + 1} of the header has no name")
            repeated = sorted({name for name in header if header.count(name) > 1})
            if repeated:
                raise CorruptFileError(path, f"line {number}: column `{repeated[0]}` is named twice")
            continue
        if len(cells) != len(header):
            raise CorruptFileError(
                path, f"line {number}: {len(cells)} cells where the header names {len(header)} columns"
            )
        values = []
        for name, cell in zip(header, cells):
            try:
                values.append(float(cell))
            except ValueError:
                raise CorruptFileError(path, f"line {number}: column `{name}`: `{cell}` is not a number") from None
        rows.append(values)
        lines.append(number)
    if header is None:
        raise CorruptFileError(path, "holds no table (no header line naming the columns)")
    if not rows:
        raise CorruptFileError(path, f"line {header_line}: the header is followed by no rows of numbers")
    data = np.asarray(rows, dtype=np.float64)
    return Table(path, {name: data[:, i].copy() for i, name in enumerate(header)}, np.asarray(lines, dtype=np.int64))


def read_frequency_direction(path: str | os.PathLike[str], *, time: str | None = None) -> FrequencyDirectionGrid:
    """Read ``efth(freq, dir)`` from a netCDF file in wavespectra's names (see the module notes).

    Parameters
    ----------
    path : path
        The netCDF file (netCDF3 through scipy, netCDF4/HDF5 through h5netcdf).
    time : str, optional
        The time to take when the file holds several, as an ISO 8601 text
        (``2026-03-14T09:00``); it must be one of the file's times.

    Raises
    ------
    MissingExtraError
        xarray is not installed.
    CorruptFileError
        One line naming the file: not netCDF, no ``efth``, missing dimensions, a time not
        in the file, several times and none chosen.
    """
    try:
        import xarray
    except ImportError:
        raise MissingExtraError(
            "reading a netCDF record needs xarray: pip install 'oceanfield[measured]'"
        ) from None
    path = Path(path)
    try:
        dataset = xarray.open_dataset(path, decode_timedelta=False)
    except (OSError, ValueError, TypeError) as error:
        raise CorruptFileError(path, f"is not a netCDF file xarray can read ({' '.join(str(error).split())[:200]})") from None
    with dataset:
        if SPECTRUM_VARIABLE not in dataset.data_vars:
            found = ", ".join(map(str, dataset.data_vars)) or "none"
            raise CorruptFileError(
                path, f"is not a frequency–direction spectrum: no variable `{SPECTRUM_VARIABLE}` (variables: {found})"
            )
        spectrum = dataset[SPECTRUM_VARIABLE]
        missing = [d for d in (FREQUENCY_DIMENSION, DIRECTION_DIMENSION) if d not in spectrum.dims]
        if missing:
            raise CorruptFileError(
                path, f"`{SPECTRUM_VARIABLE}` has no dimension `{missing[0]}` (dimensions: {', '.join(map(str, spectrum.dims))})"
            )
        chosen = ""
        if TIME_DIMENSION in spectrum.dims:
            spectrum, chosen = _choose_time(path, spectrum, time)
        elif time is not None:
            raise CorruptFileError(path, f"has no `{TIME_DIMENSION}` dimension to choose {time} from")
        for name, size in spectrum.sizes.items():
            if name not in (FREQUENCY_DIMENSION, DIRECTION_DIMENSION) and size != 1:
                raise CorruptFileError(
                    path, f"`{SPECTRUM_VARIABLE}` has {size} entries along `{name}`; a record is one spectrum (keep one)"
                )
        spectrum = spectrum.squeeze(drop=True).transpose(FREQUENCY_DIMENSION, DIRECTION_DIMENSION)
        units = {
            name: str(dataset[name].attrs.get("units", "")) if name in dataset.variables else ""
            for name in (SPECTRUM_VARIABLE, FREQUENCY_DIMENSION, DIRECTION_DIMENSION)
        }
        return FrequencyDirectionGrid(
            path,
            np.asarray(spectrum[FREQUENCY_DIMENSION].values, dtype=np.float64),
            np.asarray(spectrum[DIRECTION_DIMENSION].values, dtype=np.float64),
            np.asarray(spectrum.values, dtype=np.float64),
            units,
            chosen,
        )


def _choose_time(path: Path, spectrum, time: str | None):
    times = spectrum[TIME_DIMENSION].values
    shown = [np.datetime_as_string(t, unit="m") if np.issubdtype(times.dtype, np.datetime64) else str(t) for t in times]
    if time is None:
        if times.size == 1:
            return spectrum.isel({TIME_DIMENSION: 0}), shown[0]
        raise CorruptFileError(
            path, f"holds {times.size} times ({shown[0]} to {shown[-1]}); choose one with the record's time"
        )
    try:
        wanted = np.datetime64(time) if np.issubdtype(times.dtype, np.datetime64) else float(time)
    except ValueError:
        raise CorruptFileError(path, f"time `{time}` is not a date and time (write it as 2026-03-14T09:00)") from None
    matches = np.flatnonzero(times == wanted)
    if not matches.size:
        raise CorruptFileError(path, f"holds no spectrum at {time} (times: {shown[0]} to {shown[-1]}, {times.size} in all)")
    index = int(matches[0])
    return spectrum.isel({TIME_DIMENSION: index}), shown[index]
