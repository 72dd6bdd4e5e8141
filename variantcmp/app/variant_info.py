"""Inspect one variant: its maximum altitudes at the shared conditions with the airspeeds there,
its derived figures, engine options and catalogue values. Altitudes in ft throughout."""

from __future__ import annotations

import math
from dataclasses import fields

import polars as pl
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import Screen
from textual.widgets import Static

from variantcmp.airspeed_columns import with_airspeeds
from variantcmp.catalogue import Engine, Variant, engine_keys
from variantcmp.table import FIGURE_LABELS, variant_figures
from variantcmp.units import format_altitude_ft

from .keys import HoldsKeys, focus_now
from .view import COLUMNS_BY_KEY, NONE, cell
from .widgets import CautionBanner, FittingFooter

# Unit suffixes of catalogue and figure names, written for people.
_UNITS = (
    ("_m2", "m²"), ("_kg_per_m2", "kg/m²"), ("_kg", "kg"), ("_ft", "ft"), ("_kt", "kt"),
    ("_kpa", "kPa"), ("_deg", "°"), ("_kn", "kN"), ("_c", "°C"), ("_fpm", "ft/min"),
    ("_kw", "kW"), ("_kg_per_kwh", "kg/kWh"), ("_mg_per_ns", "mg/(N s)"),
)
_NAMES = {
    "cd0": "CD0 (zero-lift drag)", "k": "K (induced drag factor)", "cl_max": "CL max (clean, 1 g)",
    "mtow_kg": "MTOW", "oew_kg": "OEW", "mmo": "MMO", "vmo_kt": "VMO",
    "max_altitude_ft": "certified maximum altitude", "oswald_e": "Oswald factor e",
    "ld_max": "best lift-to-drag ratio", "cl_star": "CL at best lift-to-drag",
    "static_thrust_kn": "static thrust per engine", "flat_rate_isa_dev_c": "flat rated up to ISA+",
    "lapse_exponent_above_tropopause": "lapse exponent above the tropopause (36,089 ft)",
    "cruise_mach": "cruise Mach", "buffet_mach": "buffet onset Mach", "buffet_cl": "buffet onset CL",
    "induced_drag_k": "K as given", "sweep_deg": "wing sweep", "korn_factor": "Korn factor",
    "max_cabin_dp_kpa": "maximum cabin pressure differential", "engine_count": "engines",
    "shaft_power_kw": "shaft power per engine (climb/cruise rating)", "propeller_efficiency": "propeller efficiency",
    "psfc_kg_per_kwh": "power-specific fuel consumption", "tsfc_mg_per_ns": "thrust-specific fuel consumption",
    "mct_thrust_ratio": "maximum continuous / climb rating", "rating_fraction": "climb/cruise share of full rating",
}
# Thrust and propeller efficiency tables are summarised in one line rather than listed value by value.
_GRID_FIELDS = ("table_altitude_ft", "table_mach", "table_thrust_fraction", "propeller_efficiency_mach",
                "propeller_efficiency_table")


# Engine values shown first: the model and its rating (thrust, or power and the propeller's efficiency).
_ENGINE_FIRST = ("model", "static_thrust_kn", "shaft_power_kw", "propeller_efficiency")


def _name_and_unit(key: str) -> tuple[str, str]:
    if key in FIGURE_LABELS:
        return FIGURE_LABELS[key][:2]
    if key == "hot_day_loss_per_c":
        return "thrust loss above flat rating", "fraction per °C"
    for suffix, unit in sorted(_UNITS, key=lambda item: -len(item[0])):
        if key.endswith(suffix):
            base = key[: -len(suffix)]
            return _NAMES.get(key, base.replace("_", " ")), unit
    # A figure named with its unit in it (e.g. "... kg/m2"): write the unit for people.
    return _NAMES.get(key, key.replace("_", " ")).replace("m2", "m²"), ""


def _value(key: str, value) -> str:
    if value is None or value == ():
        return NONE
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        if not math.isfinite(value):
            return NONE
        if key.endswith("_ft") or " ft" in key:
            return format_altitude_ft(value)
        if key.endswith("_mach") and key in FIGURE_LABELS:
            return f"M{value:.3f}"
        if abs(value) >= 1000:
            return f"{value:,.0f}"
        return f"{value:.4g}"
    if isinstance(value, tuple):
        return ", ".join(_value(key, item) for item in value)
    return str(value)


def _pairs_table(title: str, pairs: list[tuple[str, str, str]]) -> Table:
    table = Table(title=title, title_justify="left", show_header=False, box=None, padding=(0, 1))
    table.add_column("name", style="bold", no_wrap=True)
    table.add_column("value", justify="right")
    table.add_column("unit")
    for row in pairs:
        table.add_row(*row)
    return table


def catalogue_pairs(variant: Variant) -> list[tuple[str, str, str]]:
    pairs = []
    for field in fields(variant):
        if field.name in ("id", "label", "engine_options"):
            continue
        name, unit = _name_and_unit(field.name)
        pairs.append((name, _value(field.name, getattr(variant, field.name)), unit))
    return pairs


def figures_tables(figures: dict, engine_ids: tuple[str, ...]) -> tuple[list, dict[str, dict]]:
    """Split the derived figures into plain values and per-engine values."""
    plain, per_engine = [], {engine_id: {} for engine_id in engine_ids}
    for key, value in figures.items():
        if isinstance(value, dict):
            for engine_id, item in value.items():
                per_engine.setdefault(engine_id, {})[key] = item
        else:
            name, unit = _name_and_unit(key)
            plain.append((name, _value(key, value), unit))
    return plain, per_engine


def engines_table(engines: list[Engine], per_engine: dict[str, dict]) -> Table:
    table = Table(title="Engine options", title_justify="left", box=None, padding=(0, 1))
    table.add_column("", style="bold", no_wrap=True)
    for engine in engines:
        table.add_column(engine.id, justify="right")
    names: list[str] = []
    values = [f.name for f in fields(Engine) if f.name != "id"]
    values = [k for k in _ENGINE_FIRST if k in values] + [k for k in values if k not in _ENGINE_FIRST + ("label",)]
    for engine in engines:  # derived figures first, then the catalogue values (the label last: it wraps)
        for key in list(per_engine.get(engine.id, {})) + values + ["label"]:
            if key not in names and key not in _GRID_FIELDS:
                names.append(key)
    for key in names:
        label, unit = _name_and_unit(key)
        label = f"{label} ({unit})" if unit else label
        cells = []
        for engine in engines:
            extra = per_engine.get(engine.id, {})
            # Catalogue values only where the engine's model takes the key (a turboprop has no rating
            # fraction, a jet no propeller efficiency).
            value = extra[key] if key in extra else (getattr(engine, key, None) if key in engine_keys(engine.model)
                                                     else None)
            cells.append(_value(key, value))
        if any(c != NONE for c in cells):
            table.add_row(label, *cells)
    if any(engine.table_altitude_ft for engine in engines):
        table.add_row("thrust table", *[_grid_summary(engine) for engine in engines])
    if any(engine.propeller_efficiency_mach for engine in engines):
        table.add_row("propeller efficiency table", *[_efficiency_summary(engine) for engine in engines])
    return table


def _efficiency_summary(engine: Engine) -> str:
    mach, eta = engine.propeller_efficiency_mach, engine.propeller_efficiency_table
    if not mach:
        return NONE
    best = max(range(len(eta)), key=eta.__getitem__)
    return f"M{mach[0]:g} to {mach[-1]:g}: {min(eta):g} to {max(eta):g} (best at M{mach[best]:g})"


def _grid_summary(engine: Engine) -> str:
    if not engine.table_altitude_ft:
        return NONE
    alt, mach = engine.table_altitude_ft, engine.table_mach
    return (f"{len(alt)} altitudes {format_altitude_ft(alt[0])} to {format_altitude_ft(alt[-1])} ft"
            f" x {len(mach)} Mach {mach[0]:g} to {mach[-1]:g}")


# The shared conditions' rows of a variant, in this order; where the width is short the columns
# are kept by importance (the airspeeds at the maximum altitude before the conditions).
_AT_CONDITIONS = ("engine", "weight", "pct_mtow", "isa", "climb", "fl", "max_ft", "limit", "mach", "tas", "cas")
_IMPORTANCE = ("engine", "fl", "mach", "tas", "cas", "limit", "max_ft", "isa", "weight", "pct_mtow", "climb")
_SPEED_HEADERS = {"tas": "TAS kt", "cas": "CAS kt"}


def conditions_table(rows: pl.DataFrame, width: int = 200) -> Table:
    """The variant's rows of the shared results, with TAS and CAS at each maximum altitude, in
    ``width`` characters (columns left out by `_IMPORTANCE` where they do not fit, and said so)."""
    texts: dict[str, list[str]] = {key: [] for key in _AT_CONDITIONS}
    for row in with_airspeeds(rows).iter_rows(named=True):
        for key in _AT_CONDITIONS:
            if key in _SPEED_HEADERS:
                value = row[f"{key}_kt"]
                texts[key].append(NONE if value is None else f"{value:.0f}")
            else:
                texts[key].append(cell(COLUMNS_BY_KEY[key], row).plain)
    headers = {key: _SPEED_HEADERS.get(key) or COLUMNS_BY_KEY[key].header for key in _AT_CONDITIONS}
    room, kept = width, set()
    for key in _IMPORTANCE:
        need = max(len(text) for text in [headers[key], *texts[key]]) + 2  # padding: one each side
        if need <= room:
            kept.add(key)
            room -= need
    left_out = [headers[key] for key in _AT_CONDITIONS if key not in kept]
    title = "Maximum altitudes at the compare screen's conditions, and the airspeeds there"
    if left_out:
        title += f" (too narrow for: {', '.join(left_out)})"
    table = Table(title=title, title_justify="left", box=None, padding=(0, 1))
    shown = [key for key in _AT_CONDITIONS if key in kept]
    for key in shown:
        left = key == "engine" or key == "limit"
        table.add_column(headers[key], justify="left" if left else "right", no_wrap=True)
    for i in range(rows.height):
        table.add_row(*[texts[key][i] for key in shown])
    return table


class VariantScreen(HoldsKeys, Screen):
    PICTURE_NAME = "variant"  # in the name of a saved SVG (f2)
    BINDINGS = [
        Binding("escape", "close", "Back"),
        Binding("n", "step(1)", "Next variant"),
        Binding("p", "step(-1)", "Previous variant"),
    ]

    def __init__(self, variant_id: str) -> None:
        super().__init__()
        self.variant_id = variant_id

    def compose(self) -> ComposeResult:
        yield CautionBanner(id="caution")
        with VerticalScroll(id="variant-body"):
            yield Static(id="variant-head")
            yield Static(id="variant-conditions")
            yield Static(id="variant-figures")
            yield Static(id="variant-engines")
            yield Static(id="variant-values")
        yield FittingFooter()

    def on_mount(self) -> None:
        self.show()
        self.app.results_signal.subscribe(self, lambda _: self.show_conditions())
        focus_now(self.query_one(VerticalScroll))

    def on_resize(self) -> None:
        self.show_conditions()

    def show_conditions(self) -> None:
        results = self.app.results
        box = self.query_one("#variant-conditions", Static)
        if results is None or results.df is None:
            box.update(Text("No results yet: set the conditions on the compare screen."))
            return
        rows = results.df.filter(pl.col("variant") == self.variant_id)
        width = self.query_one("#variant-body").content_size.width or self.app.size.width - 6
        box.update(conditions_table(rows, width - 2) if rows.height else Text(
            "The compare screen's conditions select no engine option of this variant."))

    def show(self) -> None:
        catalogue = self.app.catalogue
        variant = catalogue.variants[self.variant_id]
        body = self.query_one(VerticalScroll)
        body.border_title = f"Variant {variant.id}"
        body.border_subtitle = f"{list(catalogue.variants).index(variant.id) + 1} of {len(catalogue.variants)}"
        head = Text()
        head.append(variant.label or variant.id, style="bold")
        head.append(f"  ({variant.id}) · {variant.engine_count} engines · options: "
                    f"{', '.join(variant.engine_options)}")
        for warning in catalogue.warnings:  # the catalogue's doubts about this variant
            if f'"{variant.id}"' in warning.key:
                head.append(f"\n⚠ {warning.message.removeprefix('warning: ')}", style="bold yellow")
        self.query_one("#variant-head", Static).update(head)
        self.show_conditions()
        self.query_one("#variant-values", Static).update(
            _pairs_table("Catalogue values", catalogue_pairs(variant)))
        try:
            figures = variant_figures(catalogue, variant.id)
        except Exception as error:  # show what went wrong instead of failing the screen
            self.query_one("#variant-figures", Static).update(
                Text(f"✗ derived figures unavailable: {error}"))
            figures = {}
        plain, per_engine = figures_tables(figures, variant.engine_options)
        if figures:
            self.query_one("#variant-figures", Static).update(_pairs_table("Derived figures", plain))
        engines = [catalogue.engines[e] for e in variant.engine_options if e in catalogue.engines]
        self.query_one("#variant-engines", Static).update(engines_table(engines, per_engine))

    def action_step(self, step: int) -> None:
        ids = list(self.app.catalogue.variants)
        self.variant_id = ids[(ids.index(self.variant_id) + step) % len(ids)]
        self.show()

    def action_close(self) -> None:
        self.dismiss()
