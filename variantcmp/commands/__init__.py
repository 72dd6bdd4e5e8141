"""The subcommands, one module each, and what they share.

Each command module has ``add(subparsers)`` (its parser, ending with ``set_defaults(run=run)``)
and ``run(args) -> exit status``. Shared: :mod:`.options` (parser pieces, catalogue arguments,
selection and conditions through the :mod:`variantcmp.units` parsers), :mod:`.output` (console,
caution line, CSV/JSON exports at a stated precision, readable tables) and :mod:`.drawing` (the
options and output of the drawing commands). :mod:`variantcmp.cli` registers them in
:data:`COMMANDS` order and turns user errors into one message and exit status 2.
"""

from __future__ import annotations

from . import bench, ceilings, check, cruise, envelope, heaviest, hottest, oei, screen, sensitivity, spread, sweep

#: Subcommand modules, in the order `variantcmp --help` lists them.
COMMANDS = (ceilings, heaviest, hottest, cruise, oei, envelope, sweep, screen, sensitivity, spread, check, bench)
