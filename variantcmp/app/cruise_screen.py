"""The cruise-level view: per variant x engine option at the shared conditions, the optimum against
the maximum altitude, the chosen level of a level scheme, fuel flow and specific range (sortable),
and a drawing of the selected row's specific range against altitude."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from functools import partial
from time import perf_counter
from typing import Callable

import polars as pl
from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.screen import Screen
from textual.widgets import DataTable, ProgressBar, Static

from variantcmp.solver.cruise import LEVEL_SCHEMES, scheme_levels_m
from variantcmp.sketch_cruise import draw_cruise_levels
from variantcmp.table.cruise import CruiseView, cruise_view
from variantcmp.units import OptionError, format_flight_level, format_isa_dev

from .jobs import LatestJob
from .keys import HoldsKeys, focus_now
from .navigation import BackToCompare
from .results import export_frame
from .sketch_view import NO_TABLE, SketchView
from .sorting import SortCycle
from .view import NONE, Cell, justify
from .widgets import CautionBanner, FittingFooter

#: The level schemes the l key steps through (the first is the default).
SCHEMES = ("2000-east", "2000-west", "4000-east", "4000-west", "1000")
M_PER_FT = 0.3048


@dataclass(frozen=True)
class CruiseColumn:
    """A column of the cruise table: its key, header, source column, cell text, first sort order."""

    key: str
    header: str
    source: str
    text: Callable[[dict], str]
    right: bool = True
    high_first: bool = False


def _number(fmt: str, source: str) -> Callable[[dict], str]:
    return lambda row: NONE if row.get(source) is None else format(row[source], fmt)


def _fl(source: str) -> Callable[[dict], str]:
    return lambda row: format_flight_level(row.get(source))


def _level(row: dict) -> str:
    return NONE if row.get("cruise_fl") is None else f"FL{row['cruise_fl']:03d}"


COLUMNS = (
    CruiseColumn("variant", "Variant", "variant", lambda r: r["variant"], right=False),
    CruiseColumn("engine", "Engine", "engine", lambda r: r["engine"], right=False),
    CruiseColumn("weight", "W t", "weight_kg", lambda r: f"{r['weight_kg'] / 1000:.1f}"),
    CruiseColumn("isa", "ISA", "isa_dev_c", lambda r: format_isa_dev(r["isa_dev_c"]).removeprefix("ISA") or "0"),
    CruiseColumn("mach", "Mach", "mach", _number(".3f", "mach")),
    CruiseColumn("opt", "Opt FL", "optimum_altitude_ft", _fl("optimum_altitude_ft"), high_first=True),
    CruiseColumn("max", "Max FL", "max_altitude_ft", _fl("max_altitude_ft"), high_first=True),
    CruiseColumn("limit", "Limit", "limit", lambda r: r.get("limit") or NONE, right=False),
    CruiseColumn("level", "Cruise FL", "cruise_fl", _level, high_first=True),
    CruiseColumn("flow", "Fuel kg/h", "fuel_flow_kg_h", _number(",.0f", "fuel_flow_kg_h")),
    CruiseColumn("sr", "SR NM/t", "specific_range_nm_per_t", _number(",.1f", "specific_range_nm_per_t"),
                 high_first=True),
    CruiseColumn("loss", "Below opt %", "specific_range_loss_pct", _number(".1f", "specific_range_loss_pct")),
    CruiseColumn("note", "Note", "note", lambda r: r.get("note") or "", right=False),
)
COLUMNS_BY_KEY = {c.key: c for c in COLUMNS}
ROW = "_cruise_row"  # the row's position in the computed table (its profile's key)


def computed_view(catalogue, conditions, scheme: str) -> tuple[CruiseView | None, str | None, float]:
    """Run the cruise table for the view (in the worker): (view, error message, ms). A best-speed
    condition is taken as each variant's cruise Mach (the cruise answers are at a fixed Mach)."""
    started = perf_counter()
    if conditions.mach == "best":
        conditions = dataclasses.replace(conditions, mach="cruise")
    try:
        return cruise_view(catalogue, conditions, scheme), None, (perf_counter() - started) * 1000.0
    except OptionError as error:
        return None, str(error), (perf_counter() - started) * 1000.0
    except Exception as error:  # the app must not die: say what went wrong in place
        return None, f"could not compute the cruise table ({type(error).__name__}: {error})", 0.0


class CruiseScreen(SortCycle, BackToCompare, HoldsKeys, Screen):
    """Cruise levels at the compare screen's conditions (weights, ISA deviations, speed, climb)."""

    PICTURE_NAME = "cruise"  # in the name of a saved SVG (f2)
    BINDINGS = [
        Binding("escape", "compare", "Back", tooltip="to the compare screen"),
        Binding("c", "conditions", "Conditions", tooltip="to the compare screen's condition fields"),
        Binding("s", "sort_next", "Sort"),
        Binding("S", "sort_previous", "Sort back", show=False),
        Binding("r", "reverse_sort", "Reverse sort", show=False),
        Binding("l", "next_scheme", "Levels", tooltip="level scheme: 2000 ft east, west, 4000 ft east, west, "
                "every 1,000 ft, in turn"),
        Binding("a", "toggle_ascii", "ASCII", tooltip="plain ASCII drawing for dumb terminals, on or off"),
        Binding("i", "inspect", "Inspect", show=False),
        Binding("e", "export", "Export", show=False),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.scheme = SCHEMES[0]
        self.view: CruiseView | None = None
        self.rows: list[dict] = []  # the rows as shown (sorted)
        self.shown: pl.DataFrame | None = None  # the same, as a table (with ROW)
        self.sort_key: str | None = None
        self.descending = False
        self.error: str | None = None
        self.compute_ms = 0.0
        self.computations = 0
        self._generation = 0
        self._wanted = None  # (catalogue id, conditions, scheme) last asked for
        self._job = LatestJob(self, "cruise")

    def compose(self) -> ComposeResult:
        yield CautionBanner(id="caution")
        with Horizontal(id="sketch-status-row"):
            yield Static("", id="sketch-status")
            yield ProgressBar(total=None, show_eta=False, show_percentage=False, id="sketch-busy")
        yield DataTable(id="cruise-table", cursor_type="row", zebra_stripes=True, fixed_columns=2)
        yield SketchView(id="cruise-sketch")
        yield FittingFooter()

    def on_mount(self) -> None:
        self.app.results_signal.subscribe(self, lambda _: self.recompute())
        self.recompute()
        focus_now(self.query_one(DataTable))

    def on_screen_resume(self) -> None:
        if self.is_mounted:
            self.query_one(SketchView).redraw()  # the ASCII toggle may have changed elsewhere
            self.recompute()

    # --- compute ----------------------------------------------------------------------------

    def recompute(self) -> None:
        app = self.app
        results = app.results
        if app.catalogue is None or results is None or results.df is None:
            self.set_status(NO_TABLE)
            return
        wanted = (id(results.catalogue), results.conditions, self.scheme)
        if wanted == self._wanted:
            return
        self._wanted = wanted
        self._generation += 1
        self.set_busy(True)
        self.set_status(f"computing the cruise levels ({self.scheme}) …")
        self._job.request(partial(computed_view, results.catalogue, results.conditions, self.scheme),
                          partial(self._deliver, self._generation))

    def _deliver(self, generation: int, outcome) -> None:
        if generation != self._generation or not self.is_attached:
            return
        view, error, elapsed_ms = outcome
        self.set_busy(False)
        self.computations += 1
        self.compute_ms = elapsed_ms
        self.error = error
        if error is not None:
            self.set_status(f"✗ {error}")
            self.query_one(SketchView).show(None, f"✗ {error}")
            return
        self.view = view
        self.render_table()

    # --- table and drawing -------------------------------------------------------------------

    def render_table(self) -> None:
        if self.view is None:
            return
        frame = self.view.frame.with_row_index(ROW)
        column = COLUMNS_BY_KEY.get(self.sort_key) if self.sort_key else None
        if column is not None:
            frame = frame.sort(column.source, descending=self.descending, nulls_last=True, maintain_order=True)
        self.shown = frame
        self.rows = list(frame.iter_rows(named=True))
        table = self.query_one(DataTable)
        keep = self.cursor_row()
        table.clear(columns=True)
        headers = [c.header + ((" ▼" if self.descending else " ▲") if c.key == self.sort_key else "") for c in COLUMNS]
        cells = [[Cell(c.text(row), c.right) for c in COLUMNS] for row in self.rows]
        labels, widths = justify(headers, cells)
        for c, label, width in zip(COLUMNS, labels, widths):
            table.add_column(label, key=c.key, width=width)
        for row, row_cells in zip(self.rows, cells):
            table.add_row(*row_cells, key=str(row[ROW]))
        if keep is not None and str(keep) in table.rows:
            table.move_cursor(row=table.get_row_index(str(keep)), animate=False)
        self.show_drawing()

    def cursor_row(self) -> int | None:
        """The computed table's position of the row under the cursor."""
        table = self.query_one(DataTable)
        if table.row_count == 0:
            return None
        return int(table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value)

    def selected(self) -> dict | None:
        position = self.cursor_row()
        return next((row for row in self.rows if row[ROW] == position), None)

    def show_drawing(self) -> None:
        row = self.selected()
        sketch = self.query_one(SketchView)
        if row is None or self.view is None:
            sketch.show(None, "No row to draw.")
            self.set_status(self.describe(None))
            return
        profile = self.view.profiles.filter(pl.col("row") == row[ROW])
        altitude = profile["altitude_ft"].to_numpy()
        sr = profile["specific_range_nm_per_t"].fill_null(float("nan")).to_numpy()
        levels = scheme_levels_m(self.scheme) / M_PER_FT
        app = self.app
        sketch.show(lambda width, height: draw_cruise_levels(row, altitude, sr, levels, width, height,
                                                             app.sketch_ascii, mono=app.no_color))
        self.set_status(self.describe(row))

    def describe(self, row: dict | None) -> str:
        view = self.view
        parts = [f"Cruise levels: {len(self.rows)} rows", f"levels {self.scheme} ({LEVEL_SCHEMES[self.scheme][0]})"]
        conditions = self.app.results.conditions if self.app.results is not None else None
        if conditions is not None and conditions.mach == "best":
            parts.append("speed best taken as cruise Mach")
        if self.sort_key:
            parts.append(f"sorted by {COLUMNS_BY_KEY[self.sort_key].header} {'▼' if self.descending else '▲'}")
        if row is not None and view is not None:
            parts.append(f"drawing {row['variant']}/{row['engine']}")
        if self.app.sketch_ascii:
            parts.append("ASCII")
        parts.append(f"solver {self.compute_ms:.0f} ms")
        return " · ".join(parts)

    def set_status(self, text: str) -> None:
        self.query_one("#sketch-status", Static).update(Text(text, no_wrap=True, overflow="ellipsis"))

    def set_busy(self, busy: bool) -> None:
        self.query_one("#sketch-busy", ProgressBar).set_class(busy, "-shown")

    @on(DataTable.RowHighlighted)
    def row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        if event.row_key is not None:
            self.show_drawing()

    @on(DataTable.HeaderSelected)
    def header_selected(self, event: DataTable.HeaderSelected) -> None:
        self.sort_by(event.column_key.value)

    @on(DataTable.RowSelected)
    def row_selected(self) -> None:
        self.action_inspect()

    # --- actions -------------------------------------------------------------------------------

    # Sorting (sorting.SortCycle): specific range first (best on top), then the level and the rest.
    FIRST_SORT = "sr"

    def sort_columns(self) -> list[CruiseColumn]:
        first = ["sr", "level", "flow", "loss", "opt", "max", "limit"]
        rest = [c.key for c in COLUMNS if c.key not in first + ["variant", "engine", "note"]]
        return [COLUMNS_BY_KEY[key] for key in first + rest]

    def sort_column(self, key: str) -> CruiseColumn:
        return COLUMNS_BY_KEY[key]

    def render_sorted(self) -> None:
        self.render_table()

    def action_next_scheme(self) -> None:
        self.scheme = SCHEMES[(SCHEMES.index(self.scheme) + 1) % len(SCHEMES)]
        self.recompute()

    def action_toggle_ascii(self) -> None:
        self.app.sketch_ascii = not self.app.sketch_ascii
        self.query_one(SketchView).redraw()
        self.set_status(self.describe(self.selected()))

    def action_inspect(self) -> None:
        row = self.selected()
        if row is not None:
            self.app.inspect_variant(row["variant"])

    def action_export(self) -> None:
        if self.shown is not None:
            self.app.export_table(export_frame(self.shown.drop(ROW)), "variantcmp-cruise")
