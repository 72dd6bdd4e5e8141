"""Options every subcommand shares: the parser pieces, catalogue arguments, the fleet selection
and the conditions (weights, ISA deviations, Mach, climb criteria, buffet margin, target).

Option text is parsed by :mod:`variantcmp.units` (which raises ``OptionError``); this module only
wires those parsers to argparse, so that every command reads the same words the same way.
"""

from __future__ import annotations

import argparse
import difflib
import os
import shutil
import sys
import textwrap
from pathlib import Path

from variantcmp.units import (
    OptionError,
    parse_climbs,
    parse_flight_level,
    parse_flight_levels,
    parse_g_margin,
    parse_isa_devs,
    parse_mach,
    parse_weights,
    shown,
)

PROG = "variantcmp"
EXIT_OK, EXIT_FAILURE, EXIT_USAGE = 0, 1, 2
HELP_WIDTH = 100


class UsageError(Exception):
    """Raised instead of argparse's own exit so main() can return a status code."""

    def __init__(self, message: str, prog: str):
        super().__init__(message)
        self.prog = prog


class Parser(argparse.ArgumentParser):
    def error(self, message: str):  # noqa: D401 - argparse hook
        raise UsageError(message, self.prog)


def formatter(prog: str) -> argparse.HelpFormatter:
    width = min(shutil.get_terminal_size((HELP_WIDTH, 24)).columns, HELP_WIDTH)
    return argparse.RawDescriptionHelpFormatter(prog, max_help_position=30, width=width)


def wrap(text: str) -> str:
    """Wrap prose for help screens (the raw formatter keeps examples' line breaks)."""
    return textwrap.fill(text, width=min(shutil.get_terminal_size((HELP_WIDTH, 24)).columns, HELP_WIDTH) - 2)


def add_command(subparsers, name: str, help: str, description: str, epilog: str | None = None):
    """A subcommand's parser with the house settings (no abbreviations, our formatter)."""
    return subparsers.add_parser(name, help=help, description=wrap(description), epilog=epilog,
                                 formatter_class=formatter, allow_abbrev=False)


class Once(argparse.Action):
    """A single-valued option: given twice is an error, never a silent last-wins."""

    def __call__(self, parser, namespace, values, option_string=None):
        given = namespace.__dict__.setdefault("once_given", {})
        if self.dest in given:
            parser.error(f"{option_string}: given twice ({shown(given[self.dest])}, then {shown(values)}); "
                         "it takes one value")
        given[self.dest] = values
        setattr(namespace, self.dest, values)


def keyword(*choices: str):
    """An argparse type for a keyword option: case-insensitive, "did you mean" when close."""
    def parse(text: str) -> str:
        word = text.strip().lower()
        if word in choices:
            return word
        close = difflib.get_close_matches(word, choices, n=1, cutoff=0.5)
        hint = f" (did you mean '{close[0]}'?)" if close else ""
        raise argparse.ArgumentTypeError(f"cannot use {shown(text)}: expected one of {', '.join(choices)}{hint}")
    parse.__name__ = "keyword"
    return parse


def add_catalogue_argument(p) -> None:
    p.add_argument("catalogue", nargs="?", metavar="CATALOGUE",
                   help="TOML fleet catalogue or a bundled fleet name (default: the bundled demo)")


def add_selection(p) -> None:
    p.add_argument("--variant", action="append", metavar="ID",
                   help="variant id to include (repeat or comma list; default: all)")
    p.add_argument("--engine", action="append", metavar="ID",
                   help="engine option id to include (repeat or comma list; default: all offered)")


def add_conditions(p, mach_default: str | None = "cruise", mach_help: str | None = None,
                   weights: bool = True, isa: bool = True) -> None:
    """--weight, --isa, --mach, --climb, --g-margin with the house parsers behind them."""
    if weights:
        p.add_argument("--weight", action="append", metavar="LIST",
                       help="weights: 62000,64.5t,140000lb,90%%mtow (default: 100%%mtow)")
    if isa:
        p.add_argument("--isa", action="append", metavar="LIST",
                       help="ISA deviations in degrees C: -10,0,15 or ISA+15 (default: 0)")
    p.add_argument("--mach", action=Once, default=mach_default, metavar="M|best|cruise",
                   help=mach_help or "fixed Mach, best (highest altitude) or cruise (each variant's cruise Mach; default)")
    p.add_argument("--climb", action="append", metavar="FPM",
                   help="required residual rate of climb: absolute, service, cruise (default) or ft/min")
    p.add_argument("--g-margin", action=Once, default="1.3", metavar="N",
                   help="load factor kept from buffet onset (default: 1.3, common practice)")


def add_targets(p, help: str) -> None:
    """--target LIST: the levels an inverse question asks about (dest ``targets``; required, checked
    after the other options so that their mistakes are reported first)."""
    p.add_argument("--target", dest="targets", action="append", metavar="LIST", help=help)


def targets_from_args(args) -> list[float]:
    """The --target levels in ft (OptionError when none is given)."""
    if not args.targets:
        raise OptionError("--target: give the flight level(s) to ask about, e.g. --target FL370 or "
                          "--target FL350,FL370")
    return parse_flight_levels(joined(args.targets, ""), "--target")


def add_format(p, choices=("table", "csv", "json"), default: str = "table", help: str | None = None) -> None:
    p.add_argument("--format", action=Once, type=keyword(*choices), default=default,
                   help=help or f"{'/'.join(choices)} ({default} by default; csv and json: data only on stdout)")


# --- catalogue paths ---------------------------------------------------------------

def bundled_names() -> list[str]:
    from variantcmp.catalogue import bundled_fleet_dir

    try:
        return sorted(p.stem for p in Path(bundled_fleet_dir()).glob("*.toml"))
    except OSError:
        return []


def resolve_catalogue(text: str | None) -> Path:
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
        if not text.endswith(".toml"):
            names = bundled_names()
            close = difflib.get_close_matches(text.lower(), names, n=1, cutoff=0.4)
            hint = f"did you mean '{close[0]}'? " if close else ""
            raise OptionError(f"CATALOGUE: {shown(text)} is neither a file nor a bundled fleet; {hint}"
                              f"bundled fleets: {', '.join(names)} (or give a path to a .toml file)")
    return path  # load_catalogue reports a missing file as a catalogue problem


def load(text: str | None, warn: bool = True):
    """Load and validate a catalogue; CatalogueError propagates to main(). Its warnings (valid but
    doubtful values) go to stderr, one line each, unless ``warn`` is False (``check`` lists them
    in its summary); stdout keeps only the command's output."""
    from variantcmp.catalogue import load_catalogue

    catalogue = load_catalogue(resolve_catalogue(text))
    if warn:
        for warning in catalogue.warnings:
            print(str(warning), file=sys.stderr)
    return catalogue


def looks_like_catalogue(token: str) -> bool:
    if token.endswith(".toml") or "/" in token or os.sep in token or Path(token).exists():
        return True
    return token in bundled_names()


# --- selection and conditions ---------------------------------------------------------

def split_ids(values: list[str] | None, option: str = "--variant/--engine") -> tuple[str, ...]:
    """--variant a --variant b,c -> ("a", "b", "c"); an empty value is refused, not read as "all"."""
    ids: list[str] = []
    for value in values or []:
        parts = [part.strip() for part in value.split(",") if part.strip()]
        if not parts:
            raise OptionError(f"{option}: got an empty id list {shown(value)}; expected one or more ids "
                              "(leave the option out for all)")
        ids.extend(parts)
    return tuple(dict.fromkeys(ids))


def joined(values: list[str] | None, default: str) -> str:
    """Repeated list options are joined: --isa 0 --isa 15 == --isa 0,15."""
    return ",".join(values) if values else default


def conditions_from_args(args):
    """The conditions every ceilings-like command takes -> (Conditions, climb labels)."""
    from variantcmp.table import Conditions

    weights = parse_weights(joined(getattr(args, "weight", None), "100%mtow"), "--weight")
    isa_devs = parse_isa_devs(joined(getattr(args, "isa", None), "0"), "--isa")
    climbs = parse_climbs(joined(args.climb, "cruise"), "--climb")
    mach = parse_mach(args.mach, "--mach")
    g_margin = parse_g_margin(args.g_margin, "--g-margin")
    target = getattr(args, "target", None)
    conditions = Conditions(
        weights=tuple(weights),
        isa_devs_c=tuple(isa_devs),
        mach=mach,
        climb_fpm=tuple(fpm for fpm, _ in climbs),
        g_margin=g_margin,
        target_fl_ft=parse_flight_level(target, "--target") if target else None,
        variants=split_ids(args.variant, "--variant"),
        engines=split_ids(args.engine, "--engine"),
    )
    return conditions, [label for _, label in climbs]


def selected(catalogue, conditions):
    """The conditions with their ids resolved against the catalogue (case-insensitive, "did you
    mean" when unknown); OptionError when nothing is selected."""
    from variantcmp.table import check_selection

    return check_selection(catalogue, conditions)
