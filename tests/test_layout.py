"""The layering rule, checked on the source: imports run downward only.

solvers/ is the numerics core: numbers in, records out. It imports none of the
libraries that draw, print or open windows (matplotlib, reportlab, Qt), and nothing of
app/, at module level or inside a function. app/documents/ turns the core's records into
words, pictures and files and never imports the window.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


def imported_modules(path: Path) -> set[str]:
    """Every module an ``import`` or ``from ... import`` in the file names, at any depth."""
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    found: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            found.add(node.module)
    return found


def _files(folder: str) -> list[Path]:
    return sorted((ROOT / folder).rglob("*.py"))


@pytest.mark.parametrize("path", _files("solvers"), ids=lambda p: p.relative_to(ROOT).as_posix())
def test_the_core_imports_no_drawing_printing_window_or_front_end_code(path):
    banned = ("matplotlib", "reportlab", "PySide6", "app")
    bad = sorted(m for m in imported_modules(path) if m.split(".")[0] in banned)
    assert not bad, f"{path.relative_to(ROOT)} imports {bad}"


@pytest.mark.parametrize("path", _files("app/documents"),
                         ids=lambda p: p.relative_to(ROOT).as_posix())
def test_documents_never_import_the_window_or_the_command_line(path):
    bad = sorted(m for m in imported_modules(path)
                 if m.startswith(("app.window", "app.cli", "PySide6")))
    assert not bad, f"{path.relative_to(ROOT)} imports {bad}"


def test_a_check_that_can_fail_does_fail(tmp_path):
    # The scanner must see imports inside functions too (a lazy import is still a layer
    # crossing).
    probe = tmp_path / "probe.py"
    probe.write_text("def f():\n    from matplotlib.figure import Figure\n    return Figure\n")
    assert "matplotlib.figure" in imported_modules(probe)
