"""Command line: ``variantcmp`` opens the terminal app; subcommands give headless answers.

    variantcmp [CATALOGUE]                      terminal app (bundled demo fleet by default)
    variantcmp ceilings [CATALOGUE] [options]   maximum altitudes as a table, CSV or JSON
    variantcmp check CATALOGUE                  validate a catalogue and summarise it

The subcommands live in :mod:`variantcmp.commands`, one module each. This module builds the
parser, launches the app, and turns every error a user can cause into one clear message on
stderr and exit status 2, never a traceback.
"""

from __future__ import annotations

import argparse
import difflib
import os
import re
import sys

from variantcmp.caution import CAUTION
from variantcmp.commands import COMMANDS
from variantcmp.commands.options import (
    EXIT_FAILURE,
    EXIT_OK,
    EXIT_USAGE,
    PROG,
    Parser,
    UsageError,
    formatter,
    load,
    looks_like_catalogue,
    resolve_catalogue,
    wrap,
)
from variantcmp.units import OptionError, shown

__all__ = ["main", "build_parser", "EXIT_OK", "EXIT_FAILURE", "EXIT_USAGE"]

MAIN_DESCRIPTION = """\
Compare the maximum altitudes of aircraft variants and engine options across
weights and temperature deviations.

  variantcmp [CATALOGUE]    open the terminal app (bundled demo fleet by default)
"""


def build_parser() -> argparse.ArgumentParser:
    parser = Parser(prog=PROG, description=MAIN_DESCRIPTION, epilog=wrap(CAUTION), formatter_class=formatter,
                    allow_abbrev=False)
    parser.add_argument("--version", action="version", version=f"%(prog)s {_version()}")
    subparsers = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=Parser)
    for command in COMMANDS:
        command.add(subparsers)
    return parser


def _version() -> str:
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("variantcmp")
    except PackageNotFoundError:
        return "unknown"


def _subparsers(parser: argparse.ArgumentParser) -> dict[str, argparse.ArgumentParser]:
    for action in parser._actions:  # argparse keeps its subparsers only here
        if isinstance(action, argparse._SubParsersAction):
            return dict(action.choices)
    return {}


def _value_options(parser: argparse.ArgumentParser) -> set[str]:
    """Every option string, in any subcommand, that takes exactly one value."""
    names: set[str] = set()
    for sub in _subparsers(parser).values():
        names |= _value_options(sub)
    for action in parser._actions:
        if action.option_strings and action.nargs is None:
            names.update(action.option_strings)
    return names


_NEGATIVE_VALUE = re.compile(r"^-(\d|\.\d)")
_NO_VALUE = re.compile(r"^(--[A-Za-z][\w-]*)=(--)?$")


def _prepare(argv: list[str], value_options: set[str]) -> list[str]:
    """``--isa -10,0,15`` -> ``--isa=-10,0,15`` (argparse would take "-10,0,15" for an option);
    ``--mach=--`` or ``--mach=`` is refused here, where argparse would pass on an empty list."""
    out: list[str] = []
    i = 0
    while i < len(argv):
        token = argv[i]
        if token == "--":
            out.extend(argv[i:])
            break
        no_value = _NO_VALUE.match(token)
        if no_value and no_value.group(1) in value_options:
            raise UsageError(f"{no_value.group(1)}: expected a value after '=', got {shown(token.split('=', 1)[1])}",
                             PROG)
        if token in value_options and i + 1 < len(argv) and _NEGATIVE_VALUE.match(argv[i + 1]):
            out.append(f"{token}={argv[i + 1]}")
            i += 2
            continue
        out.append(token)
        i += 1
    return out


def _unknown_arguments(sub: argparse.ArgumentParser, name: str, argv: list[str], extras: list[str]) -> UsageError:
    """The message for arguments a subcommand does not take: an option's "did you mean", or a
    second value after a list option ("--weight 70t 80t": lists take commas)."""
    options = [s for a in sub._actions for s in a.option_strings]
    first = extras[0]
    if first.startswith("-"):
        spelled = first.split("=", 1)[0]
        close = difflib.get_close_matches(spelled, options, n=1, cutoff=0.6)
        hint = f" (did you mean '{close[0]}'?)" if close else ""
        return UsageError(f"unknown option '{spelled}'{hint}; see '{PROG} {name} --help'", f"{PROG} {name}")
    at = argv.index(first) if first in argv else -1
    before = [t for t in argv[:at] if t.startswith("--")][-1:] if at > 0 else []
    if before and at >= 2:
        option = before[0].split("=", 1)[0]
        value = argv[at - 1]
        if option in options and not value.startswith("-"):
            return UsageError(f"{option} takes one value, a comma list: {option} {value},{first} "
                              f"(not separate words); see '{PROG} {name} --help'", f"{PROG} {name}")
    return UsageError(f"unexpected argument {shown(first)}; see '{PROG} {name} --help'", f"{PROG} {name}")


def stdout_is_terminal() -> bool:
    return sys.stdout.isatty()


def _stray_list_value(sub, argv: list[str], catalogue: str | None) -> str | None:
    """A second word after a list option ("--weight 70t 80t") that argparse took for the
    catalogue: returned so that it is reported as such, not as a missing file."""
    if sub is None or catalogue is None or looks_like_catalogue(catalogue) or catalogue not in argv:
        return None
    at = argv.index(catalogue)
    lists = {s for a in sub._actions if isinstance(a, argparse._AppendAction) for s in a.option_strings}
    return catalogue if at >= 2 and argv[at - 2] in lists else None


def _run_app(catalogue_text: str | None) -> int:
    if not stdout_is_terminal():
        print(f"{PROG}: the terminal app needs a terminal, and stdout is not one; for results in a file "
              f"or a pipe run '{PROG} ceilings' (see '{PROG} --help')", file=sys.stderr)
        return EXIT_USAGE
    path = resolve_catalogue(catalogue_text)
    load(catalogue_text)  # validate first: catalogue problems are reported here, cleanly
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


def _parse(parser, argv: list[str]):
    subs = _subparsers(parser)
    prepared = _prepare(argv, _value_options(parser))
    args, extras = parser.parse_known_args(prepared)
    stray = _stray_list_value(subs.get(args.command), prepared, getattr(args, "catalogue", None))
    if stray:
        extras = [stray] + extras
    if extras:
        name = args.command
        if name is None:
            raise UsageError(f"unexpected argument {shown(extras[0])}", PROG)
        raise _unknown_arguments(subs[name], name, prepared, extras)
    return args


def _error(message: str) -> None:
    print(message, file=sys.stderr)


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``variantcmp`` console script and ``python -m variantcmp``."""
    from variantcmp.catalogue import CatalogueError

    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser()
    commands = list(_subparsers(parser))
    try:
        if not argv:
            return _run_app(None)
        if argv[0] not in commands and not argv[0].startswith("-"):
            if looks_like_catalogue(argv[0]):
                if len(argv) == 1:
                    return _run_app(argv[0])
                raise UsageError(
                    f"a catalogue alone opens the app and takes no options; for results run "
                    f"'{PROG} ceilings {argv[0]} {' '.join(argv[1:])}'", PROG)
            hint = difflib.get_close_matches(argv[0].lower(), commands, n=1)
            if hint:
                message = f"unknown command {shown(argv[0])} (did you mean '{hint[0]}'?)"
            else:
                message = f"{shown(argv[0])} is neither a command ({', '.join(commands)}) nor a catalogue file"
            raise UsageError(message, PROG)
        args = _parse(parser, argv)
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
