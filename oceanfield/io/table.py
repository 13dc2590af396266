"""Tables of numbers as CSV or JSON files, written atomically.

Knows nothing of physics: it writes named columns and rows.

CSV has one header row naming each column (with its unit in the name, e.g. ``height_m``)
and one row per record. JSON is one object: the caller's metadata, the column names and
the records as objects keyed by column name.
"""

from __future__ import annotations

import csv
import io as _io
import json
import math
import os
from pathlib import Path
from typing import Any, Mapping, Sequence

from oceanfield.io.atomic import atomic_output, prepare_output

__all__ = ["TABLE_FORMATS", "table_format", "format_csv", "format_json", "write_table"]

#: File suffixes a table can be written as.
TABLE_FORMATS = (".csv", ".json")


def table_format(path: str | os.PathLike[str]) -> str:
    """``"csv"`` or ``"json"`` from a file name's suffix; ValueError naming ``--out`` otherwise."""
    suffix = Path(path).suffix.lower()
    if suffix not in TABLE_FORMATS:
        raise ValueError(f"--out: {str(path)!r} is not allowed; allowed: a file ending in .csv or .json")
    return suffix[1:]


def _plain(value: Any) -> Any:
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if hasattr(value, "item"):  # numpy scalars
        return _plain(value.item())
    return value


def format_csv(columns: Sequence[str], rows: Sequence[Sequence[Any]]) -> str:
    """The table as CSV text: a header row, then one row per record (floats as repr)."""
    buffer = _io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(columns)
    for row in rows:
        writer.writerow([repr(float(v)) if isinstance(v, float) else v for v in map(_plain, row)])
    return buffer.getvalue()


def format_json(columns: Sequence[str], rows: Sequence[Sequence[Any]], metadata: Mapping[str, Any] | None = None) -> str:
    """The table as a JSON object: ``metadata``'s keys, ``columns`` and ``records``."""
    document = dict(metadata or {})
    document["columns"] = list(columns)
    document["records"] = [dict(zip(columns, map(_plain, row))) for row in rows]
    return json.dumps(document, indent=1, allow_nan=False) + "\n"


def write_table(path: str | os.PathLike[str], columns: Sequence[str], rows: Sequence[Sequence[Any]],
                metadata: Mapping[str, Any] | None = None) -> Path:
    """Write the table as CSV or JSON (by the suffix) atomically; returns the path.

    The folder is created if missing. CSV carries no metadata (its header names the units).
    """
    final = Path(path)
    text = format_json(columns, rows, metadata) if table_format(final) == "json" else format_csv(columns, rows)
    prepare_output(final)
    with atomic_output(final) as temporary:
        temporary.write_text(text, encoding="utf-8")
    return final
