"""The compare screen: the shared conditions, and one row per variant x engine option."""

from __future__ import annotations

from functools import partial
from time import perf_counter

import polars as pl
from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Grid, Horizontal
from textual.screen import Screen
from textual.widgets import DataTable, Input, Label, ProgressBar, Static

from .form import FIELDS
from .jobs import LatestJob
from .keys import HoldsKeys, focus_now
from .results import Results, export_frame
from .sorting import SortCycle
from .spread_bars import SPREAD_KEYS, Spread, compute_spread, with_spread
from .spread_bars import note as spread_note
from .view import (
    BASE_ROW, BASELINE_MARK, BELOW_EMPTY_MARK, COLUMNS_BY_KEY, IS_BASE, MAX_MARKED, NONE, OVER_MTOW_MARK, ROW_KEY,
    Baseline, Column, default_match, filter_rows, header, justify, mark_sign, row_cells, sort_rows, visible_columns,
    with_baseline,
)
from .widgets import CautionBanner, FittingFooter, TextEntry

# The drawing views share one footer entry, so the compare screen's keys fit in 80 columns.
_DRAW = Binding.Group("Draw")
# How long a computation may run before the progress bar appears, s.
BUSY_DELAY_S = 0.15


class CompareScreen(SortCycle, HoldsKeys, Screen):
    """Main screen. The drawing views read the app's conditions and the rows this screen hands over
    (`app.focus_key`, `app.shown_keys`, `app.marked_keys`)."""

    PICTURE_NAME = "compare"  # in the name of a saved SVG (f2)
    FIRST_SORT = "fl"  # s starts the sort cycle at the maximum flight level

    BINDINGS = [
        Binding("c", "focus_conditions", "Conditions"),
        Binding("slash", "focus_filter", "Filter", show=False),  # the field's label shows the key
        Binding("s", "sort_next", "Sort"),
        Binding("S", "sort_previous", "Sort back", show=False),
        Binding("r", "reverse_sort", "Reverse sort", show=False),
        Binding("b", "baseline", "Baseline", tooltip="compare every row with the selected variant x engine "
                "option, at the same weight and ISA deviation; b on one of its rows unpins it"),
        Binding("B", "baseline_match", "Baseline weight", show=False,
                tooltip="compare with the baseline at the same %MTOW or at the same kg, in turn"),
        Binding("i", "inspect", "Inspect", show=False),  # enter on a row does it too
        Binding("h", "planner", "Planner", tooltip="the heaviest weight and the warmest day for a target level"),
        Binding("f", "cruise", "Cruise", tooltip="cruise levels: optimum and maximum altitude, the level of a "
                "scheme, fuel flow and specific range, with a drawing"),
        Binding("m", "mark", "Mark", tooltip=f"mark or unmark the row for the envelope overlay, up to {MAX_MARKED}"),
        Binding("M", "clear_marks", "Clear marks", show=False, tooltip="unmark every row"),
        Binding("v", "envelope", "Envelope", group=_DRAW,
                tooltip="speed-altitude envelope of the marked rows, else of the row under the cursor"),
        Binding("w", "sweeps", "Sweeps", group=_DRAW,
                tooltip="max altitude against weight, ISA deviation or Mach for the marked rows, else the rows shown"),
        Binding("g", "engine_out", "Engine out", group=_DRAW,
                tooltip="one engine inoperative: gross and net ceilings, the drift-down and its profile, a terrain "
                "check, at these weights and days"),
        Binding("d", "screening", "Screening", tooltip="every engine option against a baseline option over the "
                "weight x ISA grid, a matrix per option (the baseline: the pinned row's engine, b there for the next)"),
        Binding("u", "uncertainty", "Uncertainty", tooltip="P10-P90 bars of each row's maximum altitude under "
                "uncertain data (seeded Monte Carlo), on or off"),
        Binding("e", "export", "Export", show=False),
        Binding("o", "open", "Open", show=False),
        Binding("l", "reload", "Reload", show=False),
        Binding("escape", "focus_table", "Back to table", show=False),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.sort_key: str | None = None
        self.descending = False
        self.baseline: Baseline | None = None
        self.view_df: pl.DataFrame | None = None  # rows as shown: filtered and sorted
        self._busy_timer = None
        self.render_ms = 0.0  # last redraw of the table (sort, filter, baseline), ms
        self.update_ms = 0.0  # last change of conditions to the table on screen, ms
        self.show_spread = False  # P10-P90 bars beside the rows (u)
        self.spread: Spread | None = None  # the last spread computed
        self._spread_job = LatestJob(self, "spread")
        self._spread_pending = False

    # --- layout ------------------------------------------------------------------

    def compose(self) -> ComposeResult:
        yield CautionBanner(id="caution")
        with Grid(id="conditions"):
            for field in FIELDS:
                with Horizontal(classes="field"):
                    yield Label(field.label, classes="field-label")
                    yield TextEntry(
                        self.app.texts[field.key],
                        placeholder=field.placeholder,
                        id=f"field-{field.key}",
                        classes="condition",
                        compact=True,
                        tooltip=field.help,
                    )
        yield Static("", id="field-errors")
        with Horizontal(id="status-row"):
            yield Label("/ Filter", classes="field-label")
            yield TextEntry(placeholder="e.g. v88 or thrust", id="filter", compact=True)
            yield Static("", id="status")
            yield ProgressBar(total=None, show_eta=False, show_percentage=False, id="busy")
        yield Static("", id="baseline-note")
        yield Static("", id="spread-note")
        yield DataTable(id="table", cursor_type="row", zebra_stripes=True, fixed_columns=2)
        yield FittingFooter(compact=True)  # many keys: keep the row short at 80 columns

    def on_mount(self) -> None:
        self.query_one("#conditions").border_title = "Conditions"
        self.app.results_signal.subscribe(self, self.show_results)
        self.app.catalogue_signal.subscribe(self, lambda _: self.refresh_titles())
        self.app.busy_signal.subscribe(self, self.show_busy)
        self.refresh_titles()
        if self.app.results is not None:
            self.show_results(self.app.results)
        focus_now(self.query_one(DataTable))

    # --- what the app tells this screen ------------------------------------------

    def refresh_titles(self) -> None:
        app = self.app
        panel = self.query_one("#conditions")
        if app.catalogue is None:
            panel.border_subtitle = "no catalogue loaded: o to open one"
        elif app.problems:
            panel.border_subtitle = f"{app.catalogue.title} (last good: {app.catalogue_path.name} has problems)"
        else:
            panel.border_subtitle = app.catalogue.title
        if app.catalogue is None:
            self.query_one("#status", Static).update("No catalogue loaded: press o to open one.")

    def show_busy(self, busy: bool) -> None:
        bar = self.query_one("#busy", ProgressBar)
        if self._busy_timer is not None:
            self._busy_timer.stop()
            self._busy_timer = None
        if busy:
            self._busy_timer = self.set_timer(BUSY_DELAY_S, lambda: bar.set_class(True, "-shown"))
        else:
            bar.set_class(False, "-shown")

    def show_results(self, results: Results) -> None:
        errors = self.query_one("#field-errors", Static)
        if results.error:
            errors.update(f"✗ {results.error} (showing the last table that could be computed)")
            errors.set_class(True, "-shown")
            return
        self.show_field_errors(self.app.field_errors)
        self.render_table(fresh=True)
        if self.show_spread:
            self.request_spread()

    def show_field_errors(self, field_errors: dict[str, str]) -> None:
        for field in FIELDS:
            self.query_one(f"#field-{field.key}", Input).set_class(field.key in field_errors, "-bad")
        errors = self.query_one("#field-errors", Static)
        if field_errors:
            lines = [f"✗ {message}" for message in field_errors.values()]
            errors.update("\n".join(lines) + "\n  (the table keeps the last good conditions)")
        errors.set_class(bool(field_errors), "-shown")

    # --- the table ----------------------------------------------------------------

    def _sort_column(self) -> Column | None:
        return COLUMNS_BY_KEY.get(self.sort_key) if self.sort_key else None

    def cursor_key(self) -> str | None:
        table = self.query_one(DataTable)
        if table.row_count == 0:
            return None
        return table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value

    def selected_row(self) -> dict | None:
        """The row under the cursor, as a dict of the shared table's columns."""
        key = self.cursor_key()
        if key is None or self.view_df is None:
            return None
        rows = self.view_df.filter(pl.col(ROW_KEY) == key).to_dicts()
        return rows[0] if rows else None

    def render_table(self, fresh: bool = False) -> None:
        """Fill the table from the latest results; ``fresh`` when they were just computed."""
        started = perf_counter()
        results = self.app.results
        table = self.query_one(DataTable)
        if results is None or results.df is None:
            return
        df = results.df
        filter_text = self.query_one("#filter", Input).value
        baseline = self.baseline
        if baseline is not None and df.filter((pl.col("variant") == baseline.variant)
                                              & (pl.col("engine") == baseline.engine)).height == 0:
            baseline = self.baseline = None  # the catalogue no longer has it
        compared = with_baseline(df, baseline)  # before the filter: a hidden baseline still counts
        if self.show_spread:
            compared = with_spread(compared, self.current_spread(), self.app.sketch_ascii)
        view = sort_rows(filter_rows(compared, filter_text), self._sort_column(), self.descending)
        self.view_df = view
        keys = set(df[ROW_KEY].to_list())
        self.app.marked_keys = [k for k in self.app.marked_keys if k in keys]  # rows gone with the conditions
        marks = {k: i + 1 for i, k in enumerate(self.app.marked_keys)}
        self.app.shown_keys = view[ROW_KEY].to_list()
        columns = visible_columns(compared)
        headers = [header(c, self.sort_key, self.descending, baseline is not None) for c in columns]
        rows = list(view.iter_rows(named=True))
        cells = [row_cells(columns, row, marks.get(row[ROW_KEY])) for row in rows]
        labels, widths = justify(headers, cells)
        keep = self.cursor_key()
        scroll_x = table.scroll_x
        # Rebuild columns too: their widths follow the padded cells.
        table.clear(columns=True)
        for column, label, width in zip(columns, labels, widths):
            table.add_column(label, key=column.key, width=width)
        for row, row_text in zip(rows, cells):
            table.add_row(*row_text, key=row[ROW_KEY])
        if keep is not None and keep in table.rows:
            table.move_cursor(row=table.get_row_index(keep), animate=False)
        table.scroll_x = scroll_x
        self.app.focus_key = self.cursor_key()
        self.render_ms = (perf_counter() - started) * 1000.0
        if fresh:  # from the change (a key in a field, a reload) to this table
            self.update_ms = (perf_counter() - self.app.requested_at) * 1000.0
        self.update_status(results, view)
        self.update_baseline_note(view)
        self.update_spread_note()

    def update_status(self, results: Results, view: pl.DataFrame) -> None:
        parts = [f"{view.height}/{results.df.height} rows"]
        typed = self.query_one("#filter", Input).value.strip()
        if typed and view.height == 0:
            parts.append(f"no row matches “{typed}” (/ to change the filter)")
        column = self._sort_column()
        if column is not None:
            parts.append(f"sorted by {column.header} {'▼' if self.descending else '▲'}")
        if self.baseline is not None:
            parts.append(f"baseline {self.baseline.name}")
        over, light = view["over_mtow"].sum(), view["below_empty_weight"].sum()
        if over:
            parts.append(f"{over} above MTOW {OVER_MTOW_MARK}")
        if light:
            parts.append(f"{light} below empty weight {BELOW_EMPTY_MARK}")
        if self.app.marked_keys:
            parts.append(f"{len(self.app.marked_keys)} marked")
        parts.append(f"updated in {self.update_ms:.0f} ms")
        self.query_one("#status", Static).update(Text(" · ".join(parts), no_wrap=True, overflow="ellipsis"))

    def update_baseline_note(self, view: pl.DataFrame) -> None:
        """The line above the table that says what the Δ columns compare."""
        note = self.query_one("#baseline-note", Static)
        baseline = self.baseline
        note.set_class(baseline is not None, "-shown")
        if baseline is None:
            return
        text = (f"Δ = row − {BASELINE_MARK} {baseline.name} at the same {baseline.match_words}, "
                f"ISA deviation and climb")
        if view.filter(~pl.col(IS_BASE) & pl.col(BASE_ROW).is_null()).height:
            text += f" ({NONE}: it has no such row)"
        other = "kg" if baseline.match == "pct" else "%MTOW"
        text += f" · B: at the same {other}"
        note.update(Text(text, no_wrap=True, overflow="ellipsis"))

    # --- P10-P90 bars ----------------------------------------------------------------

    def current_spread(self) -> Spread | None:
        """The spread of the table on show, or None while it is being computed."""
        spread, results = self.spread, self.app.results
        if spread is None or results is None or (spread.catalogue, spread.conditions) != (results.catalogue,
                                                                                          results.conditions):
            return None
        return spread

    def request_spread(self) -> None:
        results = self.app.results
        if results is None or results.df is None or self.current_spread() is not None:
            return
        self._spread_pending = True
        self._spread_job.request(partial(compute_spread, results.catalogue, results.conditions, results.df.height),
                                 self._spread_delivered)

    def _spread_delivered(self, spread: Spread) -> None:
        self.spread, self._spread_pending = spread, False
        if self.is_attached and self.show_spread:
            self.render_table()

    def update_spread_note(self) -> None:
        line = self.query_one("#spread-note", Static)
        line.set_class(self.show_spread, "-shown")
        if self.show_spread:
            line.update(Text(spread_note(self.current_spread(), self._spread_pending, self.app.sketch_ascii),
                             no_wrap=True, overflow="ellipsis"))

    # --- events -------------------------------------------------------------------

    @on(Input.Changed, ".condition")
    def condition_changed(self, event: Input.Changed) -> None:
        key = event.input.id.removeprefix("field-")
        self.show_field_errors(self.app.set_condition_text(key, event.value))

    def field_entered(self, field: TextEntry) -> None:
        """Enter in a condition field or the filter: back to the table (before the next key)."""
        focus_now(self.query_one(DataTable))

    @on(Input.Changed, "#filter")
    def filter_changed(self) -> None:
        self.render_table()

    @on(DataTable.HeaderSelected)
    def header_selected(self, event: DataTable.HeaderSelected) -> None:
        self.sort_by(event.column_key.value)

    @on(DataTable.RowSelected)
    def row_selected(self) -> None:
        self.action_inspect()

    @on(DataTable.RowHighlighted)
    def row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        if event.row_key is not None:  # None: the table is empty (a filter matches nothing)
            self.app.focus_key = event.row_key.value

    def on_screen_resume(self) -> None:
        # The envelope view steps through rows: come back on the row it showed last.
        table = self.query_one(DataTable)
        key = self.app.focus_key
        if key is not None and key in table.rows and key != self.cursor_key():
            table.move_cursor(row=table.get_row_index(key), animate=False)

    # --- actions ------------------------------------------------------------------

    def action_focus_conditions(self) -> None:
        focus_now(self.query_one(f"#field-{FIELDS[0].key}", Input))

    def action_focus_filter(self) -> None:
        focus_now(self.query_one("#filter", Input))

    def action_focus_table(self) -> None:
        focus_now(self.query_one(DataTable))

    def sort_columns(self) -> list[Column]:
        results = self.app.results
        if results is None or results.df is None:
            return []
        shown = self.view_df if self.view_df is not None else results.df  # with the P10-P90 columns when on
        return visible_columns(shown)

    def sort_column(self, key: str) -> Column:
        return COLUMNS_BY_KEY[key]

    def render_sorted(self) -> None:
        self.render_table()

    def action_baseline(self) -> None:
        row = self.selected_row()
        if row is None:
            return
        if self.baseline is not None and (row["variant"], row["engine"]) == (self.baseline.variant,
                                                                          self.baseline.engine):
            self.baseline = None
        else:
            self.baseline = Baseline(row["variant"], row["engine"], default_match(self.app.conditions.weights
                                                                                  if self.app.conditions else ()))
        self.render_table()

    def action_baseline_match(self) -> None:
        if self.baseline is None:
            self.notify("Pin a baseline first: b on a row.", title="Baseline")
            return
        self.baseline = self.baseline.switched()
        self.render_table()

    def action_mark(self) -> None:
        key = self.cursor_key()
        if key is None:
            return
        marked = self.app.marked_keys
        if key in marked:
            marked.remove(key)
        elif len(marked) >= MAX_MARKED:
            self.notify(f"At most {MAX_MARKED} rows can be overlaid: unmark one (m on a {mark_sign(1)} row) "
                        "or clear them all (M).", title="Mark", severity="warning")
            return
        else:
            marked.append(key)
        self.render_table()

    def action_clear_marks(self) -> None:
        if self.app.marked_keys:
            self.app.marked_keys.clear()
            self.render_table()

    def action_envelope(self) -> None:
        if self.cursor_key() is None and not self.app.marked_keys:
            self.notify("No row to draw.", title="Envelope")
            return
        self.app.focus_key = self.cursor_key()
        self.app.switch_mode("envelope")

    def action_sweeps(self) -> None:
        if not self.app.shown_keys and not self.app.marked_keys:
            self.notify("No rows to sweep.", title="Sweeps")
            return
        self.app.switch_mode("sweep")

    def action_inspect(self) -> None:
        row = self.selected_row()
        if row is not None:
            self.app.inspect_variant(row["variant"])

    def action_planner(self) -> None:
        self.app.switch_mode("planner")

    def action_cruise(self) -> None:
        self.app.switch_mode("cruise")

    def action_engine_out(self) -> None:
        self.app.switch_mode("engineout")

    def action_uncertainty(self) -> None:
        self.show_spread = not self.show_spread
        if self.show_spread:
            self.request_spread()
        elif self.sort_key in SPREAD_KEYS:
            self.sort_key = None  # its column is gone: back to catalogue order
        self.render_table()

    def action_screening(self) -> None:
        self.app.screening_baseline = self.baseline.engine if self.baseline is not None else None
        self.app.switch_mode("screening")

    def action_export(self) -> None:
        if self.view_df is not None:
            self.app.export_table(export_frame(self.view_df), "variantcmp-compare")

    def action_open(self) -> None:
        self.app.ask_open()

    def action_reload(self) -> None:
        self.app.reload_catalogue()
