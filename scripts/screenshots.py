"""Regenerate the SVG screenshots of every screen of the terminal app into screenshots/.

    python scripts/screenshots.py [--size 100x30] [--out screenshots]

Drives the app headless with real keys (Textual's test pilot) on the bundled
demo fleet, so the pictures show what a user sees. Run it after changing a screen.
"""

from __future__ import annotations

import argparse
import asyncio
import os
import tempfile
from pathlib import Path

from variantcmp.app import VariantCmpApp
from variantcmp.catalogue import demo_catalogue_path

ROOT = Path(__file__).resolve().parent.parent


async def settle(app, pilot) -> None:
    """Wait for computations in worker threads and the redraw after them."""
    await pilot.pause()
    while any(not worker.is_finished for worker in app.workers):  # a finished job may start the one waiting
        await app.workers.wait_for_complete()
        await pilot.pause()
    await pilot.pause()


async def type_into(pilot, selector: str, text: str) -> None:
    """Focus a field, replace its text at once (as a paste would), and leave it with enter."""
    widget = pilot.app.screen.query_one(selector)
    widget.focus()
    widget.value = text
    await pilot.press("enter")


async def move_to(pilot, variant: str, engine: str) -> None:
    """Put the compare screen's cursor on a variant x engine option's (first) row."""
    table = pilot.app.screen.query_one("#table")
    cells = [[str(getattr(c, "plain", c)).strip() for c in table.get_row_at(i)[:2]] for i in range(table.row_count)]
    table.move_cursor(row=cells.index([variant, engine]))
    await pilot.pause()


BROKEN = (
    '[catalogue]\ntitle = "Broken example"\n\n[[engine]]\nid = "e1"\nmodel = "density-lapse"\n'
    'static_thrust_kn = -5\n\n[[variant]]\nid = "a1"\nengine_options = ["e9"]\n'
    'engine_count = 2\nwing_area_m2 = 80\naspect_ratio = 9\noswald_e = 0.8\ncd0 = nan\n'
    'cl_max = 1.4\nmtow_kg = 40000\ncruise_mach = 0.74\nwing_span_m = 30\n'
)


def stage_folder() -> Path:
    """A fixed working folder with two catalogues, standing in for the home folder too, so the
    pictures show "~" and the same names from run to run, never a path of the machine."""
    folder = Path(tempfile.gettempdir()) / "variantcmp-screenshots"
    folder.mkdir(exist_ok=True)
    (folder / "broken-fleet.toml").write_text(BROKEN, encoding="utf-8")
    (folder / "my-fleet.toml").write_text(demo_catalogue_path().read_text(encoding="utf-8"), encoding="utf-8")
    return folder


async def shoot(size: tuple[int, int], out: Path) -> list[Path]:
    out.mkdir(parents=True, exist_ok=True)
    out = out.resolve()
    written: list[Path] = []
    folder = stage_folder()
    home, cwd = os.environ.get("HOME"), Path.cwd()
    os.environ["HOME"] = str(folder)
    os.chdir(folder)
    try:
        await _shoot(size, out, written)
    finally:
        os.chdir(cwd)
        if home is None:
            os.environ.pop("HOME", None)
        else:
            os.environ["HOME"] = home
    return written


async def _shoot(size: tuple[int, int], out: Path, written: list[Path]) -> None:

    def save(app, name: str) -> None:
        path = out / f"{name}.svg"
        app.save_screenshot(str(path))
        written.append(path)

    app = VariantCmpApp(None)
    async with app.run_test(size=size) as pilot:
        await settle(app, pilot)
        save(app, "compare")

        # A target flight level and two days, with a pinned baseline: each row against the
        # baseline's row of the same %MTOW and day.
        await type_into(pilot, "#field-target", "FL350")
        await type_into(pilot, "#field-isa", "0,15")
        await settle(app, pilot)
        await pilot.press("down", "down", "b")  # pin the second row's variant x engine option
        await settle(app, pilot)
        save(app, "compare-baseline")
        await pilot.press("b")  # unpin (cursor is still on the baseline's row)
        await type_into(pilot, "#field-isa", "0")
        await settle(app, pilot)
        await pilot.press("s")  # sort by Max FL, highest first

        # A bad value is reported in place; the table keeps the last good conditions.
        await type_into(pilot, "#field-weight", "62x")
        await settle(app, pilot)
        save(app, "compare-bad-input")
        await type_into(pilot, "#field-weight", "100%mtow")
        await settle(app, pilot)

        # Envelope of the row under the cursor, then three marked rows overlaid.
        await pilot.press("v")
        await settle(app, pilot)
        save(app, "envelope")
        await pilot.press("escape", "home", "m", "down", "m", "down", "m", "v")
        await settle(app, pilot)
        save(app, "envelope-overlay")
        # Sweeps of the marked rows: the hot-day curve and maximum altitude against weight.
        await pilot.press("w", "d")
        await settle(app, pilot)
        save(app, "sweep-isa")
        await pilot.press("w")
        await settle(app, pilot)
        save(app, "sweep-weight")
        await pilot.press("escape", "M")  # back to the compare screen, marks cleared
        await settle(app, pilot)

        # Cruise levels at 90 % MTOW, best specific range first, the drawing of the third row.
        await type_into(pilot, "#field-weight", "90%mtow")
        await settle(app, pilot)
        await pilot.press("f")
        await settle(app, pilot)
        await pilot.press("s", "down", "down")
        await settle(app, pilot)
        save(app, "cruise")
        await pilot.press("escape")
        await type_into(pilot, "#field-weight", "100%mtow")
        await settle(app, pilot)

        # The planner: the heaviest weight on an ISA+15 day and the warmest day at 90 %MTOW for FL370.
        await pilot.press("h")
        await settle(app, pilot)
        await type_into(pilot, "#lookup-weight", "90%mtow")
        await type_into(pilot, "#lookup-target", "FL370")
        await settle(app, pilot)
        save(app, "planner")
        await pilot.press("escape")
        await settle(app, pilot)

        # Engine-out view: ceilings, drift-down and the profile of a row, with a terrain check.
        await pilot.press("g")
        await settle(app, pilot)
        await type_into(pilot, "#oei-terrain", "14000")
        await settle(app, pilot)
        await pilot.press("down", "down")
        await settle(app, pilot)
        save(app, "engine-out")
        await pilot.press("p")
        await settle(app, pilot)
        save(app, "engine-out-profile")
        # A turboprop's drift-down (the T72 with its PT-24), its best speed held at the buffet margin.
        await pilot.press("p", *["down"] * 7)
        await settle(app, pilot)
        await pilot.press("p")
        await settle(app, pilot)
        save(app, "engine-out-turboprop")
        await pilot.press("p", "escape")
        await settle(app, pilot)

        # The spread of each row under uncertain data (P10-P90 bars), then the screening matrix
        # against the engine option of the pinned top row.
        await pilot.press("u")
        await settle(app, pilot)
        save(app, "compare-uncertainty")
        await pilot.press("u", "home", "b", "d")
        await settle(app, pilot)
        save(app, "screening")
        await pilot.press("escape", "b")  # unpin (the cursor is still on the baseline's row)
        await settle(app, pilot)

        await pilot.press("i")
        await settle(app, pilot)
        save(app, "variant")
        # The turboprop: power, propeller efficiency and the speed of its best ceiling.
        while app.screen.variant_id != "t72":
            await pilot.press("n")
        await settle(app, pilot)
        save(app, "variant-turboprop")
        await pilot.press("escape")

        # The stretched turboprop's two engine options overlaid on a warm day: it flies highest
        # slowly, where the buffet margin meets the thrust ceiling.
        await type_into(pilot, "#field-isa", "15")
        await settle(app, pilot)
        for engine in ("tavish-20", "tavish-24"):
            await move_to(pilot, "t78", engine)
            await pilot.press("m")
        await pilot.press("v")
        await settle(app, pilot)
        save(app, "envelope-turboprop")
        await pilot.press("escape", "M")
        await type_into(pilot, "#field-isa", "0")
        await settle(app, pilot)

        await pilot.press("f1")
        await settle(app, pilot)
        save(app, "help")
        await pilot.press("escape")

        await pilot.press("e")
        await settle(app, pilot)
        save(app, "export")
        await pilot.press("escape")

        # The open dialog: the working folder's catalogues and the bundled fleets, by name.
        await pilot.press("o")
        await settle(app, pilot)
        save(app, "open")
        await pilot.press("escape")
        await settle(app, pilot)

        # A broken catalogue of the working folder: its problems, in the app; then the demo again,
        # by its bundled name.
        await pilot.press("o")
        await settle(app, pilot)
        await pilot.press(*"broken-fleet.toml", "enter")
        await settle(app, pilot)
        save(app, "catalogue-problems")
        await pilot.press("escape", "o")
        await settle(app, pilot)
        await pilot.press(*"fernholt-regional", "enter")
        await settle(app, pilot)

        # A sweep: one row per weight and deviation.
        await type_into(pilot, "#field-weight", "90%mtow,100%mtow")
        await type_into(pilot, "#field-isa", "0,15")
        await settle(app, pilot)
        save(app, "compare-sweep")

        app.action_toggle_theme()
        await settle(app, pilot)
        save(app, "compare-light")
        app.action_toggle_theme()

        # A small terminal: the caution on one line, the footer and the palette key still there.
        await type_into(pilot, "#field-weight", "100%mtow")
        await type_into(pilot, "#field-isa", "0")
        await pilot.resize_terminal(60, 15)
        await settle(app, pilot)
        save(app, "compare-60x15")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--size", default="100x30", help="terminal size WIDTHxHEIGHT (default 100x30)")
    parser.add_argument("--out", default=str(ROOT / "screenshots"), help="folder for the SVG files")
    args = parser.parse_args()
    width, height = (int(x) for x in args.size.lower().split("x"))
    for path in asyncio.run(shoot((width, height), Path(args.out))):
        print(path)


if __name__ == "__main__":
    main()
