"""The layer rule, checked: the core is pure, planning is pure, only the edges do I/O.

Reads each module's source with ``ast`` rather than importing it, so the check also covers
imports made inside functions.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "siderod"

ASTRO_MODULES = sorted((PACKAGE / "astro").glob("*.py"))
# The folders show the layers: astro/ is the pure core, plan/ is pure planning, common/ holds the
# records and errors every layer shares (pure too); files/, service/, view/ and cli/ are the edges.
PLANNING_MODULES = sorted((PACKAGE / "plan").glob("*.py")) + [PACKAGE / "common" / name
                                                               for name in ("model.py", "errors.py")]

# What the pure layers must never reach for.
IO_MODULES = {"asyncio", "sqlite3", "socket", "subprocess", "apscheduler", "desktop_notifier", "dbus_fast",
              "rich", "logging", "siderod.service", "siderod.cli", "siderod.view", "siderod.files"}
# Reference libraries are for tests only (icalendar is a runtime dependency since it writes --ics).
TEST_ONLY_MODULES = {"erfa", "astropy", "astropy_iers_data", "skyfield", "hypothesis", "pytest"}
CLOCK_READS = {("datetime", "now"), ("datetime", "utcnow"), ("datetime", "today"), ("date", "today"),
               ("time", "time"), ("time", "time_ns"), ("time", "monotonic"), ("time", "perf_counter"),
               ("os", "environ"), ("os", "getenv")}


def _imports(tree: ast.AST) -> set[str]:
    names = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            names.add(node.module)
    return names


def _attribute_reads(tree: ast.AST) -> set[tuple[str, str]]:
    reads = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Attribute) and isinstance(node.value, ast.Name):
            reads.add((node.value.id, node.attr))
    return reads


def _banned(imported: set[str], banned: set[str]) -> set[str]:
    return {name for name in imported for bad in banned if name == bad or name.startswith(bad + ".")}


@pytest.mark.parametrize("path", ASTRO_MODULES + PLANNING_MODULES, ids=lambda p: p.name)
def test_pure_layers_do_no_io_and_read_no_clock(path):
    if not path.exists():
        pytest.skip(f"{path.name} not present")
    tree = ast.parse(path.read_text(), filename=str(path))
    assert not _banned(_imports(tree), IO_MODULES | TEST_ONLY_MODULES), path.name
    assert not (_attribute_reads(tree) & CLOCK_READS), path.name
    assert "open(" not in path.read_text().replace("fileobj", ""), f"{path.name} opens files itself"


@pytest.mark.parametrize("path", sorted(PACKAGE.rglob("*.py")), ids=lambda p: str(p.relative_to(PACKAGE)))
def test_runtime_never_imports_reference_libraries(path):
    tree = ast.parse(path.read_text(), filename=str(path))
    assert not _banned(_imports(tree), TEST_ONLY_MODULES), path


def test_package_init_imports_nothing_heavy():
    tree = ast.parse((PACKAGE / "__init__.py").read_text())
    assert _imports(tree) <= {"__future__"}


def test_astro_exports_resolve_to_their_modules():
    import siderod.astro as astro

    for name in astro.__all__:
        assert getattr(astro, name) is not None, name
