"""The house rules of DEVELOPERS.md that a machine can check: no module over 600 lines, no import
circle, no private name (leading underscore) imported from another module, tests included. House rules of this
project, no external source."""

import ast
from pathlib import Path

PACKAGE = Path(__file__).resolve().parent.parent / "variantcmp"
MAX_LINES = 600


def _modules() -> dict[str, Path]:
    found = {}
    for path in PACKAGE.rglob("*.py"):
        parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
        name = ".".join(parts[:-1] if parts[-1] == "__init__" else parts)
        found[name] = path
    return found


def _imports(name: str, path: Path, modules: dict[str, Path]):
    """(imported module, names taken from it) for each import in the module, resolved to modules of
    the package."""
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            names = [a.name for a in node.names]
            plain = [n for n in names if f"{target}.{n}" not in modules]  # names, not submodules
            if target in modules and plain:
                yield target, plain
            for n in names:
                if f"{target}.{n}" in modules:
                    yield f"{target}.{n}", []
        elif isinstance(node, ast.Import):
            for a in node.names:
                if a.name in modules:
                    yield a.name, []


def test_no_module_is_over_600_lines():
    long = {name: n for name, path in _modules().items()
            if (n := len(path.read_text(encoding="utf-8").splitlines())) > MAX_LINES}
    assert not long


def test_no_private_name_is_used_across_modules():
    modules = _modules()
    crossing = [(name, target, n) for name, path in modules.items() for target, names in _imports(name, path, modules)
                for n in names if n.startswith("_") and target != name]
    for path in Path(__file__).parent.glob("*.py"):  # the tests too
        crossing += [(path.name, target, n) for target, names in _imports("tests", path, modules)
                     for n in names if n.startswith("_")]
    assert not crossing


def test_no_import_circle():
    modules = _modules()
    graph = {name: {t for t, _ in _imports(name, path, modules) if t != name} for name, path in modules.items()}
    state: dict[str, int] = {}  # 1 on the current path, 2 done

    def visit(node, trail):
        state[node] = 1
        for nxt in sorted(graph[node]):
            if state.get(nxt) == 1:
                raise AssertionError("import circle: " + " -> ".join(trail[trail.index(nxt):] + [nxt]))
            if nxt not in state:
                visit(nxt, trail + [nxt])
        state[node] = 2

    for start in sorted(graph):
        if start not in state:
            visit(start, [start])
