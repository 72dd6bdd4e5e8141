"""The screening view and the P10-P90 bars driven with real keys through Textual's test pilot.

What the app shows is checked against the result layer (`screening_table`, `spread_table`), the
same code as `variantcmp screen` and `variantcmp spread`. The screening view's redraw time after
a key press is printed (run with -s), never asserted.
"""

from __future__ import annotations

import re
from dataclasses import replace
import time

import polars as pl

from test_app import SIZE, column_index, press_settle, replace_text, run, settle, table_rows
from variantcmp.app import VariantCmpApp
from variantcmp.app.compare import CompareScreen
from variantcmp.app.screening_screen import ScreeningScreen
from variantcmp.app.screening_view import TIE_MARK, hundreds
from variantcmp.app.spread_bars import SEED, samples_for
from variantcmp.caution import CAUTION_SHORT
from variantcmp.catalogue import demo_catalogue_path, load_catalogue
from variantcmp.table import Conditions
from variantcmp.table.perturbations import DEFAULT_VARY, spread_table
from variantcmp.table.screening import baseline_candidates, screening_grid, screening_table
from variantcmp.units import format_flight_level


def matrix_blocks(screen) -> dict[tuple[str, str], list[list[str]]]:
    """The matrix as shown: per (variant, engine) title, its rows of cell texts (weights down)."""
    text = screen.query_one("#matrix").content.plain
    blocks, current = {}, None
    for line in text.splitlines():
        title = re.match(r"^(\S+) · (\S+) vs ◆ (\S+)", line)
        if title:
            current = blocks.setdefault((title[1], title[2]), [])
        elif current is not None and re.match(r"^\s+\d+(\.\d)? ", line):
            cells = line[7:]
            current.append([cells[i:i + 6] for i in range(0, len(cells), 7)])
    return blocks


def expected_cell(delta_ft) -> str:
    if delta_ft is None:
        return "?"
    if abs(delta_ft) < 1.0:
        return TIE_MARK
    n = hundreds(delta_ft)
    return f"{n:+d}" if n else ("+0" if delta_ft > 0 else "-0")


def test_screening_matrix_is_the_screening_table_and_follows_the_baseline_and_sort():
    demo = load_catalogue(demo_catalogue_path())
    grid = screening_grid(Conditions())

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(100, 40)) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "d")
            screen = app.screen
            assert isinstance(screen, ScreeningScreen)
            assert screen.query_one("#caution").plain  # the caution on this view too
            first = baseline_candidates(demo)[0]
            assert screen.baseline == first
            for baseline in (first, baseline_candidates(demo)[1]):
                rows = screening_table(demo, grid, baseline)
                blocks = matrix_blocks(screen)
                assert set(blocks) == set(zip(rows["variant"], rows["engine"]))
                for (variant, engine), shown in blocks.items():
                    part = rows.filter((pl.col("variant") == variant) & (pl.col("engine") == engine))
                    expected = [[expected_cell(d) for d in g.sort("isa_dev_c")["delta_ft"].to_list()]
                                for _, g in part.group_by("weight_kg", maintain_order=True)]
                    assert [[c[:4].strip() for c in r] for r in shown] == expected, (variant, engine)
                # A new baseline is a join and a redraw, no solver call: time it from the key.
                started = time.perf_counter()
                await pilot.press("b")
                await pilot.pause()
                print(f"\nscreening redraw after b: {screen.redraw_ms:.0f} ms from the key to the screen painted "
                      f"(join, summary and text {screen.render_ms:.1f} ms; the pilot's press and pause "
                      f"{(time.perf_counter() - started) * 1000:.0f} ms)")
            # Sorting by the worst difference (the next after the mean) puts the highest worst first.
            started = time.perf_counter()
            await pilot.press("s")
            await pilot.pause()
            print(f"screening redraw after s: {screen.redraw_ms:.0f} ms from the key to the screen painted "
                  f"(join, summary and text {screen.render_ms:.1f} ms; the pilot's press and pause "
                  f"{(time.perf_counter() - started) * 1000:.0f} ms)")
            assert "by worst Δ ▼" in str(screen.query_one("#screen-status").content)
            rows = screening_table(demo, grid, screen.baseline)
            worst = rows.group_by("variant", "engine").agg(pl.col("delta_ft").min()).sort("delta_ft", descending=True)
            assert list(matrix_blocks(screen))[0] == (worst["variant"][0], worst["engine"][0])
            await press_settle(app, pilot, "escape")
            assert isinstance(app.screen, CompareScreen)
    run(body)


def test_the_compare_screens_pinned_engine_is_the_screening_baseline():
    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "down", "down", "down", "b", "d")  # v88 ossel-86
            assert isinstance(app.screen, ScreeningScreen) and app.screen.baseline == "ossel-86"
            assert "◆ ossel-86 baseline" in str(app.screen.query_one("#screen-status").content)
            # A short terminal keeps a one-line caution here too.
            await pilot.resize_terminal(80, 16)
            await settle(app, pilot)
            assert app.screen.query_one("#caution").plain in (CAUTION_SHORT,) or "Caution" in \
                app.screen.query_one("#caution").plain
    run(body)


def test_uncertainty_bars_show_the_spread_tables_percentiles():
    demo = load_catalogue(demo_catalogue_path())

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(120, 30)) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "u")
            screen = app.screen
            rows = table_rows(screen)
            spread = spread_table(demo, Conditions(), DEFAULT_VARY, samples_for(len(rows)), SEED)
            p10, p90 = column_index(screen, "p10"), column_index(screen, "p90")
            bar = column_index(screen, "spread")
            for shown, expected in zip(rows, spread.iter_rows(named=True)):
                assert shown[p10] == format_flight_level(expected["p10_ft"])
                assert shown[p90] == format_flight_level(expected["p90_ft"])
                assert shown[bar].count("├") == 1 or shown[bar].count("┃") == 1
            note = str(screen.query_one("#spread-note").content)
            assert "P10 ┼ P50 ┤ P90" in note and f"{samples_for(len(rows)):,} samples, seed {SEED}" in note
            # New conditions: the bars follow.
            await press_settle(app, pilot, "c")
            await pilot.press("ctrl+a", *"90%mtow", "enter")
            await settle(app, pilot)
            spread = spread_table(demo, app.conditions, DEFAULT_VARY, samples_for(len(rows)), SEED)
            assert table_rows(screen)[0][p10] == format_flight_level(spread["p10_ft"][0])
            # Sorting reaches the spread's columns; hiding them goes back to catalogue order.
            await press_settle(app, pilot, *["s"] * 4)  # Max FL, Max ft, Limit, P10
            assert screen.sort_key == "p10"
            p10s = [r[p10] for r in table_rows(screen)]
            assert p10s == sorted(p10s, reverse=True)
            await press_settle(app, pilot, "u")
            assert "p10" not in [c.value for c in screen.query_one("#table").columns] and screen.sort_key is None
    run(body)


def test_without_colour_the_matrix_reads_by_its_signs(monkeypatch):
    # NO_COLOR (no-color.org): no colour at all; the signs, numbers and shades carry the meaning.
    monkeypatch.setenv("NO_COLOR", "1")

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=SIZE) as pilot:
            await settle(app, pilot)
            await press_settle(app, pilot, "d")
            text = app.screen.query_one("#matrix").content
            assert not [span for span in text.spans if "green" in str(span.style) or "red" in str(span.style)]
            assert re.search(r"[+-]\d+[·░▒▓█]", text.plain)
    run(body)


def test_with_a_target_each_matrix_ends_with_the_heaviest_weights_difference():
    # The compare screen's target FL370 gives each option's matrix a ΔW row: per day, the option's
    # heaviest weight for FL370 less the baseline's in t, as screening_table gives it.
    demo = load_catalogue(demo_catalogue_path())

    async def body():
        app = VariantCmpApp(None)
        async with app.run_test(size=(100, 40)) as pilot:
            await settle(app, pilot)
            app.screen.query_one("#field-target").focus()
            await replace_text(pilot, "FL370")
            await press_settle(app, pilot, "enter")  # back to the table
            await press_settle(app, pilot, "d")
            screen = app.screen
            rows = screening_table(demo, replace(screening_grid(app.conditions), engines=()), screen.baseline)
            shown = [line for line in screen.query_one("#matrix").content.plain.splitlines()
                     if line.startswith("  ΔW t")]
            options = rows.select("variant", "engine").unique(maintain_order=True)
            assert len(shown) == options.height and "heaviest for FL370, mean" in shown[0]
            by_day = {(r["variant"], r["engine"], r["isa_dev_c"]): r["target_weight_delta_kg"]
                      for r in rows.iter_rows(named=True)}
            days = sorted(rows["isa_dev_c"].unique())
            for line in shown:
                cells = [line[7 + 7 * i:13 + 7 * i].strip() for i in range(len(days))]
                assert any(c not in ("=", "—") for c in cells)
                for cell in cells:
                    assert cell in ("=", "—", "✓", "✗") or re.fullmatch(r"[+-]\d+\.\d", cell)
            first = options.row(0)
            expected = [by_day[(*first, d)] for d in days]
            # The first option shown is the best by mean Δ, so look its block up by title.
            text = screen.query_one("#matrix").content.plain.split("\n\n")
            block = next(b for b in text if b.startswith(f"{first[0]} · {first[1]} "))
            line = next(row for row in block.splitlines() if row.startswith("  ΔW t"))
            cells = [line[7 + 7 * i:13 + 7 * i].strip() for i in range(len(days))]
            assert cells == ["=" if d is not None and abs(d) < 50 else f"{d / 1000:+.1f}" for d in expected]
    run(body)
