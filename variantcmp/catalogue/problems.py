"""Catalogue problems and the wording of their messages (what the user wrote, "did you mean")."""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass
from typing import Any


@dataclass(frozen=True)
class Problem:
    """One thing wrong with a catalogue."""

    file: str
    key: str  # key path like 'variant[2] "vr-104".wing_area_m2', or "" for the whole file
    message: str

    def __str__(self) -> str:
        return f"{self.file}: {self.key}: {self.message}" if self.key else f"{self.file}: {self.message}"


class CatalogueError(Exception):
    """A catalogue that cannot be used; `problems` lists every reason at once."""

    def __init__(self, problems: list[Problem]):
        self.problems = list(problems)
        super().__init__(str(self))

    def __str__(self) -> str:
        return "\n".join(str(p) for p in self.problems)


def fmt_value(x: Any) -> str:
    """A number as a person would write it in a message."""
    if isinstance(x, bool):
        return "true" if x else "false"
    if isinstance(x, int) or (isinstance(x, float) and math.isfinite(x) and x.is_integer() and abs(x) < 1e15):
        return f"{int(x):,}"
    if isinstance(x, float):
        return repr(x)
    return str(x)


def describe(value: Any) -> str:
    """What the user wrote, for a 'got ...' phrase."""
    if isinstance(value, bool):
        return f"the boolean {fmt_value(value)}"
    if isinstance(value, (int, float)):
        return fmt_value(value)
    if isinstance(value, str):
        shown = value if len(value) <= 40 else value[:37] + "..."
        return f"the text {shown!r}"
    if isinstance(value, list):
        return f"a list of {len(value)} item{'s' if len(value) != 1 else ''}"
    if isinstance(value, dict):
        return "a table"
    return f"a date/time ({value})"


def did_you_mean(key: str, allowed: tuple[str, ...]) -> str:
    close = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
    return f'; did you mean "{close[0]}"?' if close else ""
