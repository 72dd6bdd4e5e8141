"""The ``envelope`` and ``sweep`` subcommands (presentation: parse, call the solvers, print).

    variantcmp envelope [CATALOGUE] --variant ID [--engine ID] --weight W --isa DT [--speed mach|tas|cas]
                        [--size WxH] [--ascii] [--format sketch|csv|json]
    variantcmp sweep [CATALOGUE] --over weight|isa|mach [filters and conditions as in ceilings]
                     [--range FROM:TO] [--points N] [--size WxH] [--ascii] [--format sketch|csv|json]

Registered by :func:`variantcmp.cli.build_parser`; errors follow the CLI's rules (one message, exit 2).
"""

from __future__ import annotations

import json
import re
import shutil
import sys

from variantcmp import cli
from variantcmp.units import OptionError, parse_isa_dev, parse_mach, parse_weight

DEFAULT_SIZE = (100, 32)
MAX_SIZE = (400, 200)

ENVELOPE_EPILOG = """\
examples:
  variantcmp envelope --variant v88 --engine ossel-78 --weight 45t --isa 0
  variantcmp envelope --variant v88 --weight 90%mtow --isa=+15 --speed cas --size 120x40
  variantcmp envelope --variant v104 --engine brannick-74 --weight mtow --isa 0 --format csv

Up to three cases (variant x engine x weight x ISA deviation x climb) are overlaid as their
feasible bands; one case is drawn with every boundary. --mach sets the marked Mach line
(default: the variant's cruise Mach).
"""

SWEEP_EPILOG = """\
examples:
  variantcmp sweep --over weight --variant v88 --isa 0
  variantcmp sweep --over isa --variant v104 --weight mtow --range=-10:35
  variantcmp sweep --over mach --variant v70 --weight 90%mtow --format csv

--range FROM:TO sets the swept quantity's range: weights (kg, t, lb or %mtow), ISA deviations
(degrees C) or Mach numbers. Defaults: each variant's OEW to MTOW; ISA-20 to ISA+40; each
case's speed range. The binding limit is written along each curve.
"""


def _common(p, mach_help: str) -> None:
    p.add_argument("catalogue", nargs="?", metavar="CATALOGUE",
                   help="TOML fleet catalogue or a bundled fleet name (default: the bundled demo)")
    p.add_argument("--variant", action="append", metavar="ID", help="variant id (repeat or comma list)")
    p.add_argument("--engine", action="append", metavar="ID",
                   help="engine option id (repeat or comma list; default: every option offered)")
    p.add_argument("--weight", action="append", metavar="W",
                   help="weight(s): 62000, 64.5t, 140000lb, 90%%mtow (default: 100%%mtow)")
    p.add_argument("--isa", action="append", metavar="DT", help="ISA deviation(s) in degrees C (default: 0)")
    p.add_argument("--mach", default=None, metavar="M", help=mach_help)
    p.add_argument("--climb", action="append", metavar="FPM",
                   help="required residual rate of climb: absolute, service, cruise (default) or ft/min")
    p.add_argument("--g-margin", default="1.3", metavar="N",
                   help="load factor kept from buffet onset (default: 1.3, common practice)")
    p.add_argument("--size", metavar="WxH", help="drawing size in characters (default: the terminal's)")
    p.add_argument("--ascii", action="store_true", help="plain ASCII drawing for dumb terminals")
    p.add_argument("--format", choices=("sketch", "csv", "json"), default="sketch",
                   help="sketch (default, a character drawing), csv or json (data only on stdout)")
    p.set_defaults(target=None)


def add_envelope_command(subparsers) -> None:
    p = subparsers.add_parser(
        "envelope",
        help="speed-altitude envelope of a variant x engine at a weight and ISA deviation",
        description="Draw the speed-altitude envelope: stall, buffet onset at 1 g and at the margin, "
        "thrust-limited minimum and maximum speed at the residual climb, MMO and VMO, the top "
        "where the feasible band closes and the highest altitude on the cruise-Mach line.",
        epilog=ENVELOPE_EPILOG, formatter_class=cli._formatter, allow_abbrev=False)
    _common(p, "Mach of the marked line: cruise (default) or a Mach")
    p.add_argument("--speed", choices=("mach", "tas", "cas"), default="mach",
                   help="speed axis: mach (default), tas or cas (knots)")
    p.set_defaults(run=_run_envelope)


def add_sweep_command(subparsers) -> None:
    p = subparsers.add_parser(
        "sweep",
        help="maximum altitude against weight, ISA deviation or Mach, with the binding limit",
        description="Sweep one quantity and draw how the maximum altitude moves, per variant x "
        "engine, naming the binding limit along each curve.",
        epilog=SWEEP_EPILOG, formatter_class=cli._formatter, allow_abbrev=False)
    p.add_argument("--over", required=True, choices=("weight", "isa", "mach"), help="quantity to sweep")
    _common(p, "fixed Mach, best or cruise (default) for weight and ISA sweeps")
    p.add_argument("--range", dest="value_range", metavar="FROM:TO", help="range of the swept quantity")
    p.add_argument("--points", default="31", metavar="N", help="points along each curve (default: 31)")
    p.set_defaults(run=_run_sweep)


def parse_size(text: str | None) -> tuple[int, int]:
    """"100x30" -> (100, 30); None -> the terminal's size (or 100x32 when not a terminal)."""
    from variantcmp.sketch import MIN_HEIGHT, MIN_WIDTH

    if text is None:
        cols, rows = shutil.get_terminal_size(DEFAULT_SIZE)
        return max(MIN_WIDTH, min(cols, MAX_SIZE[0])), max(MIN_HEIGHT, min(rows - 2, MAX_SIZE[1]))
    match = re.fullmatch(r"\s*(\d+)\s*[xX×]\s*(\d+)\s*", text)
    expected = f"WIDTHxHEIGHT in characters, from {MIN_WIDTH}x{MIN_HEIGHT} to {MAX_SIZE[0]}x{MAX_SIZE[1]}, e.g. 100x30"
    if not match:
        raise OptionError(f"--size: cannot use {text.strip()!r}: expected {expected}")
    w, h = int(match.group(1)), int(match.group(2))
    if not (MIN_WIDTH <= w <= MAX_SIZE[0] and MIN_HEIGHT <= h <= MAX_SIZE[1]):
        raise OptionError(f"--size: cannot use {text.strip()!r}: expected {expected}")
    return w, h


def _emit(drawing) -> None:
    console = cli._console()
    if sys.stdout.isatty():
        console.print(drawing.text(), crop=True, soft_wrap=False)
    else:
        sys.stdout.write(str(drawing) + "\n")


def _run_envelope(args) -> int:
    from variantcmp.envelope import envelopes_for_conditions
    from variantcmp.sketch import draw_envelope

    if not args.variant:
        raise OptionError("--variant: expected a variant id (envelope draws one to three cases)")
    mach_text = args.mach or "cruise"
    if parse_mach(mach_text, "--mach") == "best":
        raise OptionError("--mach: cannot use 'best' for the marked line: the envelope's top already is the "
                          "best-speed maximum altitude; give cruise or a Mach")
    args.mach = mach_text
    size = parse_size(args.size)
    conditions, _ = cli._conditions_from_args(args)
    catalogue = cli._load(args.catalogue)
    env = envelopes_for_conditions(catalogue, conditions)
    if args.format == "csv":
        sys.stdout.write(cli._clean_floats(env.table).write_csv())
        cli._print_caution(stderr=True)
    elif args.format == "json":
        doc = {"summary": json.loads(cli._clean_floats(env.summary).write_json()),
               "boundaries": json.loads(cli._clean_floats(env.table).write_json())}
        sys.stdout.write(json.dumps(doc) + "\n")
        cli._print_caution(stderr=True)
    else:
        _emit(draw_envelope(env, *size, speed=args.speed, ascii=args.ascii))
        cli._print_caution(stderr=False)
    return cli.EXIT_OK


def _parse_range(text: str, over: str):
    parts = text.split(":")
    if len(parts) != 2 or not all(p.strip() for p in parts):
        raise OptionError(f"--range: cannot use {text.strip()!r}: expected FROM:TO, e.g. 30t:52t, -10:35 or 0.60:0.82")
    if over == "weight":
        lo, hi = (parse_weight(p, "--range") for p in parts)
        if lo.unit != hi.unit:
            raise OptionError("--range: both ends of a weight range must be masses (kg, t, lb) or both %mtow")
        key = lo.value, hi.value
    elif over == "isa":
        lo, hi = (parse_isa_dev(p, "--range") for p in parts)
        key = lo, hi
    else:
        lo, hi = (parse_mach(p, "--range") for p in parts)
        if isinstance(lo, str) or isinstance(hi, str):
            raise OptionError(f"--range: cannot use {text.strip()!r}: a Mach range needs two numbers, e.g. 0.60:0.82")
        key = lo, hi
    if not key[0] < key[1]:
        raise OptionError(f"--range: cannot use {text.strip()!r}: FROM must be below TO")
    return lo, hi


def _run_sweep(args) -> int:
    from variantcmp.envelope import sweep
    from variantcmp.sketch import draw_sweep

    own = {"weight": args.weight, "isa": args.isa, "mach": args.mach}[args.over]
    if own:
        option = {"weight": "--weight", "isa": "--isa", "mach": "--mach"}[args.over]
        raise OptionError(f"{option}: not used when sweeping over {args.over}: give its range with --range FROM:TO")
    try:
        points = int(args.points)
    except ValueError:
        raise OptionError(f"--points: cannot use {args.points!r}: expected a whole number from 2 to 400") from None
    value_range = _parse_range(args.value_range, args.over) if args.value_range else None
    args.mach = args.mach or "cruise"
    size = parse_size(args.size)
    conditions, _ = cli._conditions_from_args(args)
    catalogue = cli._load(args.catalogue)
    result = sweep(catalogue, conditions, args.over, points, value_range)
    if args.format == "csv":
        sys.stdout.write(cli._clean_floats(result.frame).write_csv())
        cli._print_caution(stderr=True)
    elif args.format == "json":
        sys.stdout.write(cli._clean_floats(result.frame).write_json() + "\n")
        cli._print_caution(stderr=True)
    else:
        _emit(draw_sweep(result, *size, ascii=args.ascii))
        cli._print_caution(stderr=False)
    return cli.EXIT_OK
