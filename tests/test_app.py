"""The terminal app driven with real keys through Textual's test pilot.

Each test runs the app headless at 80x24 (the smallest size it must serve) and
checks what the user sees against `variantcmp.table.ceilings_table`, the same
code path as `variantcmp ceilings`. Timings are printed (run with -s), never asserted.
"""

from __future__ import annotations

import asyncio
import math
import io
import shutil
import threading
import time
from dataclasses import replace
from pathlib import Path

import polars as pl
import pytest
from polars.testing import assert_frame_equal
from rich.console import Console
from textual import events

from variantcmp.app import VariantCmpApp
from variantcmp.app.compare import CompareScreen
from variantcmp.app.cruise_screen import CruiseScreen
from variantcmp.app import envelope_screen
from variantcmp.app.dialogs import ConfirmDialog, ExportDialog, ProblemsScreen
from variantcmp.app.engine_out_screen import EngineOutScreen
from variantcmp.app.open_dialog import OpenDialog
from variantcmp.app.screening_screen import ScreeningScreen
from variantcmp.app.envelope_screen import EnvelopeScreen
from variantcmp.app.help import HelpScreen
from variantcmp.app.hotday import PlannerScreen
from variantcmp.app.sweep_screen import SweepScreen
from variantcmp.app.variant_info import VariantScreen
from variantcmp.app.view import BASELINE_MARK, ROW_KEY
from variantcmp.caution import CAUTION
from variantcmp.catalogue import demo_catalogue_path, load_catalogue
from variantcmp.envelope import envelopes_for_rows
from variantcmp.table import Conditions, ceilings_table
from variantcmp.units import WeightSpec, format_altitude_ft, format_flight_level

SIZE = (80, 24)
#: Variant x engine option pairs of the bundled demo fleet (rows per condition).
DEMO_PAIRS = sum(len(v.engine_options) for v in load_catalogue(demo_catalogue_path()).variants.values())

BROKEN = """\
[catalogue]
title = "Broken test fleet"

[[engine]]
id = "e1"
model = "density-lapse"
static_thrust_kn = -5

[[variant]]
id = "a1"
engine_options = ["e1"]
engine_count = 2
wing_area_m2 = 80
aspect_ratio = 9
oswald_e = 0.8
cd0 = 0.02
cl_max = 1.4
mtow_kg = 40000
cruise_mach = 0.74
wing_span_m = 30
"""


def run(test):
    """Run an async pilot test from a plain test function (no pytest-asyncio needed)."""
    return asyncio.run(test())


async def settle(app, pilot) -> None:
    """Let worker threads finish and the screens redraw with their results."""
    await pilot.pause()
    while any(not worker.is_finished for worker in app.workers):  # a finished job may start the one waiting
        await app.workers.wait_for_complete()
        await pilot.pause()
    await pilot.pause()


async def press_settle(app, pilot, *keys: str) -> None:
    """Press keys, then let the work they start finish (see settle)."""
    await pilot.press(*keys)
    await settle(app, pilot)


async def replace_text(pilot, *text: str) -> None:
    """Type into the focused field, replacing what it holds (fields select all on focus)."""
    await pilot.pause()  # a focus() call takes effect on the next message
    field = pilot.app.focused
    field.select_all()
    await pilot.press(*"".join(text))


def shown_text(widget, width: int = 100) -> str:
    """What a Static shows, as plain text (strings or Rich renderables)."""
    content = widget.content
    if isinstance(content, str):
        return content
    console = Console(width=width, record=True, file=io.StringIO())
    console.print(content)
    return console.export_text()


def table_rows(screen, selector: str = "#table") -> list[list[str]]:
    table = screen.query_one(selector)
    return [[str(getattr(c, "plain", c)).strip() for c in table.get_row_at(i)] for i in range(table.row_count)]


def column_index(screen, key: str) -> int:
    table = screen.query_one("#table")
    return [c.value for c in table.columns].index(key)


def reference(conditions: Conditions) -> pl.DataFrame:
    return ceilings_table(load_catalogue(demo_catalogue_path()), conditions)


def shown_matches_reference(screen, conditions: Conditions) -> None:
    """The numbers on screen are those of ceilings_table, row by row, in catalogue order."""
    df = reference(conditions)
    rows = table_rows(screen)
    assert len(rows) == df.height
    fl, ft, limit = (column_index(screen, k) for k in ("fl", "max_ft", "limit"))
    for shown, expected in zip(rows, df.iter_rows(named=True)):
        assert shown[0] == expected["variant"] and shown[1] == expected["engine"]
        assert shown[fl] == format_flight_level(expected["max_altitude_ft"])
        assert shown[ft] == format_altitude_ft(expected["max_altitude_ft"])
        assert shown[limit].endswith(expected["limit"] or "—")


def test_first_table_is_ceilings_table():
    async def body():
        start = time.perf_counter()
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            print(f"\nstart to first table: {(time.perf_counter() - start) * 1000:.0f} ms "
                  f"(solver {app.results.compute_ms:.0f} ms)")
            assert isinstance(app.screen, CompareScreen)
            # Same frame as the headless command, column for column.
            assert_frame_equal(app.results.df.drop(ROW_KEY), reference(Conditions()))
            shown_matches_reference(app.screen, Conditions())
            # The caution is on screen without any key press.
            caution = app.screen.query_one("#caution")
            assert caution.region.height >= 1 and caution.plain == CAUTION
    run(body)


def test_each_condition_recomputes_like_the_cli():
    edits = [  # (key to reach the field, text, what Conditions must then say)
        ("c", "90%mtow", dict(weights=(WeightSpec(90.0, "%mtow"),))),
        ("tab", "ISA+15", dict(isa_devs_c=(15.0,))),
        ("tab", "FL350", dict(target_fl_ft=35000.0)),
        ("tab", "M.74", dict(mach=0.74)),
        ("tab", "service", dict(climb_fpm=(100.0,))),
        ("tab", "1.5", dict(g_margin=1.5)),
    ]

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            expected = Conditions()
            for key, text, change in edits:
                await pilot.press(key)
                start = time.perf_counter()
                await replace_text(pilot, text)
                await settle(app, pilot)
                print(f"\n{text!r}: last key to table {app.screen.update_ms:.0f} ms "
                      f"(solver {app.results.compute_ms:.0f} ms; pilot typing {(time.perf_counter() - start):.2f} s)")
                expected = replace(expected, **change)
                assert app.conditions == expected
                assert app.results.conditions == expected
                shown_matches_reference(app.screen, expected)
            assert "margin" in [c.value for c in app.screen.query_one("#table").columns]
            # Best speed and a sweep over weights and deviations (one row per case).
            await pilot.press("shift+tab", "shift+tab")
            await replace_text(pilot, "best")
            app.screen.query_one("#field-weight").focus()
            await replace_text(pilot, "90%mtow,38t")
            app.screen.query_one("#field-isa").focus()
            await replace_text(pilot, "0,20")
            await settle(app, pilot)
            assert app.conditions.mach == "best"
            assert len(table_rows(app.screen)) == DEMO_PAIRS * 2 * 2
            shown_matches_reference(app.screen, app.conditions)
    run(body)


def test_bad_input_is_shown_in_place_and_keeps_the_table():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            before = app.results
            await pilot.press("c", "end", "x")  # "100%mtowx"
            await settle(app, pilot)
            errors = app.screen.query_one("#field-errors")
            assert errors.display and "Weight" in shown_text(errors) and "100%mtowx" in shown_text(errors)
            assert app.screen.query_one("#field-weight").has_class("-bad")
            assert app.results is before  # last good conditions and table kept
            await pilot.press("escape")
            assert app.focused is app.screen.query_one("#table")
            app.screen.query_one("#field-weight").focus()
            await replace_text(pilot, "95%mtow")
            await settle(app, pilot)
            assert not errors.display
            assert app.conditions.weights == (WeightSpec(95.0, "%mtow"),)
    run(body)


def test_sort_by_key_and_header_click():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            df = reference(Conditions())
            fl = column_index(app.screen, "fl")
            await pilot.press("s")  # first sort column: maximum altitude, highest first
            await pilot.pause()
            print(f"\nsort and redraw: {app.screen.render_ms:.1f} ms")
            high_first = df.sort("max_altitude_ft", descending=True, maintain_order=True)
            assert [r[fl] for r in table_rows(app.screen)] == [
                format_flight_level(x) for x in high_first["max_altitude_ft"]]
            await pilot.press("r")
            assert [r[fl] for r in table_rows(app.screen)] == [
                format_flight_level(x) for x in reversed(high_first["max_altitude_ft"].to_list())]
            await pilot.press("s")  # next column: maximum altitude in ft, highest first again
            assert app.screen.sort_key == "max_ft" and app.screen.descending
            await pilot.press("S")
            assert app.screen.sort_key == "fl"
            # Click the Engine header: sort by engine; click again: reversed.
            await pilot.click("#table", offset=(12, 0))
            await pilot.pause()
            engines = [r[1] for r in table_rows(app.screen)]
            assert app.screen.sort_key == "engine" and engines == sorted(engines)
            await pilot.click("#table", offset=(12, 0))
            await pilot.pause()
            assert [r[1] for r in table_rows(app.screen)] == sorted(engines, reverse=True)
            # Sorting survives a condition change.
            await pilot.press("c")
            await replace_text(pilot, "95%mtow")
            await settle(app, pilot)
            assert app.screen.sort_key == "engine"
    run(body)


def test_filter_rows_by_text():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            df = reference(Conditions())
            await pilot.press("slash")
            await pilot.press(*"v88")
            rows = table_rows(app.screen)
            assert rows and {r[0] for r in rows} == {"v88"}
            assert len(rows) == df.filter(pl.col("variant") == "v88").height
            app.screen.query_one("#filter").value = "thrust"
            await pilot.pause()
            assert len(table_rows(app.screen)) == df.filter(pl.col("limit") == "thrust").height
            app.screen.query_one("#filter").value = "no-such-thing"
            await pilot.pause()
            assert table_rows(app.screen) == []
            await pilot.press("escape")
            app.screen.query_one("#filter").value = ""
            await pilot.pause()
            assert len(table_rows(app.screen)) == df.height
    run(body)


def test_baseline_shows_differences():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            df = reference(Conditions()).to_dicts()
            ft = column_index(app.screen, "max_ft")
            await pilot.press("b")  # pin the first row
            rows = table_rows(app.screen)
            assert rows[0][0] == f"{BASELINE_MARK} {df[0]['variant']}"
            assert rows[0][ft] == format_altitude_ft(df[0]["max_altitude_ft"])
            header = app.screen.query_one("#table").columns
            assert str(header[list(header)[ft]].label).strip().startswith("Δ")
            for shown, row in zip(rows[1:], df[1:]):
                delta = int(shown[ft].replace(",", "").replace("±", ""))
                base = int(format_altitude_ft(df[0]["max_altitude_ft"]).replace(",", ""))
                assert delta == int(format_altitude_ft(row["max_altitude_ft"]).replace(",", "")) - base
            # The baseline follows condition changes.
            await pilot.press("c")
            await replace_text(pilot, "90%mtow")
            await settle(app, pilot)
            assert table_rows(app.screen)[0][0].startswith(BASELINE_MARK)
            await pilot.press("escape", "b")  # cursor still on the baseline row: unpin
            assert not table_rows(app.screen)[0][0].startswith(BASELINE_MARK)
    run(body)


def test_planner_gives_the_heaviest_weight_and_the_warmest_day_of_the_commands():
    async def body():
        from variantcmp.table import heaviest_table, hottest_table

        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "h")
            screen = app.screen
            assert isinstance(screen, PlannerScreen)
            assert screen.query_one("#lookup-isa").value == "ISA+15"
            assert app.focused is screen.query_one("#lookup-target")  # no target yet: type one
            assert "Type a target flight level" in shown_text(screen.query_one("#lookup-summary"))
            await press_settle(app, pilot, *"FL360", "enter")
            demo = load_catalogue(demo_catalogue_path())
            cond = Conditions(isa_devs_c=(15.0,), target_fl_ft=36000.0)
            expected = reference(cond)
            heavy = {(r["variant"], r["engine"]): r for r in heaviest_table(demo, cond, (36000.0,)).iter_rows(named=True)}
            hot = {(r["variant"], r["engine"]): r for r in hottest_table(demo, cond, (36000.0,)).iter_rows(named=True)}
            rows = table_rows(screen, "#lookup-table")
            assert len(rows) == expected.height
            by_pair = {(r["variant"], r["engine"]): r for r in expected.iter_rows(named=True)}
            keys = [c.value for c in screen.query_one("#lookup-table").columns]
            at = {k: keys.index(k) for k in ("makes", "fl", "heaviest", "heaviest_pct", "weight_limit", "warmest")}
            for shown in rows:
                pair = (shown[0], shown[1])
                row, h, d = by_pair[pair], heavy[pair], hot[pair]
                assert shown[at["makes"]].endswith("yes") == bool(row["reaches_target"])
                assert shown[at["fl"]] == format_flight_level(row["max_altitude_ft"])
                if h["max_weight_kg"] is None:
                    assert shown[at["heaviest"]] == "—" and h["reason"] in shown[at["weight_limit"]].replace(" ", "_")
                else:
                    assert shown[at["heaviest"]] == f"{math.floor(round(h['max_weight_kg'], 1) / 100) / 10:,.1f}"
                    assert shown[at["weight_limit"]].endswith(h["limit"])
                if d["max_isa_dev_c"] is None:  # why not, in its place
                    assert shown[at["warmest"]].startswith("✗") or shown[at["warmest"]].startswith("○"), shown
                    assert d["reason"] is not None
                else:
                    assert shown[at["warmest"]] == f"ISA{math.floor(round(d['max_isa_dev_c'], 2) * 10) / 10:+.1f}"
            # Sorted by the weight to spare, most first; s, S and r move the sort like the compare screen's.
            def spares(rows):  # (rows without a heaviest weight sort last either way)
                return [heavy[(r[0], r[1])]["max_weight_kg"] - by_pair[(r[0], r[1])]["weight_kg"] for r in rows
                        if heavy[(r[0], r[1])]["max_weight_kg"] is not None]

            assert spares(rows) == sorted(spares(rows), reverse=True)
            await press_settle(app, pilot, "r")
            assert spares(table_rows(screen, "#lookup-table")) == sorted(spares(table_rows(screen, "#lookup-table")))
            await press_settle(app, pilot, "s")
            assert screen.sort_key == "weight_limit"
            made = sum(bool(r["reaches_target"]) for r in by_pair.values())
            assert shown_text(screen.query_one("#lookup-summary")).startswith(f"{made} of {expected.height} make FL360")
            screen.query_one("#lookup-weight").focus()
            await replace_text(pilot, "abc")
            await settle(app, pilot)
            assert "abc" in shown_text(screen.query_one("#lookup-errors"))
            await pilot.press("escape", "escape")  # leave the field, then the screen
            assert isinstance(app.screen, CompareScreen)
    run(body)


def test_inspect_variant():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            catalogue = app.catalogue
            first = next(iter(catalogue.variants.values()))
            await pilot.press("i")
            await pilot.pause()
            assert isinstance(app.screen, VariantScreen)
            assert app.screen.query_one("#caution").plain == CAUTION  # caution on this screen too
            assert app.screen.variant_id == first.id
            figures = app.screen.query_one("#variant-figures").content
            engines = app.screen.query_one("#variant-engines").content
            assert figures.row_count >= 4  # K, L/D max, CL*, wing loading
            assert [c.header for c in engines.columns][1:] == list(first.engine_options)
            await pilot.press("n")
            assert app.screen.variant_id == list(catalogue.variants)[1]
            await pilot.press("escape")
            assert isinstance(app.screen, CompareScreen)
            await pilot.press("down", "enter")  # enter on a row opens its variant too
            assert isinstance(app.screen, VariantScreen)
    run(body)


def test_broken_catalogue_then_fixed_and_reloaded(tmp_path: Path):
    fleet = tmp_path / "fleet.toml"
    fleet.write_text(BROKEN, encoding="utf-8")

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            demo_title = app.catalogue.title
            await pilot.press("c")
            await replace_text(pilot, "95%mtow")
            await settle(app, pilot)
            await pilot.press("escape", "o")
            assert isinstance(app.screen, OpenDialog)
            app.screen.query_one("#path").value = str(tmp_path / "missing.toml")
            await pilot.press("enter")
            assert "no such file" in shown_text(app.screen.query_one("#open-error"))
            app.screen.query_one("#path").value = str(fleet)
            await press_settle(app, pilot, "enter")
            assert isinstance(app.screen, ProblemsScreen)
            keys = shown_text(app.screen.query_one("#problems-list"), width=200)
            assert "static_thrust_kn" in keys and "wing_span_m" in keys
            # Nothing lost: the last good catalogue and the conditions stay.
            assert app.catalogue.title == demo_title
            assert app.conditions.weights == (WeightSpec(95.0, "%mtow"),)
            # The user fixes the file and reloads.
            shutil.copyfile(demo_catalogue_path(), fleet)
            await press_settle(app, pilot, "l")
            assert isinstance(app.screen, CompareScreen)
            assert app.catalogue.path == fleet and not app.problems
            assert app.conditions.weights == (WeightSpec(95.0, "%mtow"),)
            shown_matches_reference(app.screen, app.conditions)
            # Broken again on reload from the compare screen: the list again, table kept.
            fleet.write_text("[catalogue\n", encoding="utf-8")
            await press_settle(app, pilot, "l")
            assert isinstance(app.screen, ProblemsScreen)
            await pilot.press("escape")
            assert isinstance(app.screen, CompareScreen) and app.catalogue.path == fleet
    run(body)


def test_start_on_a_broken_catalogue(tmp_path: Path):
    fleet = tmp_path / "fleet.toml"
    fleet.write_bytes(b"\x00\x01binary")

    async def body():
        app = VariantCmpApp(str(fleet))
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            assert isinstance(app.screen, ProblemsScreen) and app.catalogue is None
            await pilot.press("escape")
            assert "No catalogue loaded" in shown_text(app.screen.query_one("#status"))
            for key in ("s", "b", "i", "e", "slash"):  # nothing to act on, nothing breaks
                await pilot.press(key)
            await pilot.press("escape")
            shutil.copyfile(demo_catalogue_path(), fleet)
            await press_settle(app, pilot, "l")
            assert app.catalogue is not None
            shown_matches_reference(app.screen, Conditions())
    run(body)


def test_export_and_overwrite_only_when_confirmed(tmp_path: Path):
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            expected = reference(Conditions())
            target = tmp_path / "ceilings.csv"
            await pilot.press("e")
            assert isinstance(app.screen, ExportDialog)
            field = app.screen.query_one("#path")
            field.value = str(tmp_path / "ceilings.xlsx")
            await pilot.press("enter")
            assert ".csv, .parquet or .json" in shown_text(app.screen.query_one("#export-error"))
            field.value = str(target)
            await pilot.press("enter")
            await pilot.pause()
            assert isinstance(app.screen, CompareScreen)
            assert_frame_equal(pl.read_csv(target), expected, check_dtypes=False)
            # Same name again: asks; "n" keeps the file untouched.
            target.write_text("keep me", encoding="utf-8")
            await pilot.press("e")
            app.screen.query_one("#path").value = str(target)
            await pilot.press("enter")
            assert isinstance(app.screen, ConfirmDialog)
            await pilot.press("n")
            assert isinstance(app.screen, ExportDialog)
            assert "Not written" in shown_text(app.screen.query_one("#export-error"))
            assert target.read_text(encoding="utf-8") == "keep me"
            # Enter on the focused button is "keep" as well: the safe choice has the focus.
            await pilot.press("enter", "enter")
            assert target.read_text(encoding="utf-8") == "keep me"
            # "y" overwrites.
            await pilot.press("enter", "y")
            await pilot.pause()
            assert isinstance(app.screen, CompareScreen)
            assert_frame_equal(pl.read_csv(target), expected, check_dtypes=False)
            # Parquet and JSON, of the filtered view.
            app.screen.query_one("#filter").value = "v104"
            await pilot.pause()
            for name, read in (("c.parquet", pl.read_parquet), ("c.json", pl.read_json)):
                await pilot.press("escape", "e")
                app.screen.query_one("#path").value = str(tmp_path / name)
                await pilot.press("enter")
                await pilot.pause()
                assert_frame_equal(read(tmp_path / name), expected.filter(pl.col("variant") == "v104"),
                                   check_dtypes=False)
            assert app.last_export and "c.json" in app.last_export
    run(body)


def test_help_lists_every_key_and_the_caution():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            await pilot.press("f1")
            assert isinstance(app.screen, HelpScreen)
            shown = shown_text(app.screen.query_one("#help-text"))
            assert " ".join(CAUTION.split()) in " ".join(shown.split())
            for cls in (VariantCmpApp, CompareScreen, PlannerScreen, CruiseScreen, EngineOutScreen, ScreeningScreen,
                        EnvelopeScreen, SweepScreen, VariantScreen, ProblemsScreen, ExportDialog):
                for binding in cls.BINDINGS:
                    assert binding.description in shown
            await pilot.press("escape")
            assert isinstance(app.screen, CompareScreen)
            await pilot.press("question_mark")
            assert isinstance(app.screen, HelpScreen)
            await pilot.press("question_mark")
            assert isinstance(app.screen, CompareScreen)
    run(body)


def test_theme_toggle_resize_and_quit():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            assert app.current_theme.dark
            await pilot.press("t")
            assert not app.current_theme.dark
            await pilot.press("t")
            assert app.current_theme.dark
            for size in ((200, 60), (60, 18), (80, 24)):
                await pilot.resize_terminal(*size)
                await pilot.pause()
                assert app.screen.query_one("#table").region.height > 0
                app.export_screenshot()  # renders without error at every size
            await pilot.press("q")
            await pilot.pause()
        assert app.return_code == 0
    run(body)


def test_no_color(monkeypatch: pytest.MonkeyPatch):
    monkeypatch.setenv("NO_COLOR", "1")

    async def body():
        app = VariantCmpApp(None)
        assert app.no_color
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            svg = app.export_screenshot()
            assert "Caution" in svg
            shown_matches_reference(app.screen, Conditions())
    run(body)


# --- envelope and sweep views -------------------------------------------------------------------
# The drawings themselves are checked in test_sketch.py and the envelopes against the solver in
# test_envelope.py; here: the views follow the compare screen and the shared conditions, compute
# in a worker, and redraw (without recomputing) on resize and on a new speed axis.

BRAILLE = range(0x2800, 0x2900)


class Gate:
    """Wraps a solver call so that it waits in its worker thread until the test opens the gate."""

    def __init__(self, func) -> None:
        self.func, self.open, self.calls = func, threading.Event(), 0

    def __call__(self, *args, **kwargs):
        self.calls += 1
        assert self.open.wait(10), "the test never opened the gate"
        return self.func(*args, **kwargs)


def sketch_lines(screen) -> list[str]:
    return screen.sketch.plain.splitlines()


def test_envelope_of_the_selected_row_in_a_worker_with_speed_axes(monkeypatch: pytest.MonkeyPatch):
    gate = Gate(envelopes_for_rows)
    monkeypatch.setattr(envelope_screen, "envelopes_for_rows", gate)
    rows = reference(Conditions()).to_dicts()

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            await pilot.press("down", "v")  # the second row
            await pilot.pause()
            screen = app.screen
            assert isinstance(screen, EnvelopeScreen)
            # Computing: said so, and the keys still work meanwhile.
            assert screen.busy and "computing" in shown_text(screen.query_one("#sketch-status"))
            assert screen.query_one("#sketch-busy").display
            assert "Computing the envelope of v70/brannick-74" in screen.sketch.plain
            assert screen.query_one("#caution").plain == CAUTION
            await pilot.press("x")  # speed axis while the worker runs
            assert screen.speed == "tas"
            gate.open.set()
            await settle(app, pilot)
            assert not screen.busy and not screen.query_one("#sketch-busy").display
            print(f"\nenvelope of one row: solver {screen.compute_ms:.0f} ms, drawing {screen.sketch.draw_ms:.1f} ms")
            lines = sketch_lines(screen)
            assert lines[0].startswith(f"Envelope {rows[1]['variant']} / {rows[1]['engine']}  "
                                       f"{rows[1]['weight_kg'] / 1000:.1f} t  ISA")
            text = screen.sketch.plain
            assert "TAS kt" in text and "FL200" in text  # axis labels
            assert "S stall, CL max at 1 g" in text and "B buffet onset at 1.3 g" in text  # legend
            top = screen.result.summary.row(0, named=True)
            assert f"▲ top {format_flight_level(top['top_ft'])}" in text  # the top, marked and noted
            assert f"Envelope of v70/brannick-74 (row 2 of {DEMO_PAIRS})" in shown_text(screen.query_one("#sketch-status"))
            # Other speed axes and the ASCII fallback are redraws of the same computation.
            await pilot.press("x")
            assert "CAS kt" in screen.sketch.plain
            await pilot.press("x")
            assert sketch_lines(screen)[-9:] and "Mach" in screen.sketch.plain
            assert any(ord(ch) in BRAILLE for ch in screen.sketch.plain)
            await pilot.press("a")
            await pilot.pause()
            assert not any(ord(ch) in BRAILLE for ch in screen.sketch.plain)
            assert "^ top" in screen.sketch.plain and app.sketch_ascii
            await pilot.press("a")
            assert gate.calls == 1 and screen.computations == 1
            # Next and previous row of the compare screen; back there on the row last shown.
            await press_settle(app, pilot, "n")
            assert sketch_lines(screen)[0].startswith(f"Envelope {rows[2]['variant']} / {rows[2]['engine']}")
            await press_settle(app, pilot, "p", "p")
            assert sketch_lines(screen)[0].startswith(f"Envelope {rows[0]['variant']} / {rows[0]['engine']}")
            await pilot.press("escape")
            await pilot.pause()
            assert isinstance(app.screen, CompareScreen)
            assert app.screen.cursor_key() == rows[0]["variant"] + "|" + rows[0]["engine"] + "|0"
    run(body)


def test_envelope_redraws_on_resize_without_recomputing():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "v")
            screen = app.screen
            assert screen.computations == 1
            for width, height in ((120, 40), (200, 60), (50, 14), (80, 24)):
                before = screen.sketch.draw_count
                started = time.perf_counter()
                await pilot.resize_terminal(width, height)
                await pilot.pause()
                size = screen.sketch.content_size
                lines = sketch_lines(screen)
                print(f"\nresize to {width}x{height}: redraw {screen.sketch.draw_ms:.1f} ms "
                      f"(resize to screen {(time.perf_counter() - started) * 1000:.0f} ms)")
                if size.width >= 40 and size.height >= 12:
                    assert screen.sketch.draw_count == before + 1
                    assert len(lines) == size.height and {len(line) for line in lines} == {size.width}
                    assert "Mach" in lines[-1] or "Mach" in "".join(lines)
                else:
                    assert "Enlarge the terminal" in screen.sketch.plain
                caution = screen.query_one("#caution")
                assert caution.plain == CAUTION if height >= 20 else caution.region.height == 1
                assert screen.computations == 1  # never recomputed for a new size
    run(body)


def test_marked_rows_are_overlaid():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            df = reference(Conditions()).to_dicts()
            await pilot.press("m", "down", "m", "down", "m", "down", "m")  # a fourth is refused
            shown = table_rows(app.screen)
            assert [r[0] for r in shown[:4]] == [f"#1 {df[0]['variant']}", f"#2 {df[1]['variant']}",
                                                 f"#3 {df[2]['variant']}", df[3]["variant"]]
            assert len(app.marked_keys) == 3 and "3 marked" in shown_text(app.screen.query_one("#status"))
            await press_settle(app, pilot, "v")
            screen = app.screen
            text = screen.sketch.plain
            assert sketch_lines(screen)[0].startswith("Envelopes: feasible band of 3 cases")
            for number, row in enumerate(df[:3], start=1):  # the legend names each marked row by its number
                assert f" {number} {row['variant']}/{row['engine']} " in text
            assert text.count("▲") >= 3 and "FL" in text
            assert "Overlay of #1 v70/ossel-78, #2 v70/brannick-74, #3 v88/ossel-78" in shown_text(
                screen.query_one("#sketch-status"))
            # Unmark the second: two left, renumbered; the view follows.
            await pilot.press("escape", "up", "up", "m")  # the cursor was on the fourth row
            assert [r[0] for r in table_rows(app.screen)[:3]] == [f"#1 {df[0]['variant']}", df[1]["variant"],
                                                                 f"#2 {df[2]['variant']}"]
            await press_settle(app, pilot, "v")
            assert sketch_lines(app.screen)[0].startswith("Envelopes: feasible band of 2 cases")
            # Clear the marks: the envelope of the row under the cursor again.
            await press_settle(app, pilot, "escape", "M", "v")
            assert sketch_lines(app.screen)[0].startswith(f"Envelope {df[1]['variant']} / {df[1]['engine']}")
    run(body)


def test_envelope_follows_the_conditions():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "v")
            screen = app.screen
            assert "45.2 t" not in sketch_lines(screen)[0] and "38.5 t" in sketch_lines(screen)[0]
            await pilot.press("c")  # back to the compare screen, in the first condition field
            assert isinstance(app.screen, CompareScreen)
            await replace_text(pilot, "90%mtow")
            app.screen.query_one("#field-g_margin").focus()
            await replace_text(pilot, "1.5")
            await settle(app, pilot)
            assert screen.computations == 1  # hidden: nothing computed for it yet
            await press_settle(app, pilot, "escape", "v")
            assert app.screen is screen and screen.computations == 2
            lines = sketch_lines(screen)
            assert f"{0.9 * 38500 / 1000:.1f} t" in lines[0] and "buffet margin 1.5 g" in lines[0]
            assert "B buffet onset at 1.5 g" in screen.sketch.plain
    run(body)


def test_sweep_views_follow_the_compare_rows_and_conditions():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(100, 30)) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "w")
            screen = app.screen
            assert isinstance(screen, SweepScreen)
            text = screen.sketch.plain
            status = shown_text(screen.query_one("#sketch-status"))
            print(f"\nweight sweep, 8 pairs: solver {screen.compute_ms:.0f} ms")
            assert sketch_lines(screen)[0].startswith("Max altitude vs weight")
            assert "weight t" in text and "limit along the curves: T thrust" in text and "FL" in text
            assert "6 curves" in status and f"{DEMO_PAIRS - 6} more not drawn" in status  # six line styles
            assert screen.query_one("#caution").plain == CAUTION
            # The curves at MTOW end where the compare table says.
            frame = screen.result.sweep.frame
            for row in reference(Conditions()).iter_rows(named=True):
                point = frame.filter((pl.col("variant") == row["variant"]) & (pl.col("engine") == row["engine"])
                                     & ((pl.col("weight_kg") - row["weight_kg"]).abs() < 1e-6))
                if point.height:
                    assert point["max_altitude_ft"][0] == pytest.approx(row["max_altitude_ft"], abs=1.0)
            await press_settle(app, pilot, "d")
            assert sketch_lines(screen)[0].startswith("Max altitude vs ISA deviation")
            assert "ISA dev °C" in screen.sketch.plain
            await press_settle(app, pilot, "m")
            assert sketch_lines(screen)[0].startswith("Max altitude vs Mach")
            assert screen.computations == 3
            # Filter on the compare screen: the sweep draws those rows only.
            await press_settle(app, pilot, "escape", "slash", *"v88", "enter", "w")
            assert app.screen is screen and screen.over == "mach"
            assert "3 curves, the rows shown" in shown_text(screen.query_one("#sketch-status"))
            assert set(screen.result.sweep.frame["variant"]) == {"v88"}
            # A condition changed on the compare screen: recomputed on return.
            await pilot.press("escape", "c")
            await replace_text(pilot, "90%mtow")
            await settle(app, pilot)
            await press_settle(app, pilot, "escape", "w")
            assert screen.computations == 5 and "90 %MTOW" in sketch_lines(screen)[0]
            # A sweep once computed for these conditions is drawn again at once.
            await press_settle(app, pilot, "d")
            await pilot.press("m")
            await pilot.pause()
            assert screen.computations == 6 and not screen.busy
            await press_settle(app, pilot, "v")
            assert isinstance(app.screen, EnvelopeScreen)
    run(body)


# --- keys at full speed -------------------------------------------------------------------------
# `pilot.press` waits for the app to go idle after every key; a user typing fast (or a paste, or a
# key held down) does not. `burst` posts every key at once, as a terminal delivers fast typing.

_KEY_NAMES = {"/": "slash", "%": "percent_sign", "?": "question_mark", ",": "comma", "-": "minus", "+": "plus",
              ".": "full_stop", " ": "space"}


def burst(app, *keys: str) -> None:
    """Post key events for ``keys`` (names such as "tab", or single characters) without waiting."""
    for key in keys:
        if len(key) == 1:
            app.post_message(events.Key(_KEY_NAMES.get(key, key), key))
        else:
            app.post_message(events.Key(key, None))


def test_typing_at_full_speed_after_tab_goes_to_the_field_shown():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            burst(app, "c", *"95%mtow", "tab", *"ISA+15", "tab", *"FL350", "enter", "s")
            await settle(app, pilot)
            assert app.texts["weight"] == "95%mtow" and app.texts["isa"] == "ISA+15" and app.texts["target"] == "FL350"
            assert app.conditions == Conditions(weights=(WeightSpec(95.0, "%mtow"),), isa_devs_c=(15.0,),
                                                target_fl_ft=35000.0)
            assert app.focused is app.screen.query_one("#table")  # enter left the field ...
            assert app.screen.sort_key == "fl"  # ... so "s" sorted the table
            shown_matches_reference_sorted = table_rows(app.screen)
            assert len(shown_matches_reference_sorted) == reference(app.conditions).height
    run(body)


def test_keys_typed_while_a_screen_opens_or_closes_are_not_lost():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            burst(app, "h", *"FL360")  # typed before the hot-day screen has mounted
            await settle(app, pilot)
            assert isinstance(app.screen, PlannerScreen)
            assert app.screen.query_one("#lookup-target").value == "FL360"
            # Leave the field and the screen, then mark two rows, all at once.
            burst(app, "escape", "escape", "m", "down", "m")
            await settle(app, pilot)
            assert isinstance(app.screen, CompareScreen)
            rows = reference(Conditions()).to_dicts()
            assert app.marked_keys == [f"{r['variant']}|{r['engine']}|0" for r in rows[:2]]
    run(body)


# --- key mashing --------------------------------------------------------------------------------
# Seeded random keys for each screen, posted at full speed in bursts, with resizes between bursts:
# no key sequence may raise (run_test re-raises anything the app raised). Keys that leave the
# screen are left out of its mix; the race tests above and the screens' own tests cover leaving.

MASH_PRESSES = 2000  # per screen
MASH_BURST = 40
_MOVES = ("up", "down", "pageup", "pagedown", "home", "end", "left", "right", "tab", "shift+tab")
_TYPED = tuple("0159%mkFLz/-,") + ("backspace",)  # not t: a theme change restyles everything (76 ms)
MASH_SIZES = ((80, 24), (60, 15), (120, 40), (100, 18))


def _keys_of(cls, leaving: set[str]) -> list[str]:
    keys = [key.strip() for binding in cls.BINDINGS for key in binding.key.split(",")]
    return [key for key in dict.fromkeys(keys) if key not in leaving]


async def mash(app, pilot, keys: list[str], seed: int, stay_on) -> int:
    """Press ``MASH_PRESSES`` seeded random ``keys``; return how many bursts ended off ``stay_on``."""
    import random

    rng = random.Random(seed)
    strayed = 0
    for n in range(0, MASH_PRESSES, MASH_BURST):
        burst(app, *rng.choices(keys, k=MASH_BURST))
        await pilot.pause()
        if n % (MASH_BURST * 10) == 0:
            await pilot.resize_terminal(*MASH_SIZES[(n // (MASH_BURST * 10)) % len(MASH_SIZES)])
        if not isinstance(app.screen, stay_on):
            strayed += 1
            await settle(app, pilot)
            while len(app.screen_stack) > 1 and not isinstance(app.screen, stay_on):
                app.pop_screen()
                await pilot.pause()
    await settle(app, pilot)
    return strayed


@pytest.mark.parametrize("name", ["compare", "planner", "cruise", "engineout", "envelope", "sweep", "screening", "variant",
                                  "help", "open",
                                  "export"])
def test_mashing_each_screens_keys_raises_nothing(name, tmp_path, monkeypatch: pytest.MonkeyPatch):
    monkeypatch.chdir(tmp_path)  # an export or a picture lands here, not in the project
    always_out = {"q", "f1", "question_mark", "ctrl+p", "ctrl+q", "ctrl+c"}
    screens = {  # how to get there, the screen class, keys of it that leave it
        "compare": ([], CompareScreen, {"h", "f", "g", "d", "i", "v", "w", "e", "o", "enter"}),
        "planner": (["h"], PlannerScreen, {"i", "e", "enter", "escape"}),
        "cruise": (["f"], CruiseScreen, {"escape", "c", "i", "e", "enter"}),
        "engineout": (["g"], EngineOutScreen, {"i", "e", "enter", "escape"}),
        "envelope": (["v"], EnvelopeScreen, {"escape", "c", "w"}),
        "sweep": (["w"], SweepScreen, {"escape", "c", "v"}),
        "screening": (["d"], ScreeningScreen, {"escape", "c", "e"}),
        "variant": (["i"], VariantScreen, {"escape"}),
        "help": (["f1"], HelpScreen, {"escape", "f1", "question_mark"}),
        "open": (["o"], OpenDialog, {"escape", "enter"}),
        "export": (["e"], ExportDialog, {"escape", "enter"}),
    }
    path, cls, leaving = screens[name]
    keys = _keys_of(cls, leaving | always_out) + list(_MOVES) + list(_TYPED)
    if name == "compare":
        keys = [k for k in keys if k not in leaving]

    async def body():
        app = VariantCmpApp(None)
        app.animation_level = "none"  # smooth scrolling would only make the test wait
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, *path)
            assert isinstance(app.screen, cls)
            started = time.perf_counter()
            strayed = await mash(app, pilot, keys, seed=sum(map(ord, name)), stay_on=cls)
            print(f"\n{name}: {MASH_PRESSES} keys in {time.perf_counter() - started:.1f} s ({strayed} bursts strayed)")
            assert app.is_running
    run(body)


# --- small terminals, hints -------------------------------------------------------------------

def test_placeholders_read_as_hints_in_no_color_too(monkeypatch: pytest.MonkeyPatch):
    from variantcmp.app.form import FIELDS

    assert all(field.placeholder.startswith("e.g. ") for field in FIELDS)
    monkeypatch.setenv("NO_COLOR", "1")

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(100, 30)) as pilot:
            await settle(app, pilot)
            target = app.screen.query_one("#field-target")
            assert target.value == "" and target.render_line(0).text.strip() == "e.g. FL350"
            await press_settle(app, pilot, "h")
            target = app.screen.query_one("#lookup-target")
            assert target.render_line(0).text.startswith("e.g. FL350")
    run(body)


def test_short_terminal_keeps_a_one_line_caution_the_footer_and_the_start_of_each_field():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(60, 15)) as pilot:
            await settle(app, pilot)
            screen = app.screen
            caution = screen.query_one("#caution")
            assert caution.region.height == 1 and caution.plain.startswith("Caution:")
            assert "not approved" in caution.plain and "flight manual governs" in caution.plain
            assert len(caution.plain) <= caution.content_size.width
            footer = screen.query_one("Footer")
            assert footer.region.y == 14 and footer.region.height == 1
            assert screen.query_one("#table").region.height >= 3  # room left for rows
            weight = screen.query_one("#field-weight")
            assert weight.render_line(0).text.startswith("100%")
            # Typed into and left: the field shows its start again.
            await pilot.press("c")
            await replace_text(pilot, "90%mtow,100%mtow")
            await press_settle(app, pilot, "tab")
            assert weight.render_line(0).text.startswith("90%mtow")
            # Room again: the caution in full.
            await pilot.resize_terminal(100, 30)
            await pilot.pause()
            assert caution.plain == CAUTION and caution.region.height >= 2
            await pilot.resize_terminal(60, 15)
            await press_settle(app, pilot, "v")  # the drawing screens follow the size too
            assert app.screen.query_one("#caution").region.height == 1
    run(body)


def test_dumb_terminal_draws_ascii_and_no_color_gives_each_line_its_character(monkeypatch: pytest.MonkeyPatch):
    async def envelope_text(app) -> str:
        async with app.run_test(size=(100, 30)) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "v")
            return app.screen.sketch.plain

    monkeypatch.setenv("TERM", "dumb")
    app = VariantCmpApp(None)
    text = asyncio.run(envelope_text(app))
    assert app.sketch_ascii and text.isascii() and "^ top" in text
    monkeypatch.setenv("TERM", "xterm-256color")
    monkeypatch.setenv("NO_COLOR", "1")
    app = VariantCmpApp(None)
    text = asyncio.run(envelope_text(app))
    assert not app.sketch_ascii and not any(ord(ch) in BRAILLE for ch in text)
    assert "│" in text and "▲ top" in text  # Unicode frame and marks, lines in their own characters


# --- baseline, weight columns -------------------------------------------------------------------

def _shown_ft(text: str) -> int | None:
    text = text.replace(",", "").replace("±", "")
    return None if text == "—" else int(text)


def test_baseline_compares_each_row_at_the_same_weight_and_day():
    conditions = Conditions(weights=(WeightSpec(40_000.0, "kg"), WeightSpec(90.0, "%mtow")), isa_devs_c=(0.0, 15.0))
    expected = reference(conditions).to_dicts()
    base_pair = ("v88", "ossel-78")

    def expected_delta(row, match: str) -> int | None:
        """Row minus the baseline's row at the same weight (kg or %MTOW) and deviation, by hand."""
        weight = "weight_kg" if match == "kg" else "weight_pct_mtow"
        same = [b for b in expected if (b["variant"], b["engine"]) == base_pair
                and abs(b[weight] - row[weight]) < 1e-6 and b["isa_dev_c"] == row["isa_dev_c"]]
        if not same or row["max_altitude_ft"] is None or same[0]["max_altitude_ft"] is None:
            return None  # (a turboprop at 40 t, far above its MTOW, has no maximum altitude)
        return math.floor(row["max_altitude_ft"]) - math.floor(same[0]["max_altitude_ft"])

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(120, 40)) as pilot:
            await settle(app, pilot)
            await pilot.press("c")
            await replace_text(pilot, "40t,90%mtow")
            await pilot.press("tab")
            await replace_text(pilot, "0,15")
            await press_settle(app, pilot, "enter")
            screen = app.screen
            table = screen.query_one("#table")
            first_base = next(i for i, r in enumerate(expected) if (r["variant"], r["engine"]) == base_pair)
            table.move_cursor(row=first_base)
            await press_settle(app, pilot, "b")
            ft = column_index(screen, "max_ft")
            for match in ("pct", "kg"):  # typed weights mix kg and %MTOW: %MTOW first, then B
                note = shown_text(screen.query_one("#baseline-note"))
                assert note.startswith(f"Δ = row − {BASELINE_MARK} v88/ossel-78 at the same "
                                       f"{'%MTOW' if match == 'pct' else 'weight in kg'}, ISA deviation and climb")
                rows = table_rows(screen)
                assert len(rows) == len(expected)
                for shown, row in zip(rows, expected):
                    if (row["variant"], row["engine"]) == base_pair:
                        assert shown[0] == f"{BASELINE_MARK} v88" and shown[ft] == format_altitude_ft(row["max_altitude_ft"])
                    else:
                        assert _shown_ft(shown[ft]) == expected_delta(row, match), (shown, row, match)
                assert "(—: it has no such row)" in note
                await pilot.press("B")
            # b on a row of the baseline pair unpins it.
            table.move_cursor(row=first_base + 1)
            await pilot.press("b")
            assert not screen.query_one("#baseline-note").display
            assert not any(r[0].startswith(BASELINE_MARK) for r in table_rows(screen))
    run(body)


def test_percent_of_mtow_column_and_weights_outside_the_variant_flagged():
    conditions = Conditions(weights=(WeightSpec(12_000.0, "kg"), WeightSpec(100.0, "%mtow"), WeightSpec(110.0, "%mtow")))
    expected = reference(conditions).to_dicts()

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(160, 40)) as pilot:
            await settle(app, pilot)
            await pilot.press("c")
            await replace_text(pilot, "12t,100%mtow,110%mtow")
            await press_settle(app, pilot, "enter")
            screen = app.screen
            pct, tonnes = column_index(screen, "pct_mtow"), column_index(screen, "weight")
            rows = table_rows(screen)
            assert len(rows) == len(expected)
            for shown, row in zip(rows, expected):
                flags = ("*" if row["over_mtow"] else "") + ("!" if row["below_empty_weight"] else "")
                assert shown[pct] == f"{row['weight_pct_mtow']:.1f}".removesuffix(".0") + flags
                assert shown[tonnes] == f"{row['weight_kg'] / 1000:.1f}" + flags
            assert {r["weight_pct_mtow"] > 100 for r in expected if r["over_mtow"]} == {True}
            over = sum(r["over_mtow"] for r in expected)
            light = sum(r["below_empty_weight"] for r in expected)
            assert over and light
            status = shown_text(screen.query_one("#status"))
            assert f"{over} above MTOW *" in status and f"{light} below empty weight !" in status
    run(body)


# --- every key findable; pictures ---------------------------------------------------------------

def test_every_key_is_in_the_footer_or_in_help_and_the_command_palette():
    from variantcmp.app.help import key_commands

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(60, 15)) as pilot:
            await settle(app, pilot)
            # The palette's key stays on screen however narrow the footer.
            palette_key = app.screen.query_one("FooterKey.-command-palette")
            assert palette_key.region.right <= 60 and palette_key.region.y == 14
            # The keys that fit are shown whole, left of it; the rest are left out, not cut or overdrawn.
            shown = [key for key in app.screen.query("FooterKey") if key.display and key is not palette_key]
            assert shown and all(key.region.right <= palette_key.region.x for key in shown)
            assert len(shown) < len(app.screen.query("FooterKey")) - 1
            for path, cls in (([], CompareScreen), (["h"], PlannerScreen), (["f"], CruiseScreen), (["g"], EngineOutScreen),
                              (["v"], EnvelopeScreen), (["w"], SweepScreen), (["d"], ScreeningScreen),
                              (["i"], VariantScreen), (["f1"], HelpScreen)):
                await press_settle(app, pilot, *path)
                assert isinstance(app.screen, cls)
                titles = " | ".join(command.title for command in key_commands(app, app.screen))
                for binding in (*cls.BINDINGS, *VariantCmpApp.BINDINGS):
                    assert binding.description in titles, (cls.__name__, binding.key)
                await press_settle(app, pilot, "escape")
                if not isinstance(app.screen, CompareScreen):
                    await press_settle(app, pilot, "escape")
            # A key found in the palette by name, run with real keys: reverse the sort.
            await press_settle(app, pilot, "s")
            assert app.screen.descending
            await press_settle(app, pilot, "ctrl+p")
            await pilot.press(*"reverse sort")
            await settle(app, pilot)
            await press_settle(app, pilot, "enter")
            assert isinstance(app.screen, CompareScreen) and not app.screen.descending
    run(body)


def test_save_the_view_as_an_svg_picture(tmp_path: Path, monkeypatch: pytest.MonkeyPatch):
    monkeypatch.chdir(tmp_path)

    async def body():
        app = VariantCmpApp(None)
        told: list[str] = []
        notify = app.notify
        app.notify = lambda message, **kw: (told.append(message), notify(message, **kw))[1]
        async with app.run_test(size=(100, 30)) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "f2")
            compare = app.last_picture
            assert compare is not None and compare.parent == tmp_path and compare.name.startswith("variantcmp-compare-")
            svg = compare.read_text(encoding="utf-8")
            assert svg.startswith("<svg") and "Caution" in svg and "brannick" in svg
            assert told[-1] == f"Saved this view as {compare}"  # says where
            await press_settle(app, pilot, "v")
            await press_settle(app, pilot, "ctrl+s")
            assert app.last_picture.name.startswith("variantcmp-envelope-") and app.last_picture != compare
            assert sorted(p.suffix for p in tmp_path.iterdir()) == [".svg", ".svg"]  # nothing half-written left
    run(body)


def test_a_filter_matching_nothing_says_so_and_keys_on_the_empty_table_are_harmless():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "slash", "z", "escape", "up", "down", "enter", "b", "m", "v")
            assert isinstance(app.screen, CompareScreen)
            status = shown_text(app.screen.query_one("#status"))
            assert f"0/{DEMO_PAIRS} rows" in status and "no row matches “z”" in status
    run(body)


def test_open_dialog_starts_in_the_working_folder_and_lists_the_bundled_fleets(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    shutil.copyfile(demo_catalogue_path(), tmp_path / "my-fleet.toml")
    bundled = sorted(p.stem for p in demo_catalogue_path().parent.glob("*.toml"))

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(100, 30)) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "o")
            dialog = app.screen
            assert isinstance(dialog, OpenDialog)
            assert dialog.query_one("#path").value == ""  # no long path to clear first
            assert str(tmp_path) in str(dialog.query_one("#open-folder").render())
            listed = [str(o.prompt) for o in dialog.query_one("#open-choices").options]
            assert [name.split()[0] for name in listed] == [*bundled, "my-fleet.toml"]
            await pilot.press(*"zzz")
            await pilot.pause()
            assert "No bundled fleet or .toml file here matches “zzz”" in shown_text(dialog.query_one("#open-matches"))
            assert not dialog.query_one("#open-choices").display
            dialog.query_one("#path").value = ""
            await pilot.press(*"tallon")
            await pilot.pause()
            assert [str(o.prompt).split()[0] for o in dialog.query_one("#open-choices").options] == [
                "tallon-fells-survey"]
            await press_settle(app, pilot, "down", "enter")  # pick it from the list
            assert isinstance(app.screen, CompareScreen) and "Tallon" in app.catalogue.title
            # A bundled fleet by its name, and a file of the working folder by a relative path.
            await press_settle(app, pilot, "o", *"fernholt-regional", "enter")
            assert "Fernholt" in app.catalogue.title and app.catalogue.path == demo_catalogue_path()
            await press_settle(app, pilot, "o", *"my-fleet.toml", "enter")
            assert app.catalogue.path.resolve() == (tmp_path / "my-fleet.toml").resolve()
    run(body)


def test_variant_view_gives_tas_and_cas_at_the_maximum_altitude_in_one_altitude_unit():
    from test_airspeed_columns import pitot_reference_kt

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(120, 50)) as pilot:
            await settle(app, pilot)
            await pilot.press("c")
            await replace_text(pilot, "95%mtow")
            await pilot.press("tab")
            await replace_text(pilot, "ISA+15")
            await press_settle(app, pilot, "enter", "i")
            screen = app.screen
            assert isinstance(screen, VariantScreen)
            text = shown_text(screen.query_one("#variant-conditions"), width=120)
            expected = reference(app.conditions).filter(pl.col("variant") == screen.variant_id)
            assert expected.height >= 2
            for row in expected.iter_rows(named=True):
                line = next(line for line in text.splitlines() if line.strip().startswith(row["engine"] + " "))
                tas, cas = pitot_reference_kt(row["max_altitude_ft"], row["mach"], row["isa_dev_c"])
                assert line.split()[-2:] == [f"{tas:.0f}", f"{cas:.0f}"], line
                assert format_flight_level(row["max_altitude_ft"]) in line
            whole = " ".join(shown_text(screen.query_one(f"#variant-{part}"), width=120)
                             for part in ("conditions", "figures", "engines", "values"))
            assert "kg/m²" in whole and "kg/m2" not in whole
            assert " km" not in whole and " m " not in whole  # altitudes in ft only
            # Narrow: the airspeeds stay, the conditions' columns go first, and it says so.
            await pilot.resize_terminal(60, 15)
            await pilot.pause()
            narrow = " ".join(shown_text(screen.query_one("#variant-conditions"), width=60).split())
            assert "TAS kt" in narrow and "CAS kt" in narrow and "too narrow for: W t" in narrow
            await pilot.resize_terminal(120, 50)
            await pilot.pause()
            # The conditions change on the compare screen: the view follows when back.
            await press_settle(app, pilot, "escape", "c")
            await replace_text(pilot, "90%mtow")
            await press_settle(app, pilot, "enter", "i")
            assert " 90 " in shown_text(app.screen.query_one("#variant-conditions"), width=120)
    run(body)


def test_readme_key_tables_are_true():
    """Every key README's terminal-app section names is bound, and every key of the compare screen
    and of the app is named there."""
    import re

    from variantcmp.app.open_dialog import OpenDialog as Open

    readme = (Path(__file__).resolve().parent.parent / "README.md").read_text(encoding="utf-8")
    section = readme.split("### The terminal app", 1)[1].split("\n## ", 1)[0]
    names = {"esc": "escape", "?": "question_mark", "/": "slash", "F1": "f1", "F2": "f2"}
    named = set()
    for line in section.splitlines():
        if line.startswith("| `"):
            first = line.split("|")[1]
            named |= {names.get(key, key) for key in re.findall(r"`([^`]+)`", first)}
    screens = (VariantCmpApp, CompareScreen, PlannerScreen, CruiseScreen, EngineOutScreen, EnvelopeScreen, SweepScreen,
               ScreeningScreen, VariantScreen, HelpScreen, ProblemsScreen, Open, ExportDialog, ConfirmDialog)
    bound = {key.strip() for cls in screens for binding in cls.BINDINGS for key in binding.key.split(",")}
    textual_keys = {"ctrl+p", "enter", "tab", "shift+tab"}  # the command palette, tables and fields
    assert named - bound - textual_keys == set()
    for cls in (VariantCmpApp, CompareScreen):
        for binding in cls.BINDINGS:
            for key in binding.key.split(","):
                assert key.strip() in named or key.strip() == "escape", (cls.__name__, key)
