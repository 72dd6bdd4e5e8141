"""The cruise-level view of the terminal app, driven with real keys through Textual's pilot: it shows
what ``variantcmp cruise`` computes, sorts, follows the shared conditions, changes level scheme and
draws the selected row's specific range against altitude, readable without colour."""

from __future__ import annotations

import asyncio

import pytest

from test_app import BRAILLE, SIZE, press_settle, replace_text, run, settle, table_rows
from variantcmp.app import VariantCmpApp
from variantcmp.app.compare import CompareScreen
from variantcmp.app.cruise_screen import CruiseScreen
from variantcmp.catalogue import demo_catalogue_path, load_catalogue
from variantcmp.table import Conditions
from variantcmp.table.cruise import cruise_table
from variantcmp.units import WeightSpec, format_flight_level


def reference(conditions: Conditions, scheme: str = "2000-east"):
    return cruise_table(load_catalogue(demo_catalogue_path()), conditions, scheme)


def shown(screen) -> list[list[str]]:
    return table_rows(screen, "#cruise-table")


def column(screen, key: str) -> int:
    return [c.value for c in screen.query_one("#cruise-table").columns].index(key)


def test_cruise_view_shows_the_cruise_table_sorts_and_changes_scheme():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "f")
            screen = app.screen
            assert isinstance(screen, CruiseScreen)
            expected = reference(Conditions())
            rows = shown(screen)
            level, sr, opt = column(screen, "level"), column(screen, "sr"), column(screen, "opt")
            assert len(rows) == expected.height
            for row, ref in zip(rows, expected.iter_rows(named=True)):
                assert row[0] == ref["variant"] and row[1] == ref["engine"]
                assert row[level] == f"FL{ref['cruise_fl']:03d}"
                assert row[sr] == f"{ref['specific_range_nm_per_t']:,.1f}"
                assert row[opt] == format_flight_level(ref["optimum_altitude_ft"])
            print(f"\ncruise view: solver {screen.compute_ms:.0f} ms")
            # The drawing of the row under the cursor: title, axes, legend, marks.
            text = screen.query_one("#cruise-sketch").plain
            assert text.startswith(f"Specific range  {expected['variant'][0]} / {expected['engine'][0]}")
            assert "SR NM/t" in text and "R specific range at M0.77" in text and "▲ optimum" in text
            assert any(ord(ch) in BRAILLE for ch in text)
            # Sort: best specific range first.
            await press_settle(app, pilot, "s")
            values = [float(r[sr].replace(",", "")) for r in shown(screen)]
            assert values == sorted(values, reverse=True)
            await press_settle(app, pilot, "r")
            values = [float(r[sr].replace(",", "")) for r in shown(screen)]
            assert values == sorted(values)
            # Another level scheme: recomputed, the levels those of the westbound scheme.
            await press_settle(app, pilot, "l")
            assert screen.scheme == "2000-west" and screen.computations == 2
            west = {f"FL{r['cruise_fl']:03d}" for r in reference(Conditions(), "2000-west").iter_rows(named=True)}
            assert {r[level] for r in shown(screen)} == west
            # Moving the cursor redraws the drawing for that row, without computing again.
            await press_settle(app, pilot, "home", "down", "down")
            picked = screen.selected()
            assert screen.query_one("#cruise-sketch").plain.startswith(
                f"Specific range  {picked['variant']} / {picked['engine']}")
            assert screen.computations == 2
            # ASCII drawing on a, back with a; the caution stays on screen.
            await press_settle(app, pilot, "a")
            assert screen.query_one("#cruise-sketch").plain.isascii()
            await press_settle(app, pilot, "a")
            assert "Caution" in screen.query_one("#caution").plain
            await press_settle(app, pilot, "escape")
            assert isinstance(app.screen, CompareScreen)
    run(body)


def test_cruise_view_follows_the_shared_conditions():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "c")
            await replace_text(pilot, "80%mtow")
            await press_settle(app, pilot, "tab")
            await replace_text(pilot, "20")
            await press_settle(app, pilot, "enter", "f")
            screen = app.screen
            assert isinstance(screen, CruiseScreen)
            expected = reference(Conditions(weights=(WeightSpec(80.0, "%mtow"),), isa_devs_c=(20.0,)))
            rows = shown(screen)
            flow = column(screen, "flow")
            assert [r[flow] for r in rows] == [f"{v:,.0f}" for v in expected["fuel_flow_kg_h"]]
            # Best speed on the compare screen: the cruise view takes the cruise Mach, and says so.
            await press_settle(app, pilot, "c")
            for _ in range(3):
                await pilot.press("tab")
            await replace_text(pilot, "best")
            await press_settle(app, pilot, "enter", "f")
            assert "speed best taken as cruise Mach" in str(app.screen.query_one("#sketch-status").render())
            assert len(shown(app.screen)) == expected.height
    run(body)


def test_cruise_drawing_without_colour_gives_each_line_its_character(monkeypatch: pytest.MonkeyPatch):
    monkeypatch.setenv("NO_COLOR", "1")

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(100, 30)) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "f")
            return app.screen.query_one("#cruise-sketch").plain

    text = asyncio.run(body())
    assert not any(ord(ch) in BRAILLE for ch in text)
    assert "ooooo R specific range" in text and "=   = X maximum altitude" in text and "▲" in text
