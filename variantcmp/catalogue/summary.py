"""A loaded catalogue described in words, for ``variantcmp check``."""

from __future__ import annotations

from .model import Catalogue


def summarise(catalogue: Catalogue) -> list[tuple[str, str]]:
    """(label, text) rows describing a loaded catalogue, for `variantcmp check` to print."""
    rows = [
        ("file", str(catalogue.path)),
        ("title", catalogue.title),
    ]
    if catalogue.description:
        rows.append(("description", " ".join(catalogue.description.split())))
    models = ", ".join(f"{e.id} ({e.model}{', fuel data' if e.has_fuel_data else ''})"
                       for e in catalogue.engines.values())
    rows.append(("engines", f"{len(catalogue.engines)}: {models}"))
    rows.append(("variants", str(len(catalogue.variants))))
    used: set[str] = set()
    for v in catalogue.variants.values():
        used.update(v.engine_options)
        data = []
        if v.has_buffet:
            data.append(f"buffet M{v.buffet_mach[0]:g}-{v.buffet_mach[-1]:g}")
        if v.has_wave_drag:
            data.append("wave drag")
        if v.has_cabin:
            data.append("cabin")
        if v.max_altitude_ft is not None:
            data.append(f"certified {v.max_altitude_ft:,.0f} ft")
        if v.mmo is not None:
            data.append(f"MMO {v.mmo:g}")
        if v.vmo_kt is not None:
            data.append(f"VMO {v.vmo_kt:g} kt")
        if v.engine_count > 1:
            default = " (default)" if v.oei_cd0_increment is None else ""
            data.append(f"one engine out: CD0 +{v.oei_cd0:g}{default}, net gradient -{v.net_decrement_pct:g} %"
                        + (" (default)" if v.net_gradient_decrement_pct is None else ""))
        text = (
            f"{v.label}; {v.engine_count} x {', '.join(v.engine_options)}; "
            f"optional data: {', '.join(data) if data else 'none'}"
        )
        rows.append((f"variant {v.id}", text))
    unused = [e for e in catalogue.engines if e not in used]
    if unused:
        rows.append(("unused engines", ", ".join(unused)))
    for w in catalogue.warnings:
        rows.append(("warning", f"{w.key}: {w.message.removeprefix('warning: ')}"))
    return rows
