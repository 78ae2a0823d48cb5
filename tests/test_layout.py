"""The package's layout: every module lives in an area, and imports flow one way between areas.

The areas and their order are the project's own design (each area's ``__init__`` docstring
says what it may import): physics <- images <- estimation <- firinglog <- shell, with the
synthetic renderer beside them, importing the lower three and imported by none. Imports inside
functions count as much as those at the top: a lazy import still makes a dependency.
"""

import ast
from pathlib import Path

import pytest

import glowtemp
import glowtemp.web

PACKAGE_DIR = Path(glowtemp.__file__).parent
WEB_DIR = Path(glowtemp.web.__file__).parent
LAYERS = ("physics", "images", "estimation", "firinglog", "shell")
RENDER = "render"
RENDER_MAY_IMPORT = {"physics", "images", "estimation", RENDER}


def _module_name(path: Path, root: Path, package: str) -> str:
    parts = list(path.relative_to(root).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join([package, *parts])


def _imported(tree: ast.AST, module: str, is_package: bool) -> set[str]:
    """The glowtemp modules a module's code imports (``from x import name`` counts ``x.name``
    where that is a module of the package, else ``x``)."""
    package = module if is_package else module.rpartition(".")[0]
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.rsplit(".", node.level - 1)[0] if node.level > 1 else package
                target = f"{base}.{node.module}" if node.module else base
            else:
                target = node.module
            found.add(target)
            found.update(f"{target}.{alias.name}" for alias in node.names)
    return {name for name in found if name == "glowtemp" or name.startswith("glowtemp.")}


def import_graph() -> dict[str, set[str]]:
    """Each module of glowtemp (the web app included) and the package modules it imports."""
    sources = {}
    for root, package in ((PACKAGE_DIR, "glowtemp"), (WEB_DIR, "glowtemp.web")):
        for path in root.rglob("*.py"):
            sources[_module_name(path, root, package)] = path
    graph = {}
    for module, path in sources.items():
        names = _imported(ast.parse(path.read_text(encoding="utf-8")), module, path.name == "__init__.py")
        graph[module] = {name for name in names if name in sources and name != module}
    return graph


def area_of(module: str) -> str | None:
    """``glowtemp.<area>.<module>``'s area; the web app is a shell; None for the top package."""
    parts = module.split(".")
    if len(parts) < 2:
        return None
    return "shell" if parts[1] == "web" else parts[1]


def wrong_way(graph: dict[str, set[str]]) -> list[str]:
    """Every import that goes against the areas' order, as ``importer -> imported``."""
    problems = []
    for importer, imported in graph.items():
        for target in imported:
            source_area, target_area = area_of(importer), area_of(target)
            if source_area is None or target_area is None or source_area == target_area:
                continue
            if source_area == RENDER:
                allowed = target_area in RENDER_MAY_IMPORT
            elif target_area == RENDER:
                allowed = False
            else:
                allowed = LAYERS.index(target_area) <= LAYERS.index(source_area)
            if not allowed:
                problems.append(f"{importer} -> {target}")
    return sorted(problems)


def circles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Import circles: strongly connected groups of more than one module (Tarjan 1972)."""
    index, low, stack, on_stack, found = {}, {}, [], set(), []

    def visit(module):
        index[module] = low[module] = len(index)
        stack.append(module)
        on_stack.add(module)
        for target in graph.get(module, ()):
            if target not in index:
                visit(target)
                low[module] = min(low[module], low[target])
            elif target in on_stack:
                low[module] = min(low[module], index[target])
        if low[module] == index[module]:
            group = []
            while True:
                member = stack.pop()
                on_stack.discard(member)
                group.append(member)
                if member == module:
                    break
            if len(group) > 1:
                found.append(sorted(group))

    for module in sorted(graph):
        if module not in index:
            visit(module)
    return found


def test_every_module_lives_in_an_area():
    areas = set(LAYERS) | {RENDER}
    strays = [module for module in import_graph() if module != "glowtemp" and area_of(module) not in areas]
    assert strays == []


def test_imports_flow_one_way_between_areas():
    assert wrong_way(import_graph()) == []


def test_no_import_circles():
    assert circles(import_graph()) == []


@pytest.mark.parametrize(
    "graph, expected",
    [
        ({"glowtemp.physics.locus": {"glowtemp.images.photo"}}, ["glowtemp.physics.locus -> glowtemp.images.photo"]),
        ({"glowtemp.estimation.reading": {"glowtemp.render.synthetic"}}, ["glowtemp.estimation.reading -> glowtemp.render.synthetic"]),
        ({"glowtemp.render.heldout": {"glowtemp.firinglog.logbook"}}, ["glowtemp.render.heldout -> glowtemp.firinglog.logbook"]),
        ({"glowtemp.firinglog.logbook": {"glowtemp.web.api"}}, ["glowtemp.firinglog.logbook -> glowtemp.web.api"]),
        ({"glowtemp.shell.cli": {"glowtemp.web", "glowtemp.firinglog.logbook"}}, []),
    ],
)
def test_the_direction_check_catches_a_wrong_import(graph, expected):
    assert wrong_way(graph) == expected


def test_the_circle_check_catches_a_circle():
    graph = {"glowtemp.images.photo": {"glowtemp.images.raw"}, "glowtemp.images.raw": {"glowtemp.images.photo"}}
    assert circles(graph) == [["glowtemp.images.photo", "glowtemp.images.raw"]]
    assert circles({"glowtemp.images.photo": {"glowtemp.images.decoded"}, "glowtemp.images.decoded": set()}) == []


def test_relative_imports_resolve_to_modules():
    tree = ast.parse("from ..physics.locus import x\nfrom . import raw\nfrom .decoded import Photo\n")
    names = _imported(tree, "glowtemp.images.photo", is_package=False)
    assert {"glowtemp.physics.locus", "glowtemp.images.raw", "glowtemp.images.decoded"} <= names
