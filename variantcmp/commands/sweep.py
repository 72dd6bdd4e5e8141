"""``variantcmp sweep``: the maximum altitude against weight, ISA deviation or Mach, per option."""

from __future__ import annotations

from variantcmp.units import OptionError, parse_isa_dev, parse_mach, parse_weight, shown

from . import drawing, options, output

EPILOG = """\
examples:
  variantcmp sweep --over weight --variant v88 --isa 0
  variantcmp sweep --over isa --variant v104 --weight mtow --range=-10:35
  variantcmp sweep --over mach --variant v70 --weight 90%mtow --format csv

--range FROM:TO sets the swept quantity's range: weights (kg, t, lb or %mtow), ISA deviations
(degrees C) or Mach numbers. Defaults: each variant's OEW to MTOW; ISA-20 to ISA+40; each
case's speed range. The binding limit is written along each curve.
"""
MAX_POINTS = 400


def add(subparsers) -> None:
    p = options.add_command(
        subparsers, "sweep",
        help="maximum altitude against weight, ISA deviation or Mach, with the binding limit",
        description="Sweep one quantity and draw how the maximum altitude moves, per variant x engine, "
                    "naming the binding limit along each curve.",
        epilog=EPILOG)
    p.add_argument("--over", required=True, action=options.Once, type=options.keyword("weight", "isa", "mach"),
                   help="quantity to sweep: weight, isa or mach")
    drawing.add_drawing_options(p, "fixed Mach, best or cruise (default) for weight and ISA sweeps")
    p.add_argument("--range", dest="value_range", action=options.Once, metavar="FROM:TO",
                   help="range of the swept quantity")
    p.add_argument("--points", action=options.Once, default="31", metavar="N", help="points along each curve (default: 31)")
    p.set_defaults(run=run)


def parse_range(text: str, over: str):
    parts = text.split(":")
    if len(parts) != 2 or not all(p.strip() for p in parts):
        raise OptionError(f"--range: cannot use {shown(text)}: expected FROM:TO, e.g. 30t:52t, -10:35 or 0.60:0.82")
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
            raise OptionError(f"--range: cannot use {shown(text)}: a Mach range needs two numbers, e.g. 0.60:0.82")
        key = lo, hi
    if not key[0] < key[1]:
        raise OptionError(f"--range: cannot use {shown(text)}: FROM must be below TO")
    return lo, hi


def run(args) -> int:
    from variantcmp.envelope import sweep
    from variantcmp.sketch import draw_sweep

    own = {"weight": args.weight, "isa": args.isa, "mach": args.mach}[args.over]
    if own:
        option = {"weight": "--weight", "isa": "--isa", "mach": "--mach"}[args.over]
        raise OptionError(f"{option}: not used when sweeping over {args.over}: give its range with --range FROM:TO")
    try:
        points = int(args.points)
    except ValueError:
        points = 0
    if not 2 <= points <= MAX_POINTS:
        raise OptionError(f"--points: cannot use {shown(args.points)}: expected a whole number from 2 to {MAX_POINTS}")
    value_range = parse_range(args.value_range, args.over) if args.value_range else None
    args.mach = args.mach or "cruise"
    size = drawing.parse_size(args.size)
    conditions, _ = options.conditions_from_args(args)
    catalogue = options.load(args.catalogue)
    conditions = options.selected(catalogue, conditions)
    result = sweep(catalogue, conditions, args.over, points, value_range)
    if args.format in ("csv", "json"):
        output.write_data(result.frame, args.format)
    else:
        drawing.emit(draw_sweep(result, *size, ascii=drawing.wants_ascii(args),
                                   mono=drawing.wants_mono()))
        output.print_caution(stderr=False)
    return options.EXIT_OK
