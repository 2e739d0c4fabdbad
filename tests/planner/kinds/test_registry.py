"""The kind registry: every kind registered once, found by key, unknown keys are 404."""

import pytest
from django.http import Http404

from planner.kinds import Kind, all_kinds, get_kind, register
from planner.models import ScenarioKind


def test_every_registered_kind_is_a_database_kind_and_back():
    assert {kind.key for kind in all_kinds()} == set(ScenarioKind.values)
    for kind in all_kinds():
        assert isinstance(kind, Kind) and kind.tables and kind.label


def test_unknown_kind_is_404():
    with pytest.raises(Http404):
        get_kind("silo_fill")


def test_a_kind_registers_once():
    with pytest.raises(ValueError, match="registered twice"):
        register(get_kind("stock_plan"))


def _imports(path):
    import ast

    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.module:
            yield node.module
        elif isinstance(node, ast.Import):
            yield from (alias.name for alias in node.names)


def test_imports_run_one_way():
    # Design notes, section 2: a kind imports the shared helpers; a shared module never imports a kind,
    # and a kind never imports another kind.
    from pathlib import Path

    import planner

    root = Path(planner.__file__).parent
    kinds = {path.name for path in (root / "kinds").iterdir() if path.is_dir() and path.name != "__pycache__"}
    for path in root.rglob("*.py"):
        inside = path.relative_to(root).parts
        own = inside[1] if inside[0] == "kinds" and len(inside) > 2 else None
        for module in _imports(path):
            parts = module.split(".")
            if parts[:2] == ["planner", "kinds"] and len(parts) > 2:
                assert own is not None, f"{path}: a shared module imports the kind {parts[2]}"
                assert parts[2] == own, f"{path}: the kind {own} imports the kind {parts[2]}"
    assert kinds == {kind.key for kind in all_kinds()}  # every package found, each registered
