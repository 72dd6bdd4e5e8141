"""``variantcmp check``: validate a catalogue and summarise it with derived figures."""

from __future__ import annotations

import math
import textwrap

from variantcmp.units import format_altitude_ft, format_flight_level

from variantcmp.table import FIGURE_LABELS, fleet_figures

from . import options, output
from .output import Column, TextTable


def add(subparsers) -> None:
    p = options.add_command(
        subparsers, "check",
        help="validate a catalogue and summarise its engines and variants",
        description="Validate a TOML fleet catalogue: every problem is listed as file: key path: what is "
                    "expected. A valid catalogue is summarised with derived figures.")
    options.add_catalogue_argument(p)
    p.set_defaults(run=run)


def run(args) -> int:
    from variantcmp.catalogue import summarise

    catalogue = options.load(args.catalogue, warn=False)  # the summary lists the warnings
    out = output.console()
    label_width = max(len(label) for label, _ in summarise(catalogue))
    lines = []
    text_width = max(out.width - label_width - 2, 30)
    for label, text in summarise(catalogue):
        wrapped = textwrap.wrap(text, text_width) or [""]
        lines.append(f"{label.ljust(label_width)}  {wrapped[0]}")
        lines += [" " * (label_width + 2) + more for more in wrapped[1:]]
    _print_lines(out, lines, bold_prefix=label_width)
    figures = fleet_figures(catalogue)
    output.print_table(_figures_table(catalogue, figures), None, [], DROP_ORDER, more="widen the window to see them")
    status = f"OK: {catalogue.path}: {len(catalogue.engines)} engines, {len(catalogue.variants)} variants, no problems found."
    if out.is_terminal:
        out.print(f"[bold green]OK[/]{status[2:]}", highlight=False, soft_wrap=True)
    else:
        # A path longer than the width is cut at it (as the summary's file row is): CI installs
        # the package under a temporary folder whose path alone is 101 characters.
        print(textwrap.fill(status, out.width, break_on_hyphens=False))
    output.print_caution(stderr=False)
    return options.EXIT_OK


#: Figures hidden first where the terminal is too narrow (the polar's details before the ceiling).
DROP_ORDER = ("absolute_ceiling_propeller_efficiency", "cl_ld_max", "induced_drag_k", "absolute_ceiling_mach",
              "ld_max", "wing_loading_kg_m2")


def _print_lines(out, lines: list[str], bold_prefix: int) -> None:
    if not out.is_terminal:
        print("\n".join(lines))
        return
    from rich.text import Text

    for line in lines:
        text = Text(line, no_wrap=True)
        text.stylize("bold", 0, bold_prefix)
        out.print(text, soft_wrap=True)


def _figures_table(catalogue, figures: dict[str, dict]) -> TextTable:
    """One row per variant x engine option: the variant's own figures on its first row, the
    engine-keyed ones on every row."""
    scalar_keys = list(dict.fromkeys(k for f in figures.values() for k, v in f.items() if not isinstance(v, dict)))
    order = list(FIGURE_LABELS)  # thrust- and power-to-weight side by side, whichever variant came first
    engine_keys = sorted(dict.fromkeys(k for f in figures.values() for k, v in f.items() if isinstance(v, dict)),
                         key=lambda k: order.index(k) if k in order else len(order))
    columns = [Column("variant", "Variant", "left")]
    columns += [Column(k, _header(k)) for k in scalar_keys]
    columns.append(Column("engine", "Engine", "left"))
    columns += [Column(k, _header(k)) for k in engine_keys]
    cells: dict[str, list[str]] = {c.key: [] for c in columns}
    ends = []
    for vid, fig in figures.items():
        engines = catalogue.variants[vid].engine_options
        for j, eid in enumerate(engines):
            cells["variant"].append(vid if j == 0 else "")
            for k in scalar_keys:
                cells[k].append(_figure_text(k, fig.get(k)) if j == 0 else "")
            cells["engine"].append(eid)
            for k in engine_keys:
                cells[k].append(_figure_text(k, (fig.get(k) or {}).get(eid)))
            ends.append(j + 1 == len(engines))
    return TextTable(columns, cells, [None] * len(ends), ends)


def _header(key: str) -> str:
    return FIGURE_LABELS[key][2] if key in FIGURE_LABELS else key


def _figure_text(key: str, value) -> str:
    if value is None or isinstance(value, bool):
        return "—" if value is None else str(value)
    if isinstance(value, (int, float)):
        if not math.isfinite(value):
            return "—"
        if key.endswith("_ft"):
            return f"{format_altitude_ft(value)} ({format_flight_level(value)})"
        if key.endswith("_mach"):
            return f"M{value:.3f}"
        return f"{value:,.0f}" if abs(value) >= 1000 else f"{value:.4g}"
    return str(value)
