"""The engine-out view of the terminal app, driven with real keys through Textual's pilot: what it
shows is what ``variantcmp oei`` computes (variantcmp.table.engine_out), with the cautions and
the drift-down drawing of the selected row."""

from __future__ import annotations

from test_app import SIZE, press_settle, replace_text, run, settle, shown_text, table_rows

from variantcmp.app import VariantCmpApp
from variantcmp.app.compare import CompareScreen
from variantcmp.app.engine_out_screen import EngineOutScreen
from variantcmp.app.widgets import CAUTION_LINES
from variantcmp.caution import ENGINE_OUT_CAUTION
from variantcmp.catalogue import demo_catalogue_path, load_catalogue
from variantcmp.table import Conditions
from variantcmp.table.engine_out import EngineOutOptions, engine_out_table
from variantcmp.units import WeightSpec, format_flight_level


def reference(options=EngineOutOptions(), **conditions):
    return engine_out_table(load_catalogue(demo_catalogue_path()), Conditions(**conditions), options)


def test_engine_out_view_shows_the_oei_numbers_the_cautions_and_a_profile():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(100, 34)) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "g")
            screen = app.screen
            assert isinstance(screen, EngineOutScreen)
            # Both cautions on screen, without hunting.
            assert ENGINE_OUT_CAUTION in shown_text(screen.query_one("#oei-caution"))
            assert screen.query_one("#caution").region.height > 0
            expected = reference()
            rows = table_rows(screen, "#oei-table")
            assert len(rows) == expected.height
            for shown, row in zip(rows, expected.iter_rows(named=True)):
                assert shown[:2] == [row["variant"], row["engine"]]
                assert shown[2] == format_flight_level(row["gross_ceiling_ft"])
                assert shown[4] == format_flight_level(row["net_ceiling_ft"])
                assert shown[7] == f"{row['driftdown_distance_nm']:,.0f}"
            drawn = screen.sketch.plain
            assert drawn.startswith(f"Drift-down {rows[0][0]} / {rows[0][1]}") and "G gross path" in drawn
            # The cursor picks the row drawn.
            await press_settle(app, pilot, "down", "down")
            assert screen.sketch.plain.startswith(f"Drift-down {rows[2][0]} / {rows[2][1]}")
            # A start level and a terrain, typed: the terrain columns and the check in the drawing.
            await press_settle(app, pilot, "c")
            await replace_text(pilot, "FL350")
            await pilot.press("tab")
            await replace_text(pilot, "14000")
            await press_settle(app, pilot, "enter")
            with_terrain = reference(EngineOutOptions(start_ft=35_000.0, terrain_ft=14_000.0))
            rows = table_rows(screen, "#oei-table")
            header = [str(c.label).strip() for c in screen.query_one("#oei-table").columns.values()]
            assert "Net clears" in header
            clears = header.index("Net clears")
            # (— where no path starts: the heavy turboprop cannot fly at FL350 at all; the note says so)
            assert [r[clears] for r in rows] == ["—" if c is None else "✓ yes" if c else "✗ NO"
                                                 for c in with_terrain["net_clears"]]
            assert None in with_terrain["net_clears"].to_list()
            assert "obstacle" in screen.sketch.plain
            # The compare screen's conditions carry over: a hot day, recomputed on return.
            await press_settle(app, pilot, "escape")
            assert isinstance(app.screen, CompareScreen)
            await press_settle(app, pilot, "c", "tab")
            await replace_text(pilot, "ISA+20")
            await press_settle(app, pilot, "enter", "g")
            hot = reference(EngineOutOptions(start_ft=35_000.0, terrain_ft=14_000.0), isa_devs_c=(20.0,))
            assert [r[2] for r in table_rows(app.screen, "#oei-table")] == [
                format_flight_level(v) for v in hot["gross_ceiling_ft"]]
    run(body)


def test_a_bad_field_is_said_in_place_and_the_profile_can_take_the_whole_view():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "g", "c", "tab")
            await replace_text(pilot, "high")
            await settle(app, pilot)
            errors = shown_text(app.screen.query_one("#oei-errors"))
            assert "Terrain" in errors and "high" in errors
            assert app.screen.query_one("#oei-table").row_count > 0  # the last good table stays
            await press_settle(app, pilot, "escape", "p")
            assert not app.screen.query_one("#oei-table").display
            assert app.screen.sketch.plain.startswith("Drift-down")  # room for the drawing at 80x24
            await press_settle(app, pilot, "p")
            assert app.screen.query_one("#oei-table").display
            # A short terminal keeps a one-line caution.
            await pilot.resize_terminal(80, 18)
            await settle(app, pilot)
            banner = app.screen.query_one("#caution")
            assert banner.compact and banner.region.height == 1 and banner.plain in CAUTION_LINES
    run(body)


def test_several_weights_and_days_give_a_row_each():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(120, 40)) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "c")
            await replace_text(pilot, "90%mtow,mtow")
            await pilot.press("tab")
            await replace_text(pilot, "0,15")
            await press_settle(app, pilot, "enter", "g")
            expected = reference(weights=(WeightSpec(90.0, "%mtow"), WeightSpec(100.0, "%mtow")),
                                 isa_devs_c=(0.0, 15.0))
            rows = table_rows(app.screen, "#oei-table")
            assert len(rows) == expected.height
            assert [r[4] for r in rows] == [format_flight_level(v) for v in expected["gross_ceiling_ft"]]
    run(body)

