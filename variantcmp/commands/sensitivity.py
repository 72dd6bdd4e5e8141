"""``variantcmp sensitivity``: how much each case's maximum altitude moves per +1 % of CD0, K,
thrust and weight and per +1 deg C of ISA deviation."""

from __future__ import annotations

from . import options, output
from .case_rows import case_columns, case_table, note_column, signed
from .ceilings import caption
from .output import Column

EPILOG = """\
examples:
  variantcmp sensitivity --weight 90%mtow,100%mtow --isa=0,15
  variantcmp sensitivity --mach best --climb absolute --format csv > sensitivity.csv

Each figure is the change of the maximum altitude for +1 % of the value (d h / d ln x x 0.01;
per +1 degree C for the ISA deviation), by central differences: the case solved at x e^(+-0.01)
(and ISA deviation +-1 C) with everything else kept. 0 where a flat limit (certified, cabin)
binds on both sides; no value where the case or a perturbed copy has no maximum altitude.
"""

COLUMNS = (("ft_per_pct_cd0", "CD0\nft/+1%"), ("ft_per_pct_k", "K\nft/+1%"), ("ft_per_pct_thrust", "Thrust\nft/+1%"),
           ("ft_per_pct_weight", "Weight\nft/+1%"), ("ft_per_c_isa", "ISA\nft/+1°C"))
DROP_FOR_WIDTH = ("pct_mtow", "mach")
LEGEND = ("Change of the maximum altitude per +1 % of each value (per +1 °C for ISA), other values kept; "
          "— = no value (the case or a perturbed copy of it has no maximum altitude, see the note).")


def add(subparsers) -> None:
    p = options.add_command(
        subparsers, "sensitivity",
        help="change of each maximum altitude per +1 %% of CD0, K, thrust, weight and per +1 C",
        description="For every variant x engine x weight x ISA deviation, how many feet the maximum altitude "
                    "moves per +1 % of the zero-lift drag CD0, of the induced-drag factor K, of thrust and of "
                    "weight, and per +1 degree C of ISA deviation: what the answer depends on most.",
        epilog=EPILOG)
    options.add_catalogue_argument(p)
    options.add_selection(p)
    options.add_conditions(p)
    options.add_format(p)
    p.set_defaults(run=run)


def run(args) -> int:
    from variantcmp.table.perturbations import sensitivity_table

    conditions, climb_labels = options.conditions_from_args(args)
    catalogue = options.load(args.catalogue)
    conditions = options.selected(catalogue, conditions)
    frame = sensitivity_table(catalogue, conditions)
    if args.format in ("csv", "json"):
        output.write_data(frame, args.format)
        return options.EXIT_OK
    columns, cells = case_columns(conditions, frame)
    for key, header in COLUMNS:
        columns.append(Column(key, header))
        cells[key] = [signed(v) for v in frame[key].to_list()]
    note_column(columns, cells, frame["note"].to_list())
    output.print_table(case_table(frame, columns, cells), f"{catalogue.title}: sensitivity of the maximum altitude",
                       [caption(conditions, climb_labels), LEGEND], DROP_FOR_WIDTH)
    output.print_caution(stderr=False)
    return options.EXIT_OK
