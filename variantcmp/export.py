"""Exports of result tables, shared by the command line and the terminal app: numbers at a stated
precision, and files written whole or not at all."""

from __future__ import annotations

import os
import re
import tempfile
from pathlib import Path

#: Decimals kept in exports, by column name (first match wins): 0.01 ft, 0.1 kg, 0.01 deg C,
#: 0.0001 Mach, 0.1 kg/h, 0.01 NM and NM per 1,000 kg, never coarser. Anything else keeps 6 decimals.
EXPORT_DECIMALS = (
    (re.compile(r"(^|_)mach($|_)"), 4),
    (re.compile(r"_ft$"), 2),
    (re.compile(r"_kg$"), 1),
    (re.compile(r"(^|_)c$|_c_|_per_c$"), 2),
    (re.compile(r"_fpm$"), 2),
    (re.compile(r"pct"), 2),
    (re.compile(r"_kt$"), 2),
    (re.compile(r"_kg_h$"), 1),
    (re.compile(r"_nm$|_min$"), 2),
    (re.compile(r"_nm_per_t$"), 2),
)
DEFAULT_DECIMALS = 6
FORMATS = {".csv": "CSV", ".parquet": "Parquet", ".json": "JSON"}


def export_decimals(name: str) -> int:
    return next((d for pattern, d in EXPORT_DECIMALS if pattern.search(name)), DEFAULT_DECIMALS)


def for_export(frame):
    """Floats rounded to :data:`EXPORT_DECIMALS`; NaN never reaches an export as a number (null)."""
    import polars as pl

    floats = [c for c, t in frame.schema.items() if t in (pl.Float32, pl.Float64)]
    return frame.with_columns(pl.col(c).fill_nan(None).round(export_decimals(c)) for c in floats)


def write_table(frame, path: Path) -> None:
    """Write a table in the format its file name asks for (.csv, .parquet, .json), atomically: to a
    temporary file in the same folder, renamed over the target only once complete, so an
    interrupted export leaves the previous file as it was."""
    path = Path(path)
    suffix = path.suffix.lower()
    if suffix not in FORMATS:
        raise ValueError(f"unknown format {suffix!r}: expected {', '.join(FORMATS)}")
    frame = for_export(frame)
    handle, temporary = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    os.close(handle)
    try:
        if suffix == ".csv":
            frame.write_csv(temporary)
        elif suffix == ".parquet":
            frame.write_parquet(temporary)
        else:
            frame.write_json(temporary)
        if path.exists():
            os.chmod(temporary, path.stat().st_mode & 0o777)
        os.replace(temporary, path)
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise
