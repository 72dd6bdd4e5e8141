"""The planner's question screen: for a target level, the heaviest weight on the day and the warmest
day at the weight, per variant x engine, with the limits, sortable (it grew out of the hot-day look-up)."""

from __future__ import annotations

from dataclasses import replace
from functools import partial

import polars as pl
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.screen import Screen
from textual.widgets import DataTable, Input, Label, Static

from variantcmp.units import OptionError, format_flight_level

from .form import FIELDS_BY_KEY, parse_field
from .jobs import LatestJob
from .keys import HoldsKeys, focus_now
from .navigation import BackFromFields
from .planner_view import DEFAULT_SORT, PLANNER_BY_KEY, planner_cell, visible_planner_columns
from .results import Results, compute_planner, export_frame
from .sorting import SortCycle
from .view import ROW_KEY, header, justify, sort_rows
from .widgets import CautionBanner, FittingFooter, TextEntry

LOOKUP_FIELDS = ("weight", "isa", "target")


class PlannerScreen(SortCycle, BackFromFields, HoldsKeys, Screen):
    PICTURE_NAME = "planner"  # in the name of a saved SVG (f2)
    FIRST_SORT = "makes"
    BINDINGS = [
        Binding("escape", "compare", "Compare"),
        Binding("c", "focus_fields", "Fields"),
        Binding("s", "sort_next", "Sort"),
        Binding("S", "sort_previous", "Sort back", show=False),
        Binding("r", "reverse_sort", "Reverse sort", show=False),
        Binding("i", "inspect", "Inspect"),
        Binding("e", "export", "Export"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.results: Results | None = None
        self.view_df: pl.DataFrame | None = None
        self.sort_key: str | None = DEFAULT_SORT
        self.descending = True
        self._generation = 0
        self._job = LatestJob(self, "planner")

    def compose(self) -> ComposeResult:
        texts = self.app.texts
        initial = {
            "weight": texts["weight"],
            "isa": texts["isa"] if texts["isa"].strip() not in ("", "0") else "ISA+15",
            "target": texts["target"],
        }
        yield CautionBanner(id="caution")
        with Horizontal(id="lookup-fields") as box:
            box.border_title = "Planner: heaviest weight and warmest day for a level"
            for key in LOOKUP_FIELDS:
                field = FIELDS_BY_KEY[key]
                with Horizontal(classes="field"):
                    yield Label(field.label, classes="field-label")
                    yield TextEntry(initial[key], placeholder=field.placeholder, id=f"lookup-{key}",
                                    classes="lookup", compact=True, tooltip=field.help)
        yield Static("", id="lookup-errors")
        yield Static("", id="lookup-summary")
        yield DataTable(id="lookup-table", cursor_type="row", zebra_stripes=True, fixed_columns=2)
        yield FittingFooter()

    def on_mount(self) -> None:
        self.app.results_signal.subscribe(self, lambda _: self.recompute())
        self.recompute()
        if not self.query_one("#lookup-target", Input).value:
            focus_now(self.query_one("#lookup-target", Input))
        else:
            focus_now(self.query_one(DataTable))

    def on_screen_resume(self) -> None:
        self.recompute()

    # --- compute ----------------------------------------------------------------

    def _read_fields(self) -> tuple[dict, dict[str, str]]:
        values, errors = {}, {}
        for key in LOOKUP_FIELDS:
            text = self.query_one(f"#lookup-{key}", Input).value
            try:
                values[key] = parse_field(key, text)
            except OptionError as error:
                errors[key] = str(error)
        return values, errors

    def recompute(self) -> None:
        values, errors = self._read_fields()
        for key in LOOKUP_FIELDS:
            self.query_one(f"#lookup-{key}", Input).set_class(key in errors, "-bad")
        box = self.query_one("#lookup-errors", Static)
        box.update("\n".join(f"✗ {message}" for message in errors.values()))
        box.set_class(bool(errors), "-shown")
        app = self.app
        if errors or app.catalogue is None or app.conditions is None:
            return
        conditions = replace(app.conditions, weights=values["weight"], isa_devs_c=values["isa"],
                             target_fl_ft=values["target"])
        self._generation += 1
        if conditions.target_fl_ft is None:
            self.results = None
            self.render_table(conditions)
            return
        self._job.request(partial(compute_planner, app.catalogue, conditions), partial(self._deliver, self._generation))

    def _deliver(self, generation: int, results: Results) -> None:
        if generation != self._generation or not self.is_attached:
            return
        box = self.query_one("#lookup-errors", Static)
        if results.df is None:
            box.update(f"✗ {results.error}")
            box.set_class(True, "-shown")
            return
        self.results = results
        self.render_table(results.conditions)

    # --- table ---------------------------------------------------------------------

    def render_table(self, conditions) -> None:
        table = self.query_one(DataTable)
        keep = table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value if table.row_count else None
        table.clear(columns=True)
        summary = self.query_one("#lookup-summary", Static)
        weights = ", ".join(str(w) for w in conditions.weights)
        devs = ", ".join(f"ISA{d:+g}" if d else "ISA" for d in conditions.isa_devs_c)
        speed = conditions.mach if isinstance(conditions.mach, str) else f"M{conditions.mach:.2f}"
        climbs = ", ".join(f"{x:g}" for x in conditions.climb_fpm)
        follows = f"speed {speed}, climb {climbs} ft/min, buffet {conditions.g_margin:g} g (compare screen)"
        if self.results is None or conditions.target_fl_ft is None:
            self.view_df = None
            summary.update(f"Type a target flight level: the heaviest weight on the day and the warmest day at the "
                           f"weight for it. {weights} at {devs} · {follows}")
            return
        columns = visible_planner_columns(conditions)
        sort = PLANNER_BY_KEY.get(self.sort_key) if self.sort_key else None
        df = sort_rows(self.results.df, sort, self.descending)
        self.view_df = df
        rows = list(df.iter_rows(named=True))
        cells = [[planner_cell(c, row) for c in columns] for row in rows]
        labels, widths = justify([header(c, self.sort_key, self.descending, False) for c in columns], cells)
        for column, label, width in zip(columns, labels, widths):
            table.add_column(label, key=column.key, width=width)
        for row, row_text in zip(rows, cells):
            table.add_row(*row_text, key=row[ROW_KEY])
        if keep is not None and keep in table.rows:
            table.move_cursor(row=table.get_row_index(keep), animate=False)
        level = format_flight_level(conditions.target_fl_ft)
        made = int(df["reaches_target"].fill_null(False).sum())
        summary.update(f"{made} of {df.height} make {level} at {weights}, {devs} · heaviest weight on the row's "
                       f"day, warmest day at its weight · {follows}")

    # --- events and actions ---------------------------------------------------------

    @on(Input.Changed, ".lookup")
    def field_changed(self) -> None:
        self.recompute()

    def field_entered(self, field: TextEntry) -> None:
        focus_now(self.query_one(DataTable))

    @on(DataTable.RowSelected)
    def row_selected(self) -> None:
        self.action_inspect()

    @on(DataTable.HeaderSelected)
    def header_selected(self, event: DataTable.HeaderSelected) -> None:
        self.sort_by(event.column_key.value)

    def _rerender(self) -> None:
        if self.results is not None:
            self.render_table(self.results.conditions)

    def sort_columns(self) -> list:
        return [] if self.results is None else visible_planner_columns(self.results.conditions)

    def sort_column(self, key: str):
        return PLANNER_BY_KEY[key]

    def render_sorted(self) -> None:
        self._rerender()

    def action_focus_fields(self) -> None:
        focus_now(self.query_one("#lookup-weight", Input))

    def action_inspect(self) -> None:
        table = self.query_one(DataTable)
        if table.row_count and self.results is not None:
            key = table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value
            self.app.inspect_variant(key.split("|")[0])

    def action_export(self) -> None:
        if self.view_df is not None:
            self.app.export_table(export_frame(self.view_df), "variantcmp-planner")
