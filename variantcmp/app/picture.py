"""Save the view on screen as an SVG picture, for a report."""

from __future__ import annotations

import os
import tempfile
from datetime import datetime
from pathlib import Path


def picture_path(folder: Path, view: str, now: datetime) -> Path:
    """``variantcmp-<view>-<date>-<time>.svg`` in ``folder``, numbered where that name is taken."""
    stem = f"variantcmp-{view}-{now:%Y%m%d-%H%M%S}"
    path, number = folder / f"{stem}.svg", 1
    while path.exists():
        number += 1
        path = folder / f"{stem}-{number}.svg"
    return path


def save_view(app, folder: Path, now: datetime | None = None) -> Path:
    """Write what ``app`` shows now as an SVG file in ``folder``; returns its path.

    The file appears complete or not at all (written beside it, then renamed). Raises OSError
    where the folder cannot be written.
    """
    view = getattr(app.screen, "PICTURE_NAME", "view")
    path = picture_path(folder, view, now or datetime.now())
    catalogue = getattr(app, "catalogue", None)
    title = f"variantcmp · {view}" + (f" · {catalogue.title}" if catalogue is not None else "")
    svg = app.export_screenshot(title=title)
    handle, temporary = tempfile.mkstemp(prefix=f".{path.stem}-", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as file:
            file.write(svg)
        os.replace(temporary, path)
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise
    return path.resolve()
