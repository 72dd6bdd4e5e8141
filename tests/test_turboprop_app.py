"""The terminal app with propeller engines, driven with real keys through Textual's pilot: the
variant view of a turboprop and a catalogue's warnings when it loads."""

from __future__ import annotations

import re

import polars as pl
import tomli_w

from test_app import press_settle, run, settle, shown_text
from variantcmp.app import VariantCmpApp
from variantcmp.app.variant_info import VariantScreen
from variantcmp.table import fleet_figures


def test_turboprop_variant_view_shows_power_efficiency_and_the_speed_of_its_best_ceiling(demo):
    # What the view shows is what the result layer gives (fleet_figures, the same numbers as
    # `variantcmp check`): the shaft power, the power-to-weight, the propeller efficiency (table
    # in one line, or the constant) and the absolute ceiling's speed with the efficiency there.
    figures = fleet_figures(demo, ("t72",))["t72"]

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(140, 60)) as pilot:
            await settle(app, pilot)
            table = app.screen.query_one("#table")
            row = next(i for i in range(table.row_count) if str(table.get_row_at(i)[0]).strip() == "t72")
            table.move_cursor(row=row)
            await press_settle(app, pilot, "i")
            screen = app.screen
            assert isinstance(screen, VariantScreen) and screen.variant_id == "t72"
            engines = shown_text(screen.query_one("#variant-engines"), width=140)
            lines = {line.split("  ")[0].strip(): line for line in engines.splitlines() if line.strip()}
            assert re.search(r"shaft power per engine \(climb/cruise rating\) \(kW\)\s+2,000\s+2,350", engines)
            assert "propeller efficiency table" in lines and "M0.15 to 0.65: 0.6 to 0.87" in engines
            assert re.search(r"propeller efficiency\s+—\s+0\.84", engines)  # the constant of the PT-24
            for engine in ("tavish-20", "tavish-24"):
                assert f"M{figures['absolute_ceiling_mach'][engine]:.3f}" in lines["speed for the absolute ceiling"]
                assert f"{figures['power_to_weight_kw_per_kg'][engine]:.4g}" in lines["shaft power-to-weight at MTOW (kW/kg)"]
            assert "static thrust" not in engines and "climb/cruise share of full rating" not in engines  # jets' keys
            # The shared conditions' rows: a Mach and airspeeds at each maximum altitude.
            rows = app.results.df.filter(pl.col("variant") == "t72")
            text = shown_text(screen.query_one("#variant-conditions"), width=140)
            assert rows.height == 2 and all(engine in text for engine in ("tavish-20", "tavish-24"))
    run(body)


def test_a_catalogue_warning_is_shown_when_the_file_loads_and_in_the_variant_view(tmp_path, monkeypatch):
    # Common practice, no source: propeller efficiency collapses above about M0.7; the warning is
    # on screen when the catalogue loads, and under the variant's heading in its view.
    path = tmp_path / "fast.toml"
    path.write_text(tomli_w.dumps({
        "catalogue": {"title": "fast turboprop"},
        "engine": [{"id": "p1", "model": "turboprop", "shaft_power_kw": 2000.0, "propeller_efficiency": 0.8}],
        "variant": [{"id": "a1", "engine_options": ["p1"], "engine_count": 2, "wing_area_m2": 61.0,
                     "aspect_ratio": 12.0, "oswald_e": 0.8, "cd0": 0.025, "cl_max": 1.6, "mtow_kg": 23_000.0,
                     "cruise_mach": 0.74, "mmo": 0.78}]}))
    shown = []
    monkeypatch.setattr(VariantCmpApp, "notify", lambda self, message, **kw: shown.append((message, kw)))

    async def body():
        app = VariantCmpApp(str(path))
        async with app.run_test(size=(120, 40)) as pilot:
            await settle(app, pilot)
            assert len(shown) == 1
            message, kw = shown[0]
            assert kw["severity"] == "warning" and "Catalogue warnings" in kw["title"]
            assert '"a1".cruise_mach' in message and "propeller efficiency collapses above about M0.7" in message
            await press_settle(app, pilot, "i")
            head = shown_text(app.screen.query_one("#variant-head"), width=120)
            assert "⚠ cruise Mach 0.74 with turboprop option(s) p1" in head
    run(body)
