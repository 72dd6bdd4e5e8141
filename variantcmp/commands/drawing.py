"""Options and output shared by the commands that draw (``envelope``, ``sweep``): drawing size,
ASCII fallback, printing a sketch."""

from __future__ import annotations

import re
import shutil
import sys

from variantcmp.units import OptionError, shown

from . import options, output

DEFAULT_SIZE = (100, 32)
MAX_SIZE = (400, 200)


def add_drawing_options(p, mach_help: str) -> None:
    """The options of a drawing command: selection and conditions as in ``ceilings``, size, ASCII."""
    options.add_catalogue_argument(p)
    options.add_selection(p)
    options.add_conditions(p, mach_default=None, mach_help=mach_help)
    p.add_argument("--size", action=options.Once, metavar="WxH", help="drawing size in characters (default: the terminal's)")
    p.add_argument("--ascii", action="store_true",
                   help="plain ASCII drawing for dumb terminals (the default where TERM=dumb)")
    options.add_format(p, ("sketch", "csv", "json"), "sketch",
                       "sketch (default, a character drawing), csv or json (data only on stdout)")
    p.set_defaults(target=None)


def wants_ascii(args) -> bool:
    """--ascii, or a terminal (or an output encoding) that cannot draw more (TERM=dumb)."""
    from variantcmp.sketch import terminal_wants_ascii

    return bool(args.ascii) or terminal_wants_ascii(encoding=getattr(sys.stdout, "encoding", None))


def wants_mono() -> bool:
    """Each line in its own character where colour cannot tell them apart: NO_COLOR, a dumb
    terminal, or plain text going to a file or a pipe."""
    from variantcmp.sketch import terminal_wants_monochrome

    return terminal_wants_monochrome() or not sys.stdout.isatty()


def parse_size(text: str | None) -> tuple[int, int]:
    """"100x30" -> (100, 30); None -> the terminal's size (or 100x32 when not a terminal)."""
    from variantcmp.sketch import MIN_HEIGHT, MIN_WIDTH

    if text is None:
        cols, rows = shutil.get_terminal_size(DEFAULT_SIZE)
        return max(MIN_WIDTH, min(cols, MAX_SIZE[0])), max(MIN_HEIGHT, min(rows - 2, MAX_SIZE[1]))
    match = re.fullmatch(r"\s*(\d+)\s*[xX×]\s*(\d+)\s*", text)
    expected = f"WIDTHxHEIGHT in characters, from {MIN_WIDTH}x{MIN_HEIGHT} to {MAX_SIZE[0]}x{MAX_SIZE[1]}, e.g. 100x30"
    if not match:
        raise OptionError(f"--size: cannot use {shown(text)}: expected {expected}")
    w, h = int(match.group(1)), int(match.group(2))
    if not (MIN_WIDTH <= w <= MAX_SIZE[0] and MIN_HEIGHT <= h <= MAX_SIZE[1]):
        raise OptionError(f"--size: cannot use {shown(text)}: expected {expected}")
    return w, h


def emit(drawing) -> None:
    """A sketch on stdout: styled on a terminal, plain text otherwise."""
    if sys.stdout.isatty():
        output.console().print(drawing.text(), crop=True, soft_wrap=False)
    else:
        sys.stdout.write("\n".join(line.rstrip() for line in str(drawing).splitlines()) + "\n")
