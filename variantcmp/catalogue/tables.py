"""Checked access to one TOML table: numbers, texts, ids and lists, every problem collected."""

from __future__ import annotations

import math
from typing import Any

from .problems import Problem, describe, did_you_mean, fmt_value
from .schema import ID_PATTERN, ID_RULE, NumberRule


class TableReader:
    """Checked access to one TOML table; every problem goes to the shared list."""

    def __init__(self, raw: dict, where: str, file: str, problems: list[Problem]):
        self.raw = raw
        self.where = where
        self.file = file
        self.problems = problems
        self.bad = False

    def path(self, key: str) -> str:
        return f"{self.where}.{key}" if key else self.where

    def fail(self, key: str, message: str) -> None:
        self.bad = True
        self.problems.append(Problem(self.file, self.path(key), message))

    def has(self, key: str) -> bool:
        return key in self.raw

    def number(self, key: str, rule: NumberRule, required: bool = False) -> float | int | None:
        if key not in self.raw:
            if required:
                self.fail(key, f"missing: expected {rule.what}, {rule.range_text()}")
            return None
        return self.checked_number(key, self.raw[key], rule)

    def checked_number(self, key: str, value: Any, rule: NumberRule) -> float | int | None:
        what = rule.what
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            kind = "a whole number" if rule.integer else "a number"
            self.fail(key, f"expected {kind} ({what}), got {describe(value)}")
            return None
        if rule.integer and not isinstance(value, int):
            self.fail(key, f"expected a whole number ({what}) written without a decimal point, got {value!r}")
            return None
        try:
            x = float(value)
        except OverflowError:
            x = math.copysign(math.inf, value)
        if not math.isfinite(x):
            self.fail(key, f"expected a finite number ({what}), got {describe(x)}")
            return None
        if rule.mach and x >= 1.0:
            self.fail(key, f"expected {what} below 1: the models are subsonic; got {fmt_value(value)}")
            return None
        if not rule.ok(x):
            self.fail(key, f"expected {what}, {rule.range_text()}; got {fmt_value(value)}")
            return None
        return int(value) if rule.integer else x

    def text(self, key: str, what: str, required: bool = False) -> str | None:
        if key not in self.raw:
            if required:
                self.fail(key, f"missing: expected {what}")
            return None
        value = self.raw[key]
        if not isinstance(value, str):
            self.fail(key, f"expected {what} in quotes, got {describe(value)}")
            return None
        if not value.strip():
            self.fail(key, f"expected {what}, got empty text")
            return None
        return value.strip()

    def ident(self, required: bool = True) -> str | None:
        value = self.text("id", f"an id ({ID_RULE})", required=required)
        if value is not None and not ID_PATTERN.fullmatch(value):
            self.fail("id", f"expected an id of {ID_RULE}, got {describe(value)}")
            return None
        return value

    def number_list(self, key: str, rule: NumberRule, increasing: bool, min_len: int = 2) -> tuple[float, ...] | None:
        """A list of numbers; None if absent or bad."""
        if key not in self.raw:
            return None
        value = self.raw[key]
        if not isinstance(value, list):
            self.fail(key, f"expected a list of {rule.what} like [0.4, 0.6], got {describe(value)}")
            return None
        if len(value) < min_len:
            self.fail(key, f"expected at least {min_len} {rule.what}, got {len(value)}")
            return None
        out = [self.checked_number(f"{key}[{i}]", v, rule) for i, v in enumerate(value)]
        if any(x is None for x in out):
            return None
        if increasing:
            for i in range(1, len(out)):
                if not out[i] > out[i - 1]:
                    self.fail(
                        f"{key}[{i}]",
                        f"expected {rule.what} in strictly increasing order, "
                        f"got {fmt_value(out[i])} after {fmt_value(out[i - 1])}",
                    )
                    return None
        return tuple(out)

    def unknown_keys(self, allowed: tuple[str, ...], elsewhere: dict[str, str] | None = None) -> None:
        """Refuse keys not in `allowed`; `elsewhere` maps keys that belong to another kind of table."""
        for key in self.raw:
            if key in allowed:
                continue
            if elsewhere and key in elsewhere:
                self.fail(key, elsewhere[key])
            else:
                self.fail(key, f"unknown key{did_you_mean(key, allowed)}")


def table_path(kind: str, index: int, raw: dict) -> str:
    ident = raw.get("id")
    if isinstance(ident, str) and ID_PATTERN.fullmatch(ident.strip()):
        return f'{kind}[{index}] "{ident.strip()}"'
    return f"{kind}[{index}]"
