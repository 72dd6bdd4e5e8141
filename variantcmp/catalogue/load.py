"""Reading a catalogue file: bytes -> text -> TOML -> checked records, or one CatalogueError that
lists every problem with the file, the key path and what was expected."""

from __future__ import annotations

import os
import re
import tomllib
from pathlib import Path

from .model import Catalogue, Engine, Variant
from .problems import CatalogueError, Problem, describe, did_you_mean
from .schema import CATALOGUE_KEYS, PROPELLER_MACH_WARNING, TOP_KEYS
from .tables import TableReader, table_path
from .validate import read_engine, read_variant


_TOML_POS = re.compile(r"^(?P<msg>.*?) \(at line (?P<line>\d+), column (?P<col>\d+)\)$", re.S)


def _read_text(path: Path, file: str) -> str | Problem:
    try:
        if not path.exists():
            return Problem(file, "", "no such file: expected a TOML catalogue (.toml)")
        if path.is_dir():
            found = sorted(p.name for p in path.glob("*.toml"))[:5]
            hint = f"; catalogues in it: {', '.join(found)}" if found else ""
            return Problem(file, "", f"is a directory, expected a TOML catalogue file{hint}")
        data = path.read_bytes()
    except PermissionError:
        return Problem(file, "", "cannot be read: permission denied")
    except OSError as exc:
        return Problem(file, "", f"cannot be read: {exc.strerror or exc}")
    if b"\x00" in data:
        return Problem(file, "", "looks like a binary file, expected a TOML catalogue (UTF-8 text)")
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        return Problem(file, "", f"is not UTF-8 text (undecodable byte at offset {exc.start}): "
                                 "expected a TOML catalogue saved as UTF-8")  # fmt: skip
    if not text.strip():
        return Problem(file, "", "the file is empty: expected [catalogue], [[engine]] and [[variant]] tables")
    return text


def _parse(text: str, file: str) -> dict | Problem:
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        m = _TOML_POS.match(str(exc))
        if m:
            line = int(m["line"])
            lines = text.splitlines()
            shown = lines[line - 1].strip() if 0 < line <= len(lines) else ""
            near = f" (the line reads: {shown[:60]})" if shown else ""
            return Problem(file, f"line {line}, column {m['col']}", f"TOML syntax error: {m['msg']}{near}")
        return Problem(file, "", f"TOML syntax error: {exc}")
    except RecursionError:
        return Problem(file, "", "TOML syntax error: values nested too deeply")
    except ValueError as exc:  # e.g. an integer with more digits than Python converts
        return Problem(file, "", f"TOML value cannot be read: {exc}")


def _tables(doc: dict, kind: str, file: str, problems: list[Problem]) -> list[dict]:
    raw = doc.get(kind)
    if raw is None:
        return []
    if isinstance(raw, dict):
        problems.append(Problem(file, kind, f"expected one or more [[{kind}]] tables (double brackets), "
                                            f"got a single [{kind}] table"))  # fmt: skip
        return []
    if not isinstance(raw, list) or not all(isinstance(x, dict) for x in raw):
        problems.append(Problem(file, kind, f"expected [[{kind}]] tables, got {describe(raw)}"))
        return []
    return raw


def load_catalogue(path: str | os.PathLike) -> Catalogue:
    """Read and check a TOML catalogue; raise CatalogueError listing every problem."""
    file = os.fspath(path)
    if isinstance(file, bytes):
        file = os.fsdecode(file)
    p = Path(file)
    got = _read_text(p, file)
    if isinstance(got, Problem):
        raise CatalogueError([got])
    doc = _parse(got, file)
    if isinstance(doc, Problem):
        raise CatalogueError([doc])

    problems: list[Problem] = []
    for key in doc:
        if key not in TOP_KEYS:
            problems.append(Problem(file, key, f"unknown top-level key or table{did_you_mean(key, TOP_KEYS)} "
                                               "(a catalogue holds [catalogue], [[engine]] and [[variant]])"))  # fmt: skip

    title, description = "", ""
    head = doc.get("catalogue")
    if head is None:
        problems.append(Problem(file, "catalogue", 'missing: expected a [catalogue] table with title = "..."'))
    elif not isinstance(head, dict):
        problems.append(Problem(file, "catalogue", f"expected a [catalogue] table, got {describe(head)}"))
    else:
        t = TableReader(head, "catalogue", file, problems)
        t.unknown_keys(CATALOGUE_KEYS)
        title = t.text("title", "a title (free text)", required=True) or ""
        description = t.text("description", "a description (free text)") or ""

    engine_raw = _tables(doc, "engine", file, problems)
    variant_raw = _tables(doc, "variant", file, problems)
    if not engine_raw and not any(p.key == "engine" for p in problems):
        problems.append(Problem(file, "engine", "missing: expected at least one [[engine]] table"))
    all_engine_ids = {r["id"].strip() for r in engine_raw if isinstance(r.get("id"), str)}

    engines: dict[str, Engine] = {}
    for i, raw in enumerate(engine_raw):
        t = TableReader(raw, table_path("engine", i, raw), file, problems)
        eng = read_engine(t)
        if eng is not None and eng.id not in engines:
            engines[eng.id] = eng
    _duplicates(engine_raw, "engine", file, problems)

    if not variant_raw and not any(p.key == "variant" for p in problems):
        problems.append(Problem(file, "variant", "missing: expected at least one [[variant]] table"))
    variants: dict[str, Variant] = {}
    for i, raw in enumerate(variant_raw):
        t = TableReader(raw, table_path("variant", i, raw), file, problems)
        var = read_variant(t, all_engine_ids)
        if var is not None and var.id not in variants:
            variants[var.id] = var
    _duplicates(variant_raw, "variant", file, problems)

    if problems:
        raise CatalogueError(problems)
    return Catalogue(path=p, title=title, description=description, engines=engines, variants=variants,
                     warnings=tuple(_warnings(file, variant_raw, variants, engines)))


def _warnings(file: str, variant_raw: list[dict], variants: dict[str, Variant], engines: dict[str, Engine]):
    """What is valid but doubtful: a propeller engine option on a variant that cruises faster than
    propellers work (common practice, no source: their efficiency collapses above about M0.7)."""
    for i, raw in enumerate(variant_raw):
        v = variants.get(str(raw.get("id", "")).strip())
        if v is None or v.cruise_mach <= PROPELLER_MACH_WARNING:
            continue
        props = [e for e in v.engine_options if engines[e].is_propeller]
        if props:
            yield Problem(file, f"{table_path('variant', i, raw)}.cruise_mach",
                          f"warning: cruise Mach {v.cruise_mach:g} with turboprop option(s) {', '.join(props)}: "
                          f"propeller efficiency collapses above about M{PROPELLER_MACH_WARNING:g}; treat those "
                          "answers with doubt")


def _duplicates(raws: list[dict], kind: str, file: str, problems: list[Problem]) -> None:
    """Refuse an id used by two tables of the same kind (even when the first is itself invalid)."""
    seen: dict[str, int] = {}
    for i, raw in enumerate(raws):
        ident = raw.get("id")
        if not isinstance(ident, str):
            continue
        ident = ident.strip()
        if ident in seen:
            problems.append(Problem(file, f"{table_path(kind, i, raw)}.id",
                                    f'duplicate {kind} id "{ident}" ({kind}[{seen[ident]}] has it too): '
                                    "ids must be unique"))  # fmt: skip
        else:
            seen[ident] = i
