"""The engine-out view: with one engine inoperative, the gross and net ceilings of every variant x
engine option at the compare screen's weights and days, the drift-down distance and time, an
optional terrain check, and a drawing of the selected row's drift-down profile.

The numbers come from :func:`variantcmp.table.engine_out.engine_out` (the same call as
``variantcmp oei``), computed in a worker; the drawing from :mod:`variantcmp.driftdown_sketch`.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from functools import partial
from time import perf_counter

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.screen import Screen
from textual.widgets import DataTable, Input, Label, Static

from variantcmp.caution import ENGINE_OUT_CAUTION
from variantcmp.driftdown_sketch import draw_driftdown
from variantcmp.solver.driftdown import LEVEL_OFF_MARGIN_FT
from variantcmp.table import check_selection
from variantcmp.table.engine_out import DEFAULT_CLEARANCE_FT, EngineOut, EngineOutOptions, engine_out
from variantcmp.units import (
    CLEARANCE_RANGE_FT, TERRAIN_RANGE_FT, OptionError, format_flight_level, format_isa_dev, parse_flight_level,
    parse_height_ft,
)

from .jobs import LatestJob
from .keys import HoldsKeys, focus_now
from .navigation import BackFromFields
from .results import export_frame
from .sketch_view import SketchView
from .view import NONE, ROW_KEY, Cell, justify, with_row_keys
from .widgets import CautionBanner, FittingFooter, TextEntry


@dataclass(frozen=True)
class OeiField:
    key: str
    label: str
    default: str
    placeholder: str
    help: str


OEI_FIELDS = (
    OeiField("start", "From", "", "e.g. FL370",
             "start of the drift-down (FL370, 37000ft); empty: the all-engines maximum altitude at the compare "
             "screen's speed and climb"),
    OeiField("terrain", "Terrain", "", "e.g. 12500",
             "highest obstacle, ft above mean sea level (12500, 3800m): adds the terrain check; empty for none"),
    OeiField("clearance", "Clear", f"{DEFAULT_CLEARANCE_FT:.0f}", "e.g. 2000",
             "margin the net path must keep above the obstacle, ft (2,000 by default, from memory of en-route "
             "practice)"),
)


def parse_oei_fields(texts: dict[str, str]) -> EngineOutOptions:
    """The view's fields as :class:`EngineOutOptions`, by the command line's parsers (OptionError
    with the field's name)."""
    start, terrain, clearance = (texts[k].strip() for k in ("start", "terrain", "clearance"))
    return EngineOutOptions(
        parse_flight_level(start, "From") if start else None,
        parse_height_ft(terrain, "Terrain", TERRAIN_RANGE_FT) if terrain else None,
        parse_height_ft(clearance, "Clear", CLEARANCE_RANGE_FT) if clearance else DEFAULT_CLEARANCE_FT)


def compute_engine_out(catalogue, conditions, options) -> tuple[EngineOut | None, str | None, float]:
    """The engine-out answer for the view (in the worker): (result, error message, ms)."""
    started = perf_counter()
    try:
        check_selection(catalogue, conditions)
        return engine_out(catalogue, conditions, options), None, (perf_counter() - started) * 1000.0
    except OptionError as error:
        return None, str(error), 0.0
    except Exception as error:  # the app must not die: say what went wrong in place
        return None, f"could not compute the engine-out table ({type(error).__name__}: {error})", 0.0


class EngineOutScreen(BackFromFields, HoldsKeys, Screen):
    PICTURE_NAME = "engine-out"  # in the name of a saved SVG (f2)
    BINDINGS = [
        Binding("escape", "compare", "Compare"),
        Binding("c", "focus_fields", "Fields", tooltip="the drift-down's start level, the terrain and its clearance"),
        Binding("p", "toggle_table", "Profile only", tooltip="the drift-down drawing alone, or with the table"),
        Binding("a", "toggle_ascii", "ASCII", tooltip="plain ASCII drawings for dumb terminals, on or off"),
        Binding("i", "inspect", "Inspect", show=False),
        Binding("e", "export", "Export", show=False),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.texts = {field.key: field.default for field in OEI_FIELDS}
        self.result: EngineOut | None = None
        self.keys: list[str] = []  # row keys, in the result's order
        self.error: str | None = None
        self.compute_ms = 0.0
        self._generation = 0
        self._job = LatestJob(self, "engine-out")

    def compose(self) -> ComposeResult:
        yield CautionBanner(id="caution")
        yield Static(ENGINE_OUT_CAUTION, id="oei-caution")
        with Horizontal(id="oei-fields"):
            for field in OEI_FIELDS:
                with Horizontal(classes="field"):
                    yield Label(field.label, classes="field-label")
                    yield TextEntry(self.texts[field.key], placeholder=field.placeholder, id=f"oei-{field.key}",
                                    classes="oei-field", compact=True, tooltip=field.help)
        yield Static("", id="oei-errors")
        yield Static("", id="oei-summary")
        yield DataTable(id="oei-table", cursor_type="row", zebra_stripes=True, fixed_columns=2)
        yield SketchView(id="oei-sketch")
        yield FittingFooter()

    def on_mount(self) -> None:
        self.app.results_signal.subscribe(self, lambda _: self.recompute())
        self.recompute()
        focus_now(self.query_one(DataTable))

    def on_screen_resume(self) -> None:
        self.sketch.redraw()  # the ASCII toggle may have changed on another drawing screen
        self.recompute()

    @property
    def sketch(self) -> SketchView:
        return self.query_one(SketchView)

    # --- compute --------------------------------------------------------------------

    def recompute(self) -> None:
        app = self.app
        errors = self.query_one("#oei-errors", Static)
        try:
            options = parse_oei_fields(self.texts)
        except OptionError as error:
            errors.update(f"✗ {error} (showing the last table that could be computed)")
            errors.set_class(True, "-shown")
            return
        errors.set_class(False, "-shown")
        if app.catalogue is None or app.conditions is None:
            self.sketch.show(None, "No catalogue loaded: open one on the compare screen (esc, then o).")
            return
        # The drift-down starts from one all-engines maximum altitude: the first climb criterion.
        conditions = replace(app.conditions, climb_fpm=app.conditions.climb_fpm[:1], target_fl_ft=None)
        self._generation += 1
        self._job.request(partial(compute_engine_out, app.catalogue, conditions, options),
                          partial(self._deliver, self._generation, conditions))

    def _deliver(self, generation: int, conditions, outcome) -> None:
        if generation != self._generation or not self.is_attached:
            return
        result, error, elapsed_ms = outcome
        if error is not None:
            errors = self.query_one("#oei-errors", Static)
            errors.update(f"✗ {error}")
            errors.set_class(True, "-shown")
            return
        self.result, self.compute_ms = result, elapsed_ms
        self.conditions = conditions
        self.render_table()

    # --- table and drawing -------------------------------------------------------------

    def render_table(self) -> None:
        result = self.result
        frame = with_row_keys(result.frame)
        self.view_df = frame
        table = self.query_one(DataTable)
        keep = self.cursor_key()
        table.clear(columns=True)
        several = len(self.conditions.weights) > 1 or len(self.conditions.isa_devs_c) > 1
        terrain = "net_clears" in frame.columns
        headers = ["Variant", "Engine"] + (["W t", "ISA"] if several else []) + [
            "Gross FL", "Mach", "Net FL", "Limit at net", "Start FL", "Drift nm", "min"]
        if terrain:
            headers += ["Net clears", "Above obst. ft", "Below at nm"]
        headers.append("Note")
        rows = list(frame.iter_rows(named=True))
        cells = [self._cells(row, several, terrain) for row in rows]
        labels, widths = justify(headers, cells)
        for label, width in zip(labels, widths):
            table.add_column(label, width=width)
        for row, row_cells in zip(rows, cells):
            table.add_row(*row_cells, key=row[ROW_KEY])
        self.keys = [row[ROW_KEY] for row in rows]
        if keep is not None and keep in table.rows:
            table.move_cursor(row=table.get_row_index(keep), animate=False)
        self.update_summary()
        self.show_profile()

    @staticmethod
    def _cells(row: dict, several: bool, terrain: bool) -> list[Cell]:
        def fl(key):
            return Cell(format_flight_level(row[key]), right=True)

        def number(key, fmt):
            return Cell(NONE if row[key] is None else format(row[key], fmt), right=True)

        cells = [Cell(row["variant"]), Cell(row["engine"])]
        if several:
            cells += [Cell(f"{row['weight_kg'] / 1000:.1f}", right=True),
                      Cell(format_isa_dev(row["isa_dev_c"]).removeprefix("ISA") or "0", right=True)]
        cells += [fl("gross_ceiling_ft"), number("mach", ".3f"), fl("net_ceiling_ft"), Cell(row["limit"] or NONE),
                  fl("start_altitude_ft"), number("driftdown_distance_nm", ",.0f"), number("driftdown_time_min", ".0f")]
        if terrain:
            clears = row["net_clears"]
            cells += [Cell(NONE if clears is None else ("✓ yes" if clears else "✗ NO")),
                      number("net_clearance_ft", "+,.0f"), number("net_crossing_nm", ",.0f")]
        cells.append(Cell(row["note"] or ""))
        return cells

    def update_summary(self) -> None:
        c, options = self.conditions, self.result.options
        weights = ", ".join(str(w) for w in c.weights)
        days = ", ".join(format_isa_dev(d) for d in c.isa_devs_c)
        speed = c.mach if isinstance(c.mach, str) else f"M{c.mach:.2f}"
        start = (format_flight_level(options.start_ft) if options.start_ft is not None else
                 f"all-engines max ({speed}, {c.climb_fpm[0]:g} ft/min"
                 + (", the first climb" if len(self.app.conditions.climb_fpm) > 1 else "") + ")")
        parts = [f"{self.result.frame.height} rows, {weights}, {days}", f"level-off {LEVEL_OFF_MARGIN_FT:g} ft above gross",
                 f"start {start}"]
        if options.terrain_ft is not None:
            parts.append(f"obstacle {options.terrain_ft:,.0f} + {options.clearance_ft:,.0f} ft")
        parts.append(f"{self.compute_ms:.0f} ms")
        self.query_one("#oei-summary", Static).update(Text(" · ".join(parts), no_wrap=True, overflow="ellipsis"))

    def cursor_key(self) -> str | None:
        table = self.query_one(DataTable)
        if table.row_count == 0:
            return None
        return table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value

    def show_profile(self) -> None:
        key = self.cursor_key()
        if self.result is None or key is None or key not in self.keys:
            self.sketch.show(None, "No row to draw.")
            return
        profile = self.result.profile(self.keys.index(key))
        app, table = self.app, self.query_one(DataTable)
        # The row's note is in the table; under the drawing only when the drawing is shown alone.
        self.sketch.show(lambda width, height: draw_driftdown(profile, width, height, app.sketch_ascii,
                                                              mono=app.no_color, note=not table.display))

    # --- events and actions ------------------------------------------------------------

    @on(Input.Changed, ".oei-field")
    def field_changed(self, event: Input.Changed) -> None:
        self.texts[event.input.id.removeprefix("oei-")] = event.value
        for field in OEI_FIELDS:
            self.query_one(f"#oei-{field.key}", Input).set_class(False, "-bad")
        self.recompute()

    def field_entered(self, field: TextEntry) -> None:
        focus_now(self.query_one(DataTable))

    @on(DataTable.RowHighlighted)
    def row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        if event.row_key is not None:
            self.show_profile()

    @on(DataTable.RowSelected)
    def row_selected(self) -> None:
        self.action_inspect()

    def action_focus_fields(self) -> None:
        focus_now(self.query_one(f"#oei-{OEI_FIELDS[0].key}", Input))

    def action_toggle_table(self) -> None:
        table = self.query_one(DataTable)
        table.display = not table.display
        if not table.display and isinstance(self.focused, DataTable):
            self.set_focus(None)
        elif table.display:
            focus_now(table)
        self.show_profile()

    def action_toggle_ascii(self) -> None:
        self.app.sketch_ascii = not self.app.sketch_ascii
        self.sketch.redraw()

    def action_inspect(self) -> None:
        key = self.cursor_key()
        if key is not None:
            self.app.inspect_variant(key.split("|")[0])

    def action_export(self) -> None:
        if self.result is not None:
            self.app.export_table(export_frame(self.view_df), "variantcmp-engine-out")
