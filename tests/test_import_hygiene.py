"""The layers import one way, as DEVELOPERS.md states them, and nothing loads what it must not.

    tui       -> report, store, records, engine, units, row_error
    report    -> engine, units, row_error (and config, the user's config file)
    store     -> records, engine, row_error
    records   -> units, engine, row_error
    engine    -> nothing of ours
    units     -> nothing of ours
    row_error -> nothing of ours (a refused field, named by records and store alike)
    out_path  -> nothing of ours (an output that is a device or a pipe; report and commands)
    commands -> any layer below the interface (thin: parse, call, print), never cli.py, and one
                command never imports another (shared helpers live in modules that are no command)
    cli      -> commands (and the interface, to open it)

The imports are read from the source (every import statement, at the top or inside a function),
so a back edge is caught even where it is only imported when used. Also: no import cycle inside
fieldcheck/, and no module imports another module's private (underscore) names.
"""

from __future__ import annotations

import ast
import subprocess
import sys
from functools import cache
from pathlib import Path

import pytest

PKG = Path(__file__).resolve().parents[1] / "fieldcheck"

# layer -> the layers it may import (its own always)
ALLOWED: dict[str, set[str]] = {
    "engine": set(),
    "units": set(),
    "config": set(),  # the user's config file (report title block, defaults)
    "row_error": set(),  # RowError: the store names it without loading records or the engine
    "out_path": set(),  # a file or a device/pipe: the report and the commands write outputs
    "records": {"units", "engine", "row_error"},
    "store": {"records", "engine", "row_error"},
    "report": {"engine", "units", "config", "row_error", "out_path"},
    "tui": {"report", "store", "records", "engine", "units", "config", "row_error", "out_path"},
    "commands": {
        "tui",
        "report",
        "store",
        "records",
        "engine",
        "units",
        "config",
        "row_error",
        "out_path",
    },
    "cli": {"commands", "tui"},
    "root": set(),  # fieldcheck/__init__.py: the version
    "main": {"cli"},  # python -m fieldcheck
}
# every layer may read the package's version (fieldcheck/__init__.py)
ROOT = "fieldcheck"


def _module_name(path: Path) -> str:
    rel = path.relative_to(PKG.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _layer(module: str) -> str:
    parts = module.split(".")
    if len(parts) == 1:
        return "root"
    top = parts[1]
    return {"__main__": "main"}.get(top, top)


def _modules() -> dict[str, Path]:
    return {_module_name(p): p for p in sorted(PKG.rglob("*.py"))}


MODULES = _modules()


def _resolve(importer: str, node: ast.ImportFrom) -> str:
    if not node.level:
        return node.module or ""
    base = importer.split(".")
    is_pkg = MODULES.get(importer, Path()).name == "__init__.py"
    base = base if is_pkg else base[:-1]
    base = base[: len(base) - (node.level - 1)]
    return ".".join(base + ([node.module] if node.module else []))


@cache
def _imports(module: str) -> list[tuple[str, list[str], int]]:
    """(imported module, names imported from it, line) for every import of ours in a module."""
    tree = ast.parse(MODULES[module].read_text(encoding="utf-8"))
    typing_only = {
        id(n)
        for block in ast.walk(tree)
        if isinstance(block, ast.If) and "TYPE_CHECKING" in ast.unparse(block.test)
        for stmt in block.body
        for n in ast.walk(stmt)
    }
    out = []
    for node in ast.walk(tree):
        if id(node) in typing_only:  # for type checkers only: never imported when running
            continue
        if isinstance(node, ast.Import):
            out.extend((a.name, [], node.lineno) for a in node.names if _ours(a.name))
        elif isinstance(node, ast.ImportFrom):
            target = _resolve(module, node)
            if not _ours(target):
                continue
            names = [a.name for a in node.names]
            subs = [n for n in names if f"{target}.{n}" in MODULES]
            if subs:  # from fieldcheck.engine import rating: the submodule is what is imported
                out.extend((f"{target}.{n}", [], node.lineno) for n in subs)
                names = [n for n in names if n not in subs]
            if names or not subs:
                out.append((target, names, node.lineno))
    return out


def _ours(name: str) -> bool:
    return name == ROOT or name.startswith(ROOT + ".")


@cache
def _is_command(module: str) -> bool:
    """A subcommand module: it defines run(args) (helpers such as log_option do not)."""
    if not module.startswith("fieldcheck.commands.") or module not in MODULES:
        return False
    tree = ast.parse(MODULES[module].read_text(encoding="utf-8"))
    return any(isinstance(n, ast.FunctionDef) and n.name == "run" for n in tree.body)


def layer_violations() -> list[str]:
    bad = []
    for module in MODULES:
        own = _layer(module)
        for target, _names, line in _imports(module):
            there = _layer(target)
            if target == ROOT or there == own:
                continue
            if there not in ALLOWED[own]:
                bad.append(f"{module}:{line} imports {target} ({own} -> {there})")
    return bad


def command_violations() -> list[str]:
    bad = []
    for module in MODULES:
        if not module.startswith("fieldcheck.commands"):
            continue
        for target, _names, line in _imports(module):
            if target == "fieldcheck.cli":
                bad.append(f"{module}:{line} imports the CLI (usage errors: commands.usage)")
            elif _is_command(module) and _is_command(target) and target != module:
                bad.append(f"{module}:{line} imports another command, {target}")
    return bad


def private_violations() -> list[str]:
    bad = []
    for module in MODULES:
        for target, names, line in _imports(module):
            if target == module:
                continue
            bad.extend(
                f"{module}:{line} imports {target}.{n}"
                for n in names
                if n.startswith("_") and not n.startswith("__")
            )
            last = target.rsplit(".", 1)[-1]
            if last.startswith("_") and not last.startswith("__"):
                bad.append(f"{module}:{line} imports the private module {target}")
    return bad


def import_cycles() -> list[list[str]]:
    """Strongly connected groups of modules (Tarjan); a package's __init__ counts as a module."""
    graph = {m: {t for t, _, _ in _imports(m) if t in MODULES and t != m} for m in MODULES}
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on: set[str] = set()
    found: list[list[str]] = []

    def visit(v: str) -> None:
        index[v] = low[v] = len(index)
        stack.append(v)
        on.add(v)
        for w in graph[v]:
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            group = []
            while True:
                w = stack.pop()
                on.discard(w)
                group.append(w)
                if w == v:
                    break
            if len(group) > 1:
                found.append(sorted(group))

    for v in graph:
        if v not in index:
            visit(v)
    return found


def test_layers_import_one_way():
    assert layer_violations() == []


def test_commands_are_thin_and_apart():
    assert command_violations() == []


def test_no_private_imports_across_modules():
    assert private_violations() == []


def test_no_import_cycles():
    assert import_cycles() == []


def test_the_checks_see_a_back_edge():
    # the reader itself: a known import is found, resolved and placed in its layer
    found = {t for t, _, _ in _imports("fieldcheck.engine.rating")}
    assert "fieldcheck.engine.column" in found
    assert _layer("fieldcheck.report.html") == "report"
    assert "store" not in ALLOWED["report"] and "tui" not in ALLOWED["store"]
    assert _is_command("fieldcheck.commands.rate") and not _is_command("fieldcheck.commands")


@pytest.mark.parametrize(
    "module",
    [
        "fieldcheck.engine.rating",
        "fieldcheck.engine.batch",
        "fieldcheck.units",
        "fieldcheck.records",
        "fieldcheck.store",
        "fieldcheck.cli",
    ],
)
def test_no_textual(module):
    # engine, units, records, store and the CLI itself never load Textual (the interface does)
    code = f"import sys, {module}; print('textual' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


def test_engine_has_no_pint_or_sqlite():
    code = (
        "import sys, fieldcheck.engine.rating, fieldcheck.engine.nds, fieldcheck.engine.restraint;"
        "print(any(m in sys.modules for m in ('pint', 'sqlite3', 'sqlite_utils', 'textual')))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


def test_opening_a_log_loads_neither_records_nor_the_engine(tmp_path):
    # the store names refused fields with fieldcheck.row_error, which imports nothing of ours
    code = (
        "import sys; from fieldcheck.store import Log;"
        "Log.open(sys.argv[1]).close();"
        "print(sorted(m for m in sys.modules if m.startswith(('fieldcheck.records',"
        " 'fieldcheck.engine'))))"
    )
    path = str(tmp_path / "light.fieldcheck")
    out = subprocess.run(
        [sys.executable, "-c", code, path], capture_output=True, text=True, check=True
    )
    assert out.stdout.strip() == "[]"
