"""Command line: ``variantcmp`` opens the terminal app; subcommands give headless answers.

    variantcmp [CATALOGUE]                      terminal app (bundled demo fleet by default)
    variantcmp ceilings [CATALOGUE] [options]   maximum altitudes as a table, CSV or JSON
    variantcmp check CATALOGUE                  validate a catalogue and summarise it

Presentation only: options are parsed by :mod:`variantcmp.units`, results come
from :mod:`variantcmp.table`. Every error a user can cause ends in one clear
message on stderr and exit status 2, never a traceback.

Adding a subcommand: write ``_add_<name>(subparsers)`` that builds its parser
and sets ``run=`` to a function ``(args) -> int``, then append it to ``COMMANDS``.
"""

from __future__ import annotations

import argparse
import difflib
import math
import os
import re
import shutil
import sys
import textwrap
from collections.abc import Callable
from pathlib import Path

from variantcmp.caution import CAUTION
from variantcmp.units import (
    OptionError,
    format_altitude_ft,
    format_flight_level,
    format_isa_dev,
    format_mach,
    parse_climbs,
    parse_flight_level,
    parse_g_margin,
    parse_isa_devs,
    parse_mach,
    parse_weights,
)

PROG = "variantcmp"
EXIT_OK, EXIT_FAILURE, EXIT_USAGE = 0, 1, 2


class UsageError(Exception):
    """Raised instead of argparse's own exit so main() can return a status code."""

    def __init__(self, message: str, prog: str):
        super().__init__(message)
        self.prog = prog


class _Parser(argparse.ArgumentParser):
    def error(self, message: str):  # noqa: D401 - argparse hook
        raise UsageError(message, self.prog)


def _formatter(prog: str) -> argparse.HelpFormatter:
    width = min(shutil.get_terminal_size((100, 24)).columns, 100)
    return argparse.RawDescriptionHelpFormatter(prog, max_help_position=30, width=width)


def _wrap(text: str) -> str:
    """Wrap prose for help screens (the raw formatter keeps examples' line breaks)."""
    return textwrap.fill(text, width=min(shutil.get_terminal_size((100, 24)).columns, 100) - 2)


# --- catalogue paths ---------------------------------------------------------------

def _bundled_names() -> list[str]:
    from variantcmp.catalogue import bundled_fleet_dir

    try:
        return sorted(p.stem for p in Path(bundled_fleet_dir()).glob("*.toml"))
    except OSError:
        return []


def _resolve_catalogue(text: str | None) -> Path:
    """A catalogue argument -> a path: a file, the name of a bundled fleet, or (None) the demo."""
    from variantcmp.catalogue import bundled_fleet_dir, demo_catalogue_path

    if text is None:
        return Path(demo_catalogue_path())
    if not text.strip():
        raise OptionError("CATALOGUE: the catalogue argument is empty; expected a .toml file or a bundled "
                          "fleet name (leave it out for the demo fleet)")
    path = Path(text).expanduser()
    if path.exists():
        return path
    if os.sep not in text and "/" not in text:
        for candidate in (Path(bundled_fleet_dir()) / text, Path(bundled_fleet_dir()) / f"{text}.toml"):
            if candidate.is_file():
                return candidate
    return path  # load_catalogue reports a missing file as a catalogue problem


def _load(text: str | None):
    """Load and validate a catalogue; CatalogueError propagates to main()."""
    from variantcmp.catalogue import load_catalogue

    return load_catalogue(_resolve_catalogue(text))


def _looks_like_catalogue(token: str) -> bool:
    if token.endswith(".toml") or "/" in token or os.sep in token or Path(token).exists():
        return True
    return token in _bundled_names()


# --- output helpers ----------------------------------------------------------------------

def _console(stderr: bool = False):
    from rich.console import Console

    stream = sys.stderr if stderr else sys.stdout
    console = Console(file=stream, highlight=False)
    if not console.is_terminal:
        # Piped or redirected: do not squeeze wide tables into 80 columns.
        console = Console(file=stream, highlight=False, width=max(console.width, 220))
    return console


def _print_caution(stderr: bool) -> None:
    if stderr:
        print(CAUTION, file=sys.stderr)
    else:
        _console().print(f"[bold yellow]{CAUTION}[/]")


def _split_ids(values: list[str] | None, option: str = "--variant/--engine") -> tuple[str, ...]:
    """--variant a --variant b,c -> ("a", "b", "c"); an empty value is refused, not read as "all"."""
    ids: list[str] = []
    for value in values or []:
        parts = [part.strip() for part in value.split(",") if part.strip()]
        if not parts:
            raise OptionError(f"{option}: got an empty id list {value!r}; expected one or more ids "
                              "(leave the option out for all)")
        ids.extend(parts)
    return tuple(dict.fromkeys(ids))


def _joined(values: list[str] | None, default: str) -> str:
    """Repeated list options are joined: --isa 0 --isa 15 == --isa 0,15."""
    return ",".join(values) if values else default


def _float_or_none(value) -> float | None:
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None


# --- ceilings -----------------------------------------------------------------------------

CEILINGS_EPILOG = """\
examples:
  variantcmp ceilings --weight 100%mtow --isa=0,15
  variantcmp ceilings fernholt-regional --variant v88 --weight 42000,44.5t --isa=-10,0,15
  variantcmp ceilings --weight 90%mtow --isa ISA+20 --mach best --climb service --format csv

weights: kg (default), t, lb or %mtow, comma separated; "mtow" = 100%mtow.
ISA deviations: degrees C, comma separated: -10,0,15 or ISA+15,ISA-5.
climb: absolute (0 ft/min), service (100), cruise (300) or a rate in ft/min; a comma list gives one row each.
"""


def _add_ceilings(subparsers) -> None:
    p = subparsers.add_parser(
        "ceilings",
        help="maximum altitudes of every variant x engine x weight x ISA deviation",
        description=_wrap("Compute the highest pressure altitude each limit allows (thrust at the "
                          "required residual rate of climb, buffet margin, stall, certified "
                          "ceiling, cabin pressure), the maximum altitude where all hold at once, "
                          "and the limit that binds."),
        epilog=CEILINGS_EPILOG,
        formatter_class=_formatter,
        allow_abbrev=False,
    )
    p.add_argument("catalogue", nargs="?", metavar="CATALOGUE",
                   help="TOML fleet catalogue or a bundled fleet name (default: the bundled demo)")
    p.add_argument("--variant", action="append", metavar="ID",
                   help="variant id to include (repeat or comma list; default: all)")
    p.add_argument("--engine", action="append", metavar="ID",
                   help="engine option id to include (repeat or comma list; default: all offered)")
    p.add_argument("--weight", action="append", metavar="LIST",
                   help="weights: 62000,64.5t,140000lb,90%%mtow (default: 100%%mtow)")
    p.add_argument("--isa", action="append", metavar="LIST",
                   help="ISA deviations in degrees C: -10,0,15 or ISA+15 (default: 0)")
    p.add_argument("--mach", default="cruise", metavar="M|best|cruise",
                   help="fixed Mach, best (highest altitude) or cruise (each variant's "
                   "cruise Mach; default)")
    p.add_argument("--climb", action="append", metavar="FPM",
                   help="required residual rate of climb: absolute, service, cruise (default) "
                   "or ft/min")
    p.add_argument("--g-margin", default="1.3", metavar="N",
                   help="load factor kept from buffet onset (default: 1.3, common practice)")
    p.add_argument("--target", metavar="FL",
                   help="flight level to compare with, e.g. FL350: adds margin columns")
    p.add_argument("--format", choices=("table", "csv", "json"), default="table",
                   help="table (default, human-readable), csv or json (data only on stdout)")
    p.set_defaults(run=_run_ceilings)


def _conditions_from_args(args):
    from variantcmp.table import Conditions

    weights = parse_weights(_joined(args.weight, "100%mtow"), "--weight")
    isa_devs = parse_isa_devs(_joined(args.isa, "0"), "--isa")
    climbs = parse_climbs(_joined(args.climb, "cruise"), "--climb")
    mach = parse_mach(args.mach, "--mach")
    g_margin = parse_g_margin(args.g_margin, "--g-margin")
    target_ft = parse_flight_level(args.target, "--target") if args.target else None
    conditions = Conditions(
        weights=tuple(weights),
        isa_devs_c=tuple(isa_devs),
        mach=mach,
        climb_fpm=tuple(fpm for fpm, _ in climbs),
        g_margin=g_margin,
        target_fl_ft=target_ft,
        variants=_split_ids(args.variant, "--variant"),
        engines=_split_ids(args.engine, "--engine"),
    )
    return conditions, [label for _, label in climbs]


def _run_ceilings(args) -> int:
    from variantcmp.table import ceilings_table, check_selection

    conditions, climb_labels = _conditions_from_args(args)  # bad options first: cheapest to fix
    catalogue = _load(args.catalogue)
    check_selection(catalogue, conditions)
    frame = ceilings_table(catalogue, conditions)
    if args.format == "csv":
        sys.stdout.write(_clean_floats(frame).write_csv())
        _print_caution(stderr=True)
    elif args.format == "json":
        sys.stdout.write(_clean_floats(frame).write_json() + "\n")
        _print_caution(stderr=True)
    else:
        _print_ceilings_table(catalogue, conditions, climb_labels, frame)
    return EXIT_OK


def _clean_floats(frame):
    """NaN must never reach an export as a number: make it null (an empty CSV field)."""
    import polars as pl

    return frame.with_columns(pl.col(pl.Float32, pl.Float64).fill_nan(None))


_LIMIT_COLUMNS = (
    ("thrust_ceiling_ft", "Thrust"),
    ("buffet_ceiling_ft", "Buffet"),
    ("stall_ceiling_ft", "Stall"),
    ("certified_ceiling_ft", "Certified"),
    ("cabin_ceiling_ft", "Cabin"),
)


def _conditions_caption(conditions, climb_labels: list[str]) -> str:
    if conditions.mach == "best":
        speed = "best Mach (highest altitude)"
    elif conditions.mach == "cruise":
        speed = "each variant's cruise Mach"
    else:
        speed = format_mach(conditions.mach)
    parts = [
        f"speed: {speed}",
        "residual climb: " + ", ".join(
            f"{label} ({fpm:g} ft/min)" if not label.endswith("ft/min") else label
            for fpm, label in zip(conditions.climb_fpm, climb_labels)
        ),
        f"buffet margin: {conditions.g_margin:g} g",
    ]
    if conditions.target_fl_ft is not None:
        parts.append(f"target: {format_flight_level(conditions.target_fl_ft)}")
    return " | ".join(parts)


# Columns dropped, in this order, when the table is wider than the terminal.
_DROP_FOR_WIDTH = ("cabin_ceiling_ft", "certified_ceiling_ft", "stall_ceiling_ft", "pct_mtow",
                   "max_ft", "mach")


def _ceilings_cells(catalogue, conditions, frame) -> tuple[list[tuple[str, str, str]], list[dict]]:
    """Column specs (key, header, justify) and the text of every cell, per row."""
    rows = frame.to_dicts()
    # Two-line headers (name, unit) keep the columns as narrow as their numbers.
    columns = [("variant", "Variant", "left"), ("engine", "Engine", "left"),
               ("weight", "Weight\nkg", "right"), ("pct_mtow", "%\nMTOW", "right"),
               ("isa", "ISA", "right")]
    if len(conditions.climb_fpm) > 1:
        columns.append(("climb", "Climb\nft/min", "right"))
    columns += [("mach", "Mach", "right"), ("max_fl", "Max\nFL", "right"),
                ("max_ft", "Max\nft", "right"), ("limit", "Limit", "left")]
    columns += [(col, f"{header}\nft", "right") for col, header in _LIMIT_COLUMNS]
    if "margin_ft" in frame.columns:
        columns.append(("margin", "Margin\nft", "right"))
    if any(row["note"] for row in rows):
        columns.append(("note", "Note", "left"))

    cells = []
    for row in rows:
        variant = catalogue.variants.get(row["variant"])
        weight_kg = _float_or_none(row["weight_kg"])
        weight = "—" if weight_kg is None else f"{weight_kg:,.0f}"
        pct_mtow = "—"
        if variant is not None and weight_kg is not None and variant.mtow_kg:
            pct_mtow = f"{100 * weight_kg / variant.mtow_kg:.0f}"
        max_ft = _float_or_none(row["max_altitude_ft"])
        text = {
            "variant": row["variant"], "engine": row["engine"], "weight": weight, "pct_mtow": pct_mtow,
            "isa": format_isa_dev(row["isa_dev_c"]), "climb": f"{row['climb_fpm']:g}",
            "mach": format_mach(_float_or_none(row["mach"])),
            "max_fl": format_flight_level(max_ft), "max_ft": format_altitude_ft(max_ft),
            "limit": row["limit"] or "—", "note": row["note"] or "",
        }
        for col, _ in _LIMIT_COLUMNS:
            text[col] = format_altitude_ft(_float_or_none(row[col]))
        if "margin_ft" in row:
            margin = _float_or_none(row["margin_ft"])
            # Rounded down like the altitudes, so a margin is never overstated.
            text["margin"] = "—" if margin is None else f"{math.floor(margin):+,d}"
        text["_variant"], text["_over_mtow"] = row["variant"], bool(row.get("over_mtow"))
        cells.append(text)
    return columns, cells


def _build_table(title, caption, columns, cells):
    from rich import box
    from rich.table import Table

    table = Table(title=title, caption=caption, caption_justify="left", header_style="bold",
                  box=box.SIMPLE_HEAD, show_edge=False, padding=(0, 1, 0, 0))
    for key, header, justify in columns:
        if key == "note":
            table.add_column(header, overflow="fold", min_width=16, max_width=48)  # see note_min
        else:
            # Numbers and ids never wrap or get cut (a truncated altitude would mislead): the
            # columns are sized to fit, and "fold" would at worst break a number, never hide it.
            table.add_column(header, justify=justify, no_wrap=True, overflow="fold",
                             style="bold" if key in ("max_fl", "limit") else None)
    for i, text in enumerate(cells):
        last_of_variant = i + 1 == len(cells) or cells[i + 1]["_variant"] != text["_variant"]
        table.add_row(*(text[key] for key, _, _ in columns),
                      style="yellow" if text["_over_mtow"] else None, end_section=last_of_variant)
    return table


def _print_ceilings_table(catalogue, conditions, climb_labels, frame) -> None:
    from rich.measure import Measurement

    console = _console()
    columns, cells = _ceilings_cells(catalogue, conditions, frame)
    title = f"{catalogue.title}: maximum altitudes"
    caption = _conditions_caption(conditions, climb_labels)

    note_min = 16

    def width_needed(cols) -> int:
        """Width with every number whole and the note wrapped to its narrowest."""
        fixed = [c for c in cols if c[0] != "note"]
        table = _build_table(None, None, fixed, cells)
        width = Measurement.get(console, console.options.update(width=10_000), table).maximum
        return width + (note_min + 2 if len(fixed) < len(cols) else 0)

    dropped: list[str] = []
    for key in _DROP_FOR_WIDTH:
        if width_needed(columns) <= console.width:
            break
        header = next((h for k, h, _ in columns if k == key), None)
        if header is not None:
            columns = [c for c in columns if c[0] != key]
            dropped.append(header.replace("\n", " "))
    table = _build_table(title, caption, columns, cells)
    needed = width_needed(columns)
    if needed > console.width:
        # Still too wide: print at full width and let the terminal wrap rather than cut numbers.
        from rich.console import Console

        console = Console(file=sys.stdout, highlight=False, width=needed)
    console.print(table)
    if dropped:
        console.print(f"Hidden to fit the terminal: {', '.join(dropped)} "
                      "(widen the window, or use --format csv for every column).")
    console.print("— = not available: the catalogue gives no data for that limit, or see the "
                  "note. Pressure altitudes; flight levels and feet are rounded down.")
    _print_caution(stderr=False)


# --- check ------------------------------------------------------------------------------------

def _add_check(subparsers) -> None:
    p = subparsers.add_parser(
        "check",
        help="validate a catalogue and summarise its engines and variants",
        description=_wrap("Validate a TOML fleet catalogue: every problem is listed as "
                          "file: key path: what is expected. A valid catalogue is summarised "
                          "with derived figures."),
        formatter_class=_formatter,
        allow_abbrev=False,
    )
    p.add_argument("catalogue", nargs="?", metavar="CATALOGUE",
                   help="TOML fleet catalogue or a bundled fleet name (default: the bundled demo)")
    p.set_defaults(run=_run_check)


def _run_check(args) -> int:
    from rich.table import Table

    from variantcmp.catalogue import summarise

    catalogue = _load(args.catalogue)
    console = _console()
    summary = Table.grid(padding=(0, 2))
    summary.add_column(style="bold", no_wrap=True)
    summary.add_column(overflow="fold")
    for label, text in summarise(catalogue):
        summary.add_row(label, text)
    console.print(summary)
    _print_figures(console, catalogue)
    console.print(f"[bold green]OK[/]: {catalogue.path}: {len(catalogue.engines)} engines, "
                  f"{len(catalogue.variants)} variants, no problems found.")
    _print_caution(stderr=False)
    return EXIT_OK


def _print_figures(console, catalogue) -> None:
    """Derived figures from table.variant_figures: one row per variant x engine option.

    Scalar figures belong to the variant (shown on its first row); dict figures are keyed by
    engine id.
    """
    from rich.table import Table

    from variantcmp.table import variant_figures

    figures = {vid: variant_figures(catalogue, vid) for vid in catalogue.variants}
    scalar_keys = list(dict.fromkeys(
        k for f in figures.values() for k, v in f.items() if not isinstance(v, dict)))
    engine_keys = list(dict.fromkeys(
        k for f in figures.values() for k, v in f.items() if isinstance(v, dict)))
    table = Table(title="Derived figures", header_style="bold", title_justify="left")
    table.add_column("Variant")
    for key in scalar_keys:
        table.add_column(key, justify="right")
    table.add_column("Engine")
    for key in engine_keys:
        table.add_column(key, justify="right")
    for vid, fig in figures.items():
        engines = catalogue.variants[vid].engine_options
        for j, eid in enumerate(engines):
            first = j == 0
            cells = [vid if first else ""]
            cells += [_figure_text(k, fig.get(k)) if first else "" for k in scalar_keys]
            cells.append(eid)
            cells += [_figure_text(k, (fig.get(k) or {}).get(eid)) for k in engine_keys]
            table.add_row(*cells, end_section=j + 1 == len(engines))
    console.print(table)


def _figure_text(key: str, value) -> str:
    if value is None or isinstance(value, bool):
        return "—" if value is None else str(value)
    if isinstance(value, (int, float)):
        if not math.isfinite(value):
            return "—"
        if re.search(r"\bft\b", key):
            return f"{format_altitude_ft(value)} ({format_flight_level(value)})"
        return f"{value:,.0f}" if abs(value) >= 1000 else f"{value:.4g}"
    return str(value)


# --- the terminal app -------------------------------------------------------------------------

def _run_app(catalogue_text: str | None) -> int:
    path = _resolve_catalogue(catalogue_text)
    _load(catalogue_text)  # validate first: catalogue problems are reported here, cleanly
    try:
        from variantcmp.app import run_app
    except ModuleNotFoundError as exc:
        if exc.name and exc.name.startswith("variantcmp.app"):
            print(f"{PROG}: the terminal app is not part of this build; "
                  f"use '{PROG} ceilings' for headless results", file=sys.stderr)
            return EXIT_FAILURE
        raise
    status = run_app(str(path))
    return int(status or 0)


# --- parser and entry point -------------------------------------------------------------------

# Commands that live in their own modules are registered through a lazy import: those modules
# import this one for its helpers, so importing them at the top would be circular.

def _add_envelope(subparsers) -> None:
    from variantcmp.plots_cli import add_envelope_command

    add_envelope_command(subparsers)


def _add_sweep(subparsers) -> None:
    from variantcmp.plots_cli import add_sweep_command

    add_sweep_command(subparsers)


def _add_bench(subparsers) -> None:
    from variantcmp.bench_cli import add_bench_command

    add_bench_command(subparsers)


#: One function per subcommand, in the order `variantcmp --help` lists them.
COMMANDS: list[Callable] = [_add_ceilings, _add_envelope, _add_sweep, _add_check, _add_bench]

MAIN_DESCRIPTION = """\
Compare the maximum altitudes of aircraft variants and engine options across
weights and temperature deviations.

  variantcmp [CATALOGUE]    open the terminal app (bundled demo fleet by default)
"""


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog=PROG,
        description=MAIN_DESCRIPTION,
        epilog=_wrap(CAUTION),
        formatter_class=_formatter,
        allow_abbrev=False,
    )
    parser.add_argument("--version", action="version", version=f"%(prog)s {_version()}")
    subparsers = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for add in COMMANDS:
        add(subparsers)
    return parser


def _version() -> str:
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("variantcmp")
    except PackageNotFoundError:
        return "unknown"


def _command_names(parser: argparse.ArgumentParser) -> list[str]:
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            return list(action.choices)
    return []


def _value_options(parser: argparse.ArgumentParser) -> set[str]:
    """Every option string, in any subcommand, that takes exactly one value."""
    names: set[str] = set()
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for sub in action.choices.values():
                names |= _value_options(sub)
        elif action.option_strings and action.nargs is None:
            names.update(action.option_strings)
    return names


_NEGATIVE_VALUE = re.compile(r"^-(\d|\.\d)")


def _glue_negative_values(argv: list[str], value_options: set[str]) -> list[str]:
    """``--isa -10,0,15`` -> ``--isa=-10,0,15``: argparse would take "-10,0,15" for an option."""
    out: list[str] = []
    i = 0
    while i < len(argv):
        token = argv[i]
        if token == "--":
            out.extend(argv[i:])
            break
        if (token in value_options and i + 1 < len(argv)
                and _NEGATIVE_VALUE.match(argv[i + 1])):
            out.append(f"{token}={argv[i + 1]}")
            i += 2
            continue
        out.append(token)
        i += 1
    return out


def _error(message: str) -> None:
    print(message, file=sys.stderr)


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``variantcmp`` console script and ``python -m variantcmp``."""
    from variantcmp.catalogue import CatalogueError

    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser()
    commands = _command_names(parser)
    try:
        if not argv:
            return _run_app(None)
        if argv[0] not in commands and not argv[0].startswith("-"):
            if _looks_like_catalogue(argv[0]):
                if len(argv) == 1:
                    return _run_app(argv[0])
                raise UsageError(
                    f"a catalogue alone opens the app and takes no options; for results run "
                    f"'{PROG} ceilings {argv[0]} {' '.join(argv[1:])}'", PROG)
            hint = difflib.get_close_matches(argv[0], commands, n=1)
            if hint:
                message = f"unknown command '{argv[0]}' (did you mean '{hint[0]}'?)"
            else:
                message = (f"'{argv[0]}' is neither a command ({', '.join(commands)}) "
                           "nor a catalogue file")
            raise UsageError(message, PROG)
        args = parser.parse_args(_glue_negative_values(argv, _value_options(parser)))
        if args.command is None:
            return _run_app(None)
        return args.run(args)
    except UsageError as exc:
        _error(f"{exc.prog}: error: {exc}\n(see '{exc.prog} --help')")
        return EXIT_USAGE
    except SystemExit as exc:  # --help and --version exit through argparse
        return exc.code if isinstance(exc.code, int) else EXIT_OK
    except OptionError as exc:
        _error(f"{PROG}: error: {exc}")
        return EXIT_USAGE
    except CatalogueError as exc:
        _error(str(exc))
        return EXIT_USAGE
    except (FileNotFoundError, IsADirectoryError, PermissionError) as exc:
        _error(f"{exc.filename or PROG}: cannot read: {exc.strerror or exc}")
        return EXIT_USAGE
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:
        # Output piped into `head` and the like: stop quietly.
        try:
            os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        except (OSError, ValueError, AttributeError):
            pass  # stdout is not a real file (tests): nothing left to flush
        return EXIT_FAILURE
