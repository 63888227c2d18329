"""The library's layout: one package per stage, imports one way, no circles, short functions.

The import graph is read from the source with :mod:`ast` (every ``import`` and ``from ... import``,
at module level and inside functions alike), not from what Python happens to have loaded, so an
import inside a function counts as much as one at the top.
"""

from __future__ import annotations

import ast
import textwrap
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

#: The stages of a study, highest first: a package imports only from the packages after it.
STAGES = ("outputs", "study", "optics", "site", "ground", "radio", "airfield")
#: Modules at the root of ``geo/``, below every stage; they import only each other.
ROOT_MODULES = ("errors", "units", "version")
#: Longest function allowed in geo/ and cli/, in lines from ``def`` to its end, its docstring aside.
MAX_FUNCTION_LINES = 80


def module_names(top: Path, package: str = "geo") -> dict[str, Path]:
    """Every module below ``top/package`` by dotted name (a package by its own name)."""
    names = {}
    for path in sorted((top / package).rglob("*.py")):
        parts = path.relative_to(top).with_suffix("").parts
        if "vendor" in parts:
            continue
        if parts[-1] == "__init__":
            parts = parts[:-1]
        names[".".join(parts)] = path
    return names


def imported_modules(name: str, path: Path, known: dict[str, Path]) -> set[str]:
    """The modules of ``known`` that module ``name`` imports (a name imported from a package that is
    itself a module counts as that module)."""
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    found = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found.update(a.name for a in node.names)
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                source = ".".join(base + ([node.module] if node.module else []))
            else:
                source = node.module or ""
            for alias in node.names:
                whole = f"{source}.{alias.name}"
                found.add(whole if whole in known else source)
    return {m for m in found if m in known and m != name}


def import_graph(top: Path, package: str = "geo") -> dict[str, set[str]]:
    known = module_names(top, package)
    return {name: imported_modules(name, path, known) for name, path in known.items()}


def circles(graph: dict[str, set[str]]) -> list[list[str]]:
    """The strongly connected components of more than one module, or of one that imports itself
    (Tarjan's algorithm, iterative)."""
    index, low, on_stack, stack, found = {}, {}, set(), [], []
    counter = 0
    for start in sorted(graph):
        if start in index:
            continue
        work = [(start, iter(sorted(graph[start])))]
        index[start] = low[start] = counter
        counter += 1
        stack.append(start)
        on_stack.add(start)
        while work:
            node, children = work[-1]
            child = next(children, None)
            if child is None:
                work.pop()
                if work:
                    low[work[-1][0]] = min(low[work[-1][0]], low[node])
                if low[node] == index[node]:
                    component = []
                    while True:
                        member = stack.pop()
                        on_stack.discard(member)
                        component.append(member)
                        if member == node:
                            break
                    if len(component) > 1 or node in graph[node]:
                        found.append(sorted(component))
            elif child not in index:
                index[child] = low[child] = counter
                counter += 1
                stack.append(child)
                on_stack.add(child)
                work.append((child, iter(sorted(graph[child]))))
            elif child in on_stack:
                low[node] = min(low[node], index[child])
    return found


def rank(module: str) -> int | None:
    """Height of a module's stage (root modules 0, the highest stage the most); None for the
    package ``geo`` itself and for modules outside every stage."""
    parts = module.split(".")
    if len(parts) == 2 and parts[1] in ROOT_MODULES:
        return 0
    if len(parts) >= 2 and parts[1] in STAGES:
        return len(STAGES) - STAGES.index(parts[1])
    return None


def wrong_way(graph: dict[str, set[str]]) -> list[str]:
    """Every import that goes up, sideways to another stage, to the ``geo`` facade, or from a module
    that belongs to no stage."""
    problems = []
    for module, targets in sorted(graph.items()):
        if module == "geo":
            problems += [f"geo/__init__.py imports {t}" for t in sorted(targets) if t != "geo.version"]
            continue
        own = rank(module)
        if own is None:
            problems.append(f"{module} belongs to no stage (stages: {', '.join(STAGES)})")
            continue
        for target in sorted(targets):
            theirs = rank(target)
            same_package = target.split(".")[:2] == module.split(".")[:2]
            if theirs is None:
                problems.append(f"{module} imports {target}, which belongs to no stage")
            elif not same_package and theirs >= own:
                problems.append(f"{module} imports {target}: against the order {' -> '.join(STAGES)} -> root")
    return problems


def long_functions(paths, base: Path = ROOT, limit: int = MAX_FUNCTION_LINES) -> list[str]:
    """Functions (methods and nested ones included) longer than ``limit`` lines, docstrings aside."""
    found = []
    for path in paths:
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if not isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef):
                continue
            lines = node.end_lineno - node.lineno + 1
            first = node.body[0]
            if (
                isinstance(first, ast.Expr)
                and isinstance(first.value, ast.Constant)
                and isinstance(first.value.value, str)
            ):
                lines -= first.end_lineno - first.lineno + 1
            if lines > limit:
                found.append(f"{path.relative_to(base)}:{node.lineno} {node.name} ({lines} lines)")
    return found


def test_the_library_has_no_import_circle():
    assert circles(import_graph(ROOT)) == []


def test_imports_run_one_way_from_the_outputs_down_to_the_root():
    assert wrong_way(import_graph(ROOT)) == []


def test_every_stage_is_a_package_and_nothing_else_stands_at_the_root():
    stages = {p.name for p in (ROOT / "geo").iterdir() if p.is_dir() and (p / "__init__.py").exists()}
    modules = {p.stem for p in (ROOT / "geo").glob("*.py")} - {"__init__"}
    assert stages == set(STAGES)
    assert modules == set(ROOT_MODULES)


def test_the_library_never_imports_the_command_line():
    known = module_names(ROOT, "cli")
    assert "cli.main" in known
    for module, path in module_names(ROOT).items():
        assert not imported_modules(module, path, known), module


def test_tests_mirror_the_stages():
    folders = {p.name for p in (ROOT / "tests").iterdir() if p.is_dir() and any(p.glob("test_*.py"))}
    assert folders == set(STAGES) | {"cli"}


def test_no_function_is_longer_than_the_limit():
    paths = [p for p in sorted((ROOT / "geo").rglob("*.py")) if "vendor" not in p.parts]
    assert long_functions(paths + sorted((ROOT / "cli").glob("*.py"))) == []


def _tree(tmp_path: Path, files: dict[str, str]) -> Path:
    for name, text in files.items():
        path = tmp_path / name
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(textwrap.dedent(text))
    return tmp_path


def test_the_checks_find_a_planted_circle_an_upward_import_and_a_long_function(tmp_path):
    # Each check must be able to fail: a small tree with one fault of each kind.
    top = _tree(
        tmp_path,
        {
            "geo/__init__.py": "",
            "geo/units.py": "",
            "geo/radio/__init__.py": "",
            "geo/radio/a.py": "from geo.radio import b\n",
            "geo/radio/b.py": "def f():\n    from geo.radio.a import x\n",
            "geo/ground/__init__.py": "",
            "geo/ground/dem.py": "import geo.units\n",
            "geo/airfield/__init__.py": "",
            "geo/airfield/frame.py": "def f():\n    from geo.ground.dem import Dem\n",
            "geo/stray.py": "",
            "geo/long.py": "def f():\n    '''Doc.'''\n" + "    x = 1\n" * (MAX_FUNCTION_LINES + 1),
        },
    )
    graph = import_graph(top)
    assert circles(graph) == [["geo.radio.a", "geo.radio.b"]]
    problems = wrong_way(graph)
    assert (
        "geo.airfield.frame imports geo.ground.dem: against the order " + " -> ".join(STAGES) + " -> root" in problems
    )
    assert "geo.stray belongs to no stage (stages: " + ", ".join(STAGES) + ")" in problems
    assert not any(p.startswith("geo.ground.dem") for p in problems)  # down to the root is allowed
    assert long_functions([top / "geo/long.py"], top) == [f"geo/long.py:1 f ({MAX_FUNCTION_LINES + 2} lines)"]
    assert long_functions([top / "geo/radio/a.py"], top) == []


@pytest.mark.parametrize("name", ["run_study", "run_sweep", "derive_areas", "parse_site", "load_site", "StudyResult"])
def test_the_public_names_come_from_geo_itself(name):
    import geo

    assert name in geo.__all__
    assert getattr(geo, name).__name__ == name
