"""The envelope view: the speed-altitude envelope of the compare screen's row, or the marked rows
overlaid (up to three), at the shared conditions."""

from __future__ import annotations

from functools import partial

from textual.binding import Binding

from variantcmp.envelope import envelopes_for_rows
from variantcmp.sketch import SPEED_AXES, draw_envelope

from .sketch_view import NO_TABLE, DrawingScreen, Request
from .view import ROW_KEY, mark_sign

SPEEDS = tuple(SPEED_AXES)  # mach, tas, cas
_STEP = Binding.Group("Row")


def speed_label(speed: str) -> str:
    return SPEED_AXES[speed][1]


class EnvelopeScreen(DrawingScreen):
    PICTURE_NAME = "envelope"  # in the name of a saved SVG (f2)
    BINDINGS = [
        *DrawingScreen.BINDINGS,
        Binding("x", "speed_axis", "Speed", tooltip="speed axis: Mach, TAS kt, CAS kt in turn"),
        Binding("n", "step(1)", "Next row", group=_STEP, tooltip="of the compare screen"),
        Binding("p", "step(-1)", "Previous row", group=_STEP, tooltip="of the compare screen"),
        Binding("w", "sweeps", "Sweeps"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.speed = "mach"
        self.rows: list[dict] = []  # the rows drawn (or being computed)

    # --- what to draw -------------------------------------------------------------------

    def wanted_rows(self) -> tuple[list[dict], bool]:
        """The marked rows (in mark order), else the compare screen's current row; and whether marked."""
        return self.chosen_rows([self.app.focus_key or next(iter(self.app.shown_keys), None)])

    def request(self) -> Request | str:
        results = self.table_results()
        if results is None:
            return NO_TABLE
        rows, marked = self.wanted_rows()
        if not rows:
            return "No row to draw: pick a row on the compare screen (esc) and press v, or mark rows with m."
        self.rows = rows
        conditions = results.conditions
        key = ("envelope", id(results.catalogue), conditions,
               tuple((r["variant"], r["engine"], r["weight_kg"], r["isa_dev_c"], r["climb_fpm"]) for r in rows))
        names = ", ".join((f"{mark_sign(i + 1)} " if marked else "") + f"{r['variant']}/{r['engine']}"
                          for i, r in enumerate(rows))
        what = f"the envelope{'s' if len(rows) > 1 else ''} of {names}"
        job = partial(envelopes_for_rows, results.catalogue, rows, conditions.g_margin, conditions.mach)
        return Request(key, job, what)

    def drawer(self, envelope):
        return lambda width, height: draw_envelope(envelope, width, height, self.speed, self.app.sketch_ascii,
                                                   mono=self.app.no_color)

    def describe(self, envelope) -> str:
        app = self.app
        cases = envelope.summary.to_dicts()
        if app.marked_keys:
            head = ("Overlay of " if len(cases) > 1 else "Envelope of ") + ", ".join(f"{mark_sign(i + 1)} {c['variant']}/{c['engine']}"
                                             for i, c in enumerate(cases))
        else:
            case = cases[0]
            head = f"Envelope of {case['variant']}/{case['engine']}"
            key = self.rows[0][ROW_KEY] if self.rows else None
            if key in app.shown_keys:
                head += f" (row {app.shown_keys.index(key) + 1} of {len(app.shown_keys)})"
        parts = [head, f"speed axis {speed_label(self.speed)}"]
        if app.sketch_ascii:
            parts.append("ASCII")
        parts.append(f"solver {self.compute_ms:.0f} ms")
        return " · ".join(parts)

    # --- actions -------------------------------------------------------------------------

    def action_speed_axis(self) -> None:
        self.speed = SPEEDS[(SPEEDS.index(self.speed) + 1) % len(SPEEDS)]
        if self.result is not None:
            self.sketch.redraw()  # every speed is in the computed table: no new computation
            self.set_status(self.describe(self.result))

    def action_step(self, step: int) -> None:
        app = self.app
        if app.marked_keys:
            self.notify("Showing the marked rows: unmark them on the compare screen (M clears) to step "
                        "through rows one by one.", title="Envelope")
            return
        keys = app.shown_keys
        if not keys:
            return
        current = self.rows[0][ROW_KEY] if self.rows else app.focus_key
        index = keys.index(current) if current in keys else -step
        app.focus_key = keys[(index + step) % len(keys)]
        self.update_view()

    def action_sweeps(self) -> None:
        self.app.switch_mode("sweep")
