"""Python 3.10 through 3.13: no module uses syntax or a standard-library name newer than
``requires-python`` allows, and ruff's target version says the same."""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

from checker.tomlfields import tomllib

ROOT = Path(__file__).resolve().parents[1]
FOLDERS = ("checker", "bench", "tests", "sample_tracks")
# Standard-library names added after 3.10 (from the "What's New" pages of 3.11 to 3.13, from
# memory): module -> names. A whole module maps to None.
NEWER = {"tomllib": None, "wsgiref.types": None,
         "enum": {"StrEnum", "ReprEnum", "verify", "member", "nonmember", "global_enum"},
         "typing": {"Self", "Never", "LiteralString", "assert_never", "assert_type",
                    "reveal_type", "override", "TypeAliasType", "TypeIs", "ReadOnly"},
         "datetime": {"UTC"}, "asyncio": {"TaskGroup", "timeout", "Runner"},
         "itertools": {"batched"}, "warnings": {"deprecated"}, "copy": {"replace"}}


def sources() -> list[Path]:
    files = [p for folder in FOLDERS for p in (ROOT / folder).rglob("*.py")]
    assert len(files) > 30  # the scan reached the package, tests, benches and demo tools
    return sorted(files)


def oldest_python() -> tuple[int, int]:
    spec = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]["requires-python"]
    match = re.fullmatch(r">=\s*3\.(\d+)", spec.strip())
    assert match, f"requires-python {spec!r} is not of the form >=3.N"
    return 3, int(match.group(1))


def guarded(tree: ast.AST) -> set[int]:
    """Line numbers of imports with a fallback: inside a ``try`` that handles ImportError, or
    an ``if sys.version_info ...`` branch."""
    lines = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.If) and "version_info" in ast.unparse(node.test):
            lines |= {n.lineno for n in ast.walk(node)
                      if isinstance(n, (ast.Import, ast.ImportFrom))}
        if isinstance(node, ast.Try) and any(
                isinstance(h.type, ast.Name) and h.type.id in ("ImportError",
                                                                 "ModuleNotFoundError")
                for h in node.handlers):
            lines |= {n.lineno for stmt in node.body for n in ast.walk(stmt)
                      if isinstance(n, (ast.Import, ast.ImportFrom))}
    return lines


def newer_names(source: str) -> list[str]:
    """Imports of standard-library names newer than 3.10 that have no fallback."""
    tree = ast.parse(source)
    safe = guarded(tree)
    found = []
    for node in ast.walk(tree):
        if not isinstance(node, (ast.Import, ast.ImportFrom)) or node.lineno in safe:
            continue
        if isinstance(node, ast.Import):
            found += [a.name for a in node.names if a.name in NEWER and NEWER[a.name] is None]
        elif node.module in NEWER:
            names = NEWER[node.module]
            found += [f"{node.module}.{a.name}" for a in node.names
                      if names is None or a.name in names]
    return found


def test_ruff_targets_the_oldest_supported_python():
    ruff = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["ruff"]
    major, minor = oldest_python()
    assert ruff["target-version"] == f"py{major}{minor}"


def test_every_module_parses_as_the_oldest_supported_python():
    version = oldest_python()
    for path in sources():
        ast.parse(path.read_text(encoding="utf-8"), filename=str(path),
                  feature_version=version)
        assert newer_names(path.read_text(encoding="utf-8")) == [], path


@pytest.mark.parametrize("snippet", [
    "try:\n    pass\nexcept* ValueError:\n    pass\n",        # exception groups, 3.11
    "type Vector = list[float]\n",                             # type statement, 3.12
    "def first[T](xs: list[T]) -> T:\n    return xs[0]\n",     # type parameters, 3.12
])
def test_the_syntax_check_can_fail(snippet):
    with pytest.raises(SyntaxError):
        ast.parse(snippet, feature_version=(3, 10))


def test_the_name_check_can_fail():
    assert newer_names("import tomllib\n") == ["tomllib"]
    assert newer_names("from enum import StrEnum, Enum\n") == ["enum.StrEnum"]
    assert newer_names("try:\n    import tomllib\nexcept ModuleNotFoundError:\n"
                       "    import tomli as tomllib\n") == []
    assert newer_names("import sys\nif sys.version_info >= (3, 11):\n    import tomllib\n"
                       "else:\n    import tomli as tomllib\n") == []
