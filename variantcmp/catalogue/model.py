"""Catalogue records: the frozen dataclasses a loaded catalogue is made of (no physics, no I/O)."""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

ENGINE_MODELS = ("density-lapse", "turbofan", "table")


@dataclass(frozen=True)
class Engine:
    """One engine option; thrusts per engine."""

    id: str
    label: str
    model: str  # "density-lapse" | "turbofan" | "table"
    static_thrust_kn: float
    rating_fraction: float = 1.0
    flat_rate_isa_dev_c: float | None = None
    hot_day_loss_per_c: float = 0.0
    # density-lapse
    lapse_exponent: float = 1.0
    lapse_exponent_above_tropopause: float | None = None
    # turbofan
    throttle_ratio: float = 1.0
    # table: thrust / static thrust at ISA, [altitude row][mach column]
    table_altitude_ft: tuple[float, ...] = ()
    table_mach: tuple[float, ...] = ()
    table_thrust_fraction: tuple[tuple[float, ...], ...] = ()


@dataclass(frozen=True)
class Variant:
    """One aircraft variant."""

    id: str
    label: str
    engine_options: tuple[str, ...]
    engine_count: int
    wing_area_m2: float
    aspect_ratio: float | None
    oswald_e: float | None
    induced_drag_k: float | None
    cd0: float
    cl_max: float
    mtow_kg: float
    cruise_mach: float
    oew_kg: float | None = None
    max_altitude_ft: float | None = None
    mmo: float | None = None
    vmo_kt: float | None = None
    buffet_mach: tuple[float, ...] = ()
    buffet_cl: tuple[float, ...] = ()
    sweep_deg: float | None = None
    thickness_ratio: float | None = None
    korn_factor: float | None = None
    max_cabin_dp_kpa: float | None = None
    cabin_altitude_ft: float | None = None

    @property
    def k(self) -> float:
        """Induced-drag factor K of CD = CD0 + K CL^2: given, or 1 / (pi A e)."""
        if self.induced_drag_k is not None:
            return self.induced_drag_k
        return 1.0 / (math.pi * self.aspect_ratio * self.oswald_e)

    @property
    def has_buffet(self) -> bool:
        return len(self.buffet_mach) > 0

    @property
    def has_wave_drag(self) -> bool:
        return None not in (self.sweep_deg, self.thickness_ratio, self.korn_factor)

    @property
    def has_cabin(self) -> bool:
        return self.max_cabin_dp_kpa is not None and self.cabin_altitude_ft is not None


@dataclass(frozen=True)
class Catalogue:
    path: Path
    title: str
    description: str
    engines: dict[str, Engine]  # file order
    variants: dict[str, Variant]  # file order
