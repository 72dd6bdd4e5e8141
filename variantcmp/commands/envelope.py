"""``variantcmp envelope``: the speed-altitude envelope of up to three cases, drawn or as a table."""

from __future__ import annotations

import json
import sys

from variantcmp.units import OptionError, parse_mach

from . import drawing, options, output

EPILOG = """\
examples:
  variantcmp envelope --variant v88 --engine ossel-78 --weight 45t --isa 0
  variantcmp envelope --variant v88 --weight 90%mtow --isa=+15 --speed cas --size 120x40
  variantcmp envelope --variant v104 --engine brannick-74 --weight mtow --isa 0 --format csv

Up to three cases (variant x engine x weight x ISA deviation x climb) are overlaid as their
feasible bands; one case is drawn with every boundary. --mach sets the marked Mach line
(default: the variant's cruise Mach).
"""


def add(subparsers) -> None:
    p = options.add_command(
        subparsers, "envelope",
        help="speed-altitude envelope of a variant x engine at a weight and ISA deviation",
        description="Draw the speed-altitude envelope: stall, buffet onset at 1 g and at the margin, "
                    "thrust-limited minimum and maximum speed at the residual climb, MMO and VMO, the top "
                    "where the feasible band closes and the highest altitude on the cruise-Mach line.",
        epilog=EPILOG)
    drawing.add_drawing_options(p, "Mach of the marked line: cruise (default) or a Mach")
    p.add_argument("--speed", action=options.Once, type=options.keyword("mach", "tas", "cas"), default="mach",
                   help="speed axis: mach (default), tas or cas (knots)")
    p.set_defaults(run=run)


def run(args) -> int:
    from variantcmp.envelope import envelopes_for_conditions
    from variantcmp.sketch import draw_envelope

    if not args.variant:
        raise OptionError("--variant: expected a variant id (envelope draws one to three cases)")
    args.mach = args.mach or "cruise"
    if parse_mach(args.mach, "--mach") == "best":
        raise OptionError("--mach: cannot use 'best' for the marked line: the envelope's top already is the "
                          "best-speed maximum altitude; give cruise or a Mach")
    size = drawing.parse_size(args.size)
    conditions, _ = options.conditions_from_args(args)
    catalogue = options.load(args.catalogue)
    conditions = options.selected(catalogue, conditions)
    env = envelopes_for_conditions(catalogue, conditions)
    if args.format == "csv":
        output.write_data(env.table, "csv")
    elif args.format == "json":
        doc = {"summary": json.loads(output.for_export(env.summary).write_json()),
               "boundaries": json.loads(output.for_export(env.table).write_json())}
        sys.stdout.write(json.dumps(doc) + "\n")
        output.print_caution(stderr=True)
    else:
        drawing.emit(draw_envelope(env, *size, speed=args.speed, ascii=drawing.wants_ascii(args),
                                   mono=drawing.wants_mono()))
        output.print_caution(stderr=False)
    return options.EXIT_OK
