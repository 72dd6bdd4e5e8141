"""The bundled demo catalogues (invented fleets shipped with the package)."""

from __future__ import annotations

from pathlib import Path

DEMO_CATALOGUE = "fernholt-regional.toml"


def bundled_fleet_dir() -> Path:
    """The folder of demo catalogues: inside the installed package, else the source checkout's fleets/."""
    package = Path(__file__).resolve().parent.parent
    installed = package / "fleets"
    if installed.is_dir():
        return installed
    return package.parent / "fleets"


def demo_catalogue_path() -> Path:
    """The catalogue used when none is given: the fictional regional operator's fleet."""
    return bundled_fleet_dir() / DEMO_CATALOGUE


def demo_catalogue_paths() -> list[Path]:
    """Every bundled demo catalogue, sorted by file name."""
    return sorted(bundled_fleet_dir().glob("*.toml"))
