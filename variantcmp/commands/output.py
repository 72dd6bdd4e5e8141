"""What the commands write: the console, the caution line, CSV/JSON exports at a stated precision,
and readable tables.

Readable tables are laid out here as text in one pass over the columns (each cell formatted once,
widths from the strings), then styled with Rich only where stdout is a terminal: a fleet grid of
thousands of rows prints in about the time its CSV takes. Piped or redirected output is plain
text, as wide as ``COLUMNS`` says (else :data:`PIPE_WIDTH`), with no trailing spaces.
"""

from __future__ import annotations

import math
import os
import sys
import textwrap
from dataclasses import dataclass

from variantcmp.caution import CAUTION
from variantcmp.export import for_export

PIPE_WIDTH = 160  # piped or redirected tables without COLUMNS: wide enough for every ceilings column
NOTE_MIN, NOTE_MAX = 16, 48  # the note column wraps between these widths
GAP = 2  # spaces between columns


def columns_env() -> int | None:
    """``COLUMNS`` as a width, if set to a sensible number."""
    try:
        width = int(os.environ.get("COLUMNS", ""))
    except ValueError:
        return None
    return width if width >= 20 else None


def console(stderr: bool = False):
    """A Rich console on stdout (or stderr) that never squeezes piped tables into 80 columns."""
    from rich.console import Console

    stream = sys.stderr if stderr else sys.stdout
    c = Console(file=stream, highlight=False)
    if not c.is_terminal:
        c = Console(file=stream, highlight=False, width=columns_env() or PIPE_WIDTH)
    return c


def is_terminal() -> bool:
    return console().is_terminal


def print_caution(stderr: bool) -> None:
    if stderr:
        print(CAUTION, file=sys.stderr)
    elif is_terminal():
        console().print(f"[bold yellow]{CAUTION}[/]")
    else:
        print(CAUTION)


# --- exports ----------------------------------------------------------------------------

def write_data(frame, fmt: str) -> None:
    """CSV or JSON of a result table on stdout, the caution on stderr."""
    frame = for_export(frame)
    sys.stdout.write(frame.write_csv() if fmt == "csv" else frame.write_json() + "\n")
    print_caution(stderr=True)


# --- readable tables --------------------------------------------------------------------

@dataclass(frozen=True)
class Column:
    """A table column: its cell key, header (a "\\n" gives a second header line, e.g. the unit),
    alignment, whether it is bold, and whether it wraps (the note)."""

    key: str
    header: str
    justify: str = "right"
    bold: bool = False
    wraps: bool = False


@dataclass
class TextTable:
    """Cells as text, one list per column key, and per row its style and whether a section ends
    after it (a blank line between variants)."""

    columns: list[Column]
    cells: dict[str, list[str]]
    row_styles: list[str | None]
    section_ends: list[bool]

    def width(self, columns: list[Column] | None = None) -> int:
        """Width with every number whole and a wrapping column at its narrowest."""
        cols = self.columns if columns is None else columns
        return sum(self._col_width(c) for c in cols) + GAP * max(len(cols) - 1, 0)

    def _col_width(self, col: Column) -> int:
        if col.wraps:
            longest = max((len(t) for t in self.cells[col.key]), default=0)
            return max(min(longest, NOTE_MIN), max(len(h) for h in col.header.split("\n")))
        head = max(len(h) for h in col.header.split("\n"))
        return max([head] + [len(t) for t in self.cells[col.key]])

    def fit(self, width: int, drop_order: tuple[str, ...]) -> list[str]:
        """Drop columns in ``drop_order`` until the table fits ``width``; the headers dropped."""
        dropped = []
        for key in drop_order:
            if self.width() <= width:
                break
            col = next((c for c in self.columns if c.key == key), None)
            if col is not None:
                self.columns = [c for c in self.columns if c.key != key]
                dropped.append(col.header.replace("\n", " "))
        return dropped

    def lines(self, width: int) -> tuple[list[str], list[tuple[int, int, int, str | None]]]:
        """The table as lines (header, rule, rows) and style spans (line, start, end, style)."""
        widths = [self._col_width(c) for c in self.columns]
        wrap_at = [i for i, c in enumerate(self.columns) if c.wraps]
        if wrap_at:
            spare = width - (sum(widths) + GAP * (len(widths) - 1))
            i = wrap_at[0]
            longest = max((len(t) for t in self.cells[self.columns[i].key]), default=0)
            widths[i] = max(widths[i], min(widths[i] + max(spare, 0), NOTE_MAX, max(longest, widths[i])))
        starts = [sum(widths[:i]) + GAP * i for i in range(len(widths))]
        out: list[str] = []
        spans: list[tuple[int, int, int, str | None]] = []
        head_lines = max(c.header.count("\n") + 1 for c in self.columns)
        heads = [c.header.split("\n") for c in self.columns]
        heads = [[""] * (head_lines - len(h)) + h for h in heads]  # units line up at the bottom
        for k in range(head_lines):
            out.append(self._join([h[k] for h in heads], widths))
            spans.append((len(out) - 1, 0, len(out[-1]), "bold"))
        out.append("─" * (sum(widths) + GAP * (len(widths) - 1)))
        columns = [self.cells[c.key] for c in self.columns]
        bold = [(starts[i], starts[i] + widths[i]) for i, c in enumerate(self.columns) if c.bold]
        n = len(self.row_styles)
        for r in range(n):
            texts = [col[r] for col in columns]
            extra: list[str] = []
            if wrap_at:
                i = wrap_at[0]
                parts = textwrap.wrap(texts[i], widths[i], break_long_words=True) or [""]
                texts[i], extra = parts[0], parts[1:]
            first = len(out)
            out.append(self._join(texts, widths))
            for more in extra:
                out.append(" " * starts[wrap_at[0]] + more)
            style = self.row_styles[r]
            for line in range(first, len(out)):
                if style:
                    spans.append((line, 0, len(out[line]), style))
            for a, b in bold:
                spans.append((first, a, min(b, len(out[first])), "bold"))
            if self.section_ends[r] and r + 1 < n:
                out.append("")
        return out, spans

    def _join(self, texts: list[str], widths: list[int]) -> str:
        parts = []
        for text, w, col in zip(texts, widths, self.columns):
            parts.append(text.rjust(w) if col.justify == "right" else text.ljust(w))
        return (" " * GAP).join(parts).rstrip()


def fleet_table(columns: list[Column], cells: dict[str, list[str]], frame, flag_weights: bool = True) -> TextTable:
    """A table of result rows: a wrapping Note column where any row has a note, a blank line
    between variants, and (``flag_weights``) rows above MTOW or below the empty weight in yellow."""
    notes = [n or "" for n in frame.get_column("note").to_list()]
    if any(notes):
        columns = [*columns, Column("note", "Note", "left", wraps=True)]
        cells = {**cells, "note": notes}
    variants = frame.get_column("variant").to_list()
    styles: list[str | None] = [None] * len(variants)
    if flag_weights:
        styles = ["yellow" if o or b else None
                  for o, b in zip(frame.get_column("over_mtow").to_list(), frame.get_column("below_empty_weight").to_list())]
    return TextTable(columns, cells, styles, [i + 1 == len(variants) or variants[i + 1] != v for i, v in enumerate(variants)])


def print_table(table: TextTable, title: str | None, footer_lines: list[str], drop_order: tuple[str, ...] = (),
                more: str = "widen the window, or use --format csv for every column") -> None:
    """Print a table fitted to the console (columns in ``drop_order`` hidden first, a line says
    which and how to see them: ``more``), its title centred above and the footer lines below; then
    nothing else (the caller prints the caution)."""
    from rich.text import Text

    out = console()
    dropped = table.fit(out.width, drop_order)
    lines, spans = table.lines(out.width)
    width = max((len(line) for line in lines), default=0)
    if title:
        lines.insert(0, title.center(width).rstrip())
        spans = [(line + 1, a, b, s) for line, a, b, s in spans]
    if dropped:
        footer_lines = [f"Hidden to fit the terminal: {', '.join(dropped)} ({more})."] + footer_lines
    if not out.is_terminal:
        sys.stdout.write("\n".join(lines + footer_lines) + "\n")
        return
    text = Text("\n".join(lines + footer_lines), no_wrap=True, overflow="ignore")
    offsets = [0]
    for line in lines:
        offsets.append(offsets[-1] + len(line) + 1)
    for line, a, b, style in spans:
        if style:
            text.stylize(style, offsets[line] + a, offsets[line] + b)
    if title:
        text.stylize("italic", 0, len(lines[0]))
    out.print(text, crop=False, soft_wrap=True)


def float_or_none(value) -> float | None:
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None
