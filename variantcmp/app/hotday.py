"""Quick hot-day look-up: at this weight and deviation, who makes the target flight level?"""

from __future__ import annotations

from dataclasses import replace
from functools import partial

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.screen import Screen
from textual.widgets import DataTable, Input, Label, Static

from variantcmp.units import OptionError, format_flight_level

from .jobs import LatestJob
from .keys import HoldsKeys, focus_now
from .widgets import CautionBanner, FittingFooter, TextEntry
from .form import FIELDS_BY_KEY, parse_field
from .results import Results, compute, export_frame
from .view import COLUMNS_BY_KEY, MAKES_IT, NONE, ROW_KEY, SHORT_OF_IT, Cell, cell, justify

LOOKUP_FIELDS = ("weight", "isa", "target")


class HotDayScreen(HoldsKeys, Screen):
    PICTURE_NAME = "hot-day"  # in the name of a saved SVG (f2)
    BINDINGS = [
        Binding("escape", "compare", "Compare"),
        Binding("c", "focus_fields", "Fields"),
        Binding("i", "inspect", "Inspect"),
        Binding("e", "export", "Export"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.results: Results | None = None
        self._generation = 0
        self._job = LatestJob(self, "hotday")

    def compose(self) -> ComposeResult:
        texts = self.app.texts
        initial = {
            "weight": texts["weight"],
            "isa": texts["isa"] if texts["isa"].strip() not in ("", "0") else "ISA+15",
            "target": texts["target"],
        }
        yield CautionBanner(id="caution")
        with Horizontal(id="lookup-fields") as box:
            box.border_title = "Hot-day check"
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
        self._job.request(partial(compute, app.catalogue, conditions), partial(self._deliver, self._generation))

    def _deliver(self, generation: int, results: Results) -> None:
        if generation != self._generation or not self.is_attached:
            return
        box = self.query_one("#lookup-errors", Static)
        if results.df is None:
            box.update(f"✗ {results.error}")
            box.set_class(True, "-shown")
            return
        self.results = results
        self.render_table()

    # --- table ---------------------------------------------------------------------

    def render_table(self) -> None:
        results = self.results
        df = results.df
        target = results.conditions.target_fl_ft
        if target is not None:
            df = df.sort("margin_ft", descending=True, nulls_last=True, maintain_order=True)
        self.view_df = df
        table = self.query_one(DataTable)
        keep = None
        if table.row_count:
            keep = table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value
        table.clear(columns=True)
        several = len(results.conditions.weights) > 1 or len(results.conditions.isa_devs_c) > 1
        level = format_flight_level(target) if target is not None else "target"
        extra = [COLUMNS_BY_KEY["weight"], COLUMNS_BY_KEY["isa"]] if several else []
        headers = (["Variant", "Engine", f"Makes {level}", "By ft", "Max FL", "Limit"]
                   + [c.header for c in extra] + ["Mach", "Note"])
        rows = list(df.iter_rows(named=True))
        cells = []
        made = 0
        for row in rows:
            if target is None:
                verdict, by = Cell("set a target"), Cell(NONE, right=True)
            else:
                made += bool(row.get("reaches_target"))
                mark = f"{MAKES_IT} yes" if row.get("reaches_target") else f"{SHORT_OF_IT} no"
                verdict = Cell(mark if row.get("margin_ft") is not None else f"{SHORT_OF_IT} no altitude")
                by = cell(COLUMNS_BY_KEY["margin"], row)
                by = Cell(by.plain.rstrip(f" {MAKES_IT}{SHORT_OF_IT}"), right=True)
            cells.append([
                Cell(row["variant"]), Cell(row["engine"]), verdict, by,
                cell(COLUMNS_BY_KEY["fl"], row), cell(COLUMNS_BY_KEY["limit"], row),
                *[cell(c, row) for c in extra],
                cell(COLUMNS_BY_KEY["mach"], row), Cell(row.get("note") or ""),
            ])
        labels, widths = justify(headers, cells)
        for label, width in zip(labels, widths):
            table.add_column(label, width=width)
        for row, row_text in zip(rows, cells):
            table.add_row(*row_text, key=row[ROW_KEY])
        if keep is not None and keep in table.rows:
            table.move_cursor(row=table.get_row_index(keep), animate=False)
        summary = self.query_one("#lookup-summary", Static)
        c = results.conditions
        weights = ", ".join(str(w) for w in c.weights)
        devs = ", ".join(f"ISA{d:+g}" if d else "ISA" for d in c.isa_devs_c)
        speed = c.mach if isinstance(c.mach, str) else f"M{c.mach:.2f}"
        climbs = ", ".join(f"{x:g}" for x in c.climb_fpm)
        follows = f"speed {speed}, climb {climbs} ft/min, buffet {c.g_margin:g} g from the compare screen"
        if target is None:
            summary.update(f"Type a target flight level. {weights} at {devs}; {follows}.")
        else:
            summary.update(f"{made} of {df.height} make {level} at {weights}, {devs}; {follows}.")

    # --- events and actions ---------------------------------------------------------

    @on(Input.Changed, ".lookup")
    def field_changed(self) -> None:
        self.recompute()

    def field_entered(self, field: TextEntry) -> None:
        focus_now(self.query_one(DataTable))

    @on(DataTable.RowSelected)
    def row_selected(self) -> None:
        self.action_inspect()

    def action_compare(self) -> None:
        if isinstance(self.focused, Input):
            focus_now(self.query_one(DataTable))
        else:
            self.app.switch_mode("compare")

    def action_focus_fields(self) -> None:
        focus_now(self.query_one("#lookup-weight", Input))

    def action_inspect(self) -> None:
        table = self.query_one(DataTable)
        if table.row_count and self.results is not None:
            key = table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value
            self.app.inspect_variant(key.split("|")[0])

    def action_export(self) -> None:
        if self.results is not None and self.results.df is not None:
            self.app.export_table(export_frame(self.view_df), "variantcmp-hotday")
