"""The terminal app: compare a fleet's ceilings, keyboard-first, over SSH.

`run_app` is what ``variantcmp [CATALOGUE]`` calls. Every number it shows comes
from `variantcmp.table`, the same code as ``variantcmp ceilings``.
"""

from __future__ import annotations

from .main import VariantCmpApp

__all__ = ["VariantCmpApp", "run_app"]


def run_app(catalogue_path: str | None) -> int:
    """Run the app on ``catalogue_path`` (None: the bundled demo fleet); returns the exit code."""
    app = VariantCmpApp(catalogue_path)
    app.run()
    return app.return_code or 0
