"""Fleet catalogues: TOML files of engine options and aircraft variants.

`load_catalogue` reads a catalogue, checks every value (type, finiteness, a plausible
physical range, cross references between tables) and returns frozen dataclasses, or
raises one `CatalogueError` that lists every problem found, each with the file, the key
path and what was expected. No physics lives here.

Modules: ``model`` (the records), ``schema`` (keys, units, ranges), ``tables`` (checked access to
one TOML table), ``validate`` (engine and variant rules), ``load`` (file -> catalogue),
``problems`` (messages), ``bundled`` (demo fleets), ``summary`` (the ``check`` summary).
"""

from __future__ import annotations

from .bundled import DEMO_CATALOGUE, bundled_fleet_dir, demo_catalogue_path, demo_catalogue_paths
from .load import load_catalogue
from .model import ENGINE_MODELS, Catalogue, Engine, Variant
from .problems import CatalogueError, Problem
from .schema import engine_keys
from .summary import summarise

__all__ = [
    "Problem",
    "CatalogueError",
    "Engine",
    "Variant",
    "Catalogue",
    "ENGINE_MODELS",
    "DEMO_CATALOGUE",
    "load_catalogue",
    "bundled_fleet_dir",
    "demo_catalogue_path",
    "demo_catalogue_paths",
    "summarise",
    "engine_keys",
]
