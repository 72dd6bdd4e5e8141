"""Catalogue records: the frozen dataclasses a loaded catalogue is made of (no physics, no I/O)."""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

ENGINE_MODELS = ("density-lapse", "turbofan", "table", "turboprop")
#: One engine inoperative: the zero-lift drag added (windmilling or feathered engine, rudder and
#: aileron trim) where a variant gives none; a typical twin's figure, from memory.
DEFAULT_OEI_CD0_INCREMENT = 0.003
#: Net flight path: the gross gradient's decrement in % by engine count (en-route one engine
#: inoperative practice, from memory).
DEFAULT_NET_DECREMENT_PCT = {2: 1.1, 3: 1.4, 4: 1.6}


@dataclass(frozen=True)
class Engine:
    """One engine option; thrusts and powers per engine."""

    id: str
    label: str
    model: str  # one of ENGINE_MODELS
    static_thrust_kn: float | None = None  # jets; None for propeller engines
    rating_fraction: float = 1.0
    flat_rate_isa_dev_c: float | None = None
    hot_day_loss_per_c: float = 0.0
    # density-lapse (and the turboprop's power lapse)
    lapse_exponent: float = 1.0
    lapse_exponent_above_tropopause: float | None = None
    # turbofan
    throttle_ratio: float = 1.0
    # table: thrust / static thrust at ISA, [altitude row][mach column]
    table_altitude_ft: tuple[float, ...] = ()
    table_mach: tuple[float, ...] = ()
    table_thrust_fraction: tuple[tuple[float, ...], ...] = ()
    # turboprop: shaft power at the climb/cruise rating and the propeller efficiency (constant or against Mach)
    shaft_power_kw: float | None = None
    propeller_efficiency: float | None = None
    propeller_efficiency_mach: tuple[float, ...] = ()
    propeller_efficiency_table: tuple[float, ...] = ()
    # fuel: TSFC c = (a + b M) sqrt(theta) or a table at ISA (jets); PSFC (propeller engines)
    tsfc_mg_per_ns: float | None = None
    tsfc_mach_slope: float = 0.0
    tsfc_table_altitude_ft: tuple[float, ...] = ()
    tsfc_table_mach: tuple[float, ...] = ()
    tsfc_table_mg_per_ns: tuple[tuple[float, ...], ...] = ()
    psfc_kg_per_kwh: float | None = None
    # one engine inoperative: maximum continuous thrust (power) / the climb rating's
    mct_thrust_ratio: float = 1.0

    @property
    def is_propeller(self) -> bool:
        return self.model == "turboprop"

    @property
    def has_fuel_data(self) -> bool:
        if self.is_propeller:
            return self.psfc_kg_per_kwh is not None
        return self.tsfc_mg_per_ns is not None or bool(self.tsfc_table_mg_per_ns)


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
    oei_cd0_increment: float | None = None  # None: DEFAULT_OEI_CD0_INCREMENT
    net_gradient_decrement_pct: float | None = None  # None: DEFAULT_NET_DECREMENT_PCT by engine count

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
    def oei_cd0(self) -> float:
        """The zero-lift drag increment with one engine out: given, or the default."""
        return DEFAULT_OEI_CD0_INCREMENT if self.oei_cd0_increment is None else self.oei_cd0_increment

    @property
    def net_decrement_pct(self) -> float | None:
        """The net flight path's gradient decrement in %: given, or by engine count (None for
        one engine: no engine-out answer)."""
        if self.net_gradient_decrement_pct is not None:
            return self.net_gradient_decrement_pct
        if self.engine_count < 2:
            return None
        return DEFAULT_NET_DECREMENT_PCT.get(self.engine_count, DEFAULT_NET_DECREMENT_PCT[4])

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
    warnings: tuple = ()  # Problems that do not stop the catalogue being used
