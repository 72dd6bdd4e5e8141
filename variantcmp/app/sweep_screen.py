"""The sweep views: maximum altitude against weight, ISA deviation or Mach, one curve per
variant x engine of the compare screen (its marked rows, else the rows it shows), the binding
limit written along each curve."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from functools import partial

import polars as pl
from textual.binding import Binding

from variantcmp.envelope import Sweep, sweep
from variantcmp.sketch import MAX_SWEEP_SERIES, draw_sweep

from .sketch_view import NO_TABLE, DrawingScreen, Request

OVER_NAMES = {"weight": "weight", "isa": "ISA deviation", "mach": "Mach"}
_SWEEP_OVER = Binding.Group("Sweep over")


@dataclass(frozen=True)
class ShownSweep:
    """A sweep narrowed to the chosen variant x engine pairs, in the compare screen's order."""

    sweep: Sweep
    hidden: tuple[str, ...]  # series left out: more than the drawing can tell apart
    from_marks: bool


def narrowed_sweep(catalogue, conditions, over: str, pairs: tuple[tuple[str, str], ...], from_marks: bool):
    """Sweep only the variants and engines of ``pairs``, keep exactly those pairs, in their order,
    and at most as many curves as the drawing has line styles."""
    narrowed = dataclasses.replace(conditions, variants=tuple(dict.fromkeys(v for v, _ in pairs)),
                                   engines=tuple(dict.fromkeys(e for _, e in pairs)))
    result = sweep(catalogue, narrowed, over)
    order = {f"{v}|{e}": i for i, (v, e) in enumerate(pairs)}
    pair = pl.concat_str([pl.col("variant"), pl.col("engine")], separator="|")
    frame = (result.frame.filter(pair.is_in(list(order)))
             .with_columns(_order=pair.replace_strict(order, return_dtype=pl.Int64))
             .sort("_order", maintain_order=True).drop("_order"))
    series = list(dict.fromkeys(frame["series"].to_list()))
    kept, hidden = series[:MAX_SWEEP_SERIES], tuple(series[MAX_SWEEP_SERIES:])
    if hidden:
        frame = frame.filter(pl.col("series").is_in(kept))
    return ShownSweep(dataclasses.replace(result, frame=frame), hidden, from_marks)


class SweepScreen(DrawingScreen):
    PICTURE_NAME = "sweep"  # in the name of a saved SVG (f2)
    BINDINGS = [
        *DrawingScreen.BINDINGS,
        Binding("w", "over('weight')", "Weight", group=_SWEEP_OVER),
        Binding("d", "over('isa')", "ISA deviation", group=_SWEEP_OVER),
        Binding("m", "over('mach')", "Mach", group=_SWEEP_OVER),
        Binding("v", "envelope", "Envelope"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.over = "weight"

    def pairs(self) -> tuple[tuple[tuple[str, str], ...], bool]:
        """Variant x engine pairs to sweep: of the marked rows, else of the rows the compare screen shows."""
        rows, from_marks = self.chosen_rows(list(self.app.shown_keys))
        return tuple(dict.fromkeys((row["variant"], row["engine"]) for row in rows)), from_marks

    def request(self) -> Request | str:
        results = self.table_results()
        if results is None:
            return NO_TABLE
        pairs, from_marks = self.pairs()
        if not pairs:
            return "No rows to sweep: the compare screen's filter hides every row (esc, then /)."
        key = ("sweep", id(results.catalogue), results.conditions, self.over, pairs, from_marks)
        job = partial(narrowed_sweep, results.catalogue, results.conditions, self.over, pairs, from_marks)
        return Request(key, job, f"the sweep over {OVER_NAMES[self.over]}")

    def drawer(self, shown: ShownSweep):
        return lambda width, height: draw_sweep(shown.sweep, width, height, self.app.sketch_ascii, mono=self.app.no_color)

    def describe(self, shown: ShownSweep) -> str:
        curves = shown.sweep.frame["series"].n_unique()
        source = "marked rows" if shown.from_marks else "rows shown on the compare screen"
        parts = [f"Sweep over {OVER_NAMES[shown.sweep.over]}: {curves} curves, the {source}"]
        if shown.hidden:
            parts.append(f"{len(shown.hidden)} more not drawn: mark rows (m) or filter (/) on the compare screen")
        if self.app.sketch_ascii:
            parts.append("ASCII")
        parts.append(f"solver {self.compute_ms:.0f} ms")
        return " · ".join(parts)

    def action_over(self, over: str) -> None:
        self.over = over
        self.update_view()

    def action_envelope(self) -> None:
        self.app.switch_mode("envelope")
