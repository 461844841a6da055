"""Every public name of the ``checker`` package carries a numpydoc docstring a user can rely on.

The modules are read with :mod:`ast` (nothing is imported), one test case per module, so
``-k checker.sweep`` checks one module. The sections follow the numpydoc format (numpydoc's
"Docstring Standard": a section title underlined with dashes; ``name : type`` entries).

What is checked, for each public (no leading underscore) top-level function and class and
each public method of a public class (dunder methods are skipped; ``__init__`` parameters
are checked against the class docstring or ``__init__``'s own):

- it has a docstring;
- a function or method with parameters other than ``self``/``cls`` has a ``Parameters``
  section naming every one of them (``*args``/``**kwargs`` by their names);
- a function whose return annotation is not ``None`` (nor ``NoReturn``), or that has a
  ``return <value>`` of its own, has a ``Returns`` or ``Yields`` section;
- a class has an ``Attributes`` or ``Parameters`` section, and it names every public
  annotated field (a dataclass's fields) and every parameter of its ``__init__``.

Properties are judged attributes (numpydoc documents them like attributes): they need a
docstring but no ``Returns`` section. ``typing.overload`` stubs are skipped.
"""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "checker"
MODULES = sorted(PACKAGE.rglob("*.py"))

# a numpydoc section title: a line of text followed by a line of dashes as long or longer
SECTION = re.compile(r"^([A-Z][A-Za-z ]*)\n-{3,}[ \t]*$", re.MULTILINE)


def _module_name(path: Path) -> str:
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    return ".".join(parts)


def sections(doc: str) -> dict[str, str]:
    """The docstring's numpydoc sections, title -> body (text up to the next title)."""
    found = list(SECTION.finditer(doc))
    out = {}
    for here, after in zip(found, [*found[1:], None]):
        end = after.start() if after is not None else len(doc)
        out[here.group(1).strip()] = doc[here.end():end]
    return out


def documented_names(body: str) -> set[str]:
    """Names of the entries of a Parameters/Attributes section (``a, b : type`` lines)."""
    names: set[str] = set()
    for line in body.splitlines():
        if not line.strip() or line[:1].isspace():
            continue  # a description line (indented under its entry)
        for name in line.split(":", 1)[0].split(","):
            names.add(name.strip().lstrip("*"))
    return names


def _is_overload(node: ast.AST) -> bool:
    return any((isinstance(d, ast.Name) and d.id == "overload")
               or (isinstance(d, ast.Attribute) and d.attr == "overload")
               for d in getattr(node, "decorator_list", ()))


def _is_property(node: ast.AST) -> bool:
    for d in getattr(node, "decorator_list", ()):
        name = d.id if isinstance(d, ast.Name) else d.attr if isinstance(d, ast.Attribute) else ""
        if name in ("property", "cached_property", "setter", "getter", "deleter"):
            return True
    return False


def _parameters(node: ast.FunctionDef | ast.AsyncFunctionDef) -> list[str]:
    a = node.args
    names = [x.arg for x in (*a.posonlyargs, *a.args, *a.kwonlyargs)]
    names += [x.arg for x in (a.vararg, a.kwarg) if x is not None]
    return [n for n in names if n not in ("self", "cls")]


def _own_nodes(node: ast.AST):
    """The nodes of a function's body, not those of functions or classes defined inside it."""
    stack = list(ast.iter_child_nodes(node))
    while stack:
        child = stack.pop()
        if isinstance(child, (ast.FunctionDef, ast.AsyncFunctionDef, ast.Lambda, ast.ClassDef)):
            continue
        yield child
        stack.extend(ast.iter_child_nodes(child))


def _returns_value(node: ast.FunctionDef | ast.AsyncFunctionDef) -> bool:
    ann = node.returns
    if ann is not None:
        if isinstance(ann, ast.Constant) and ann.value in (None, "None"):
            return False
        text = ast.unparse(ann)
        return text.split(".")[-1] not in ("None", "NoReturn", "Never")
    return any(isinstance(n, (ast.Return,)) and n.value is not None
               and not (isinstance(n.value, ast.Constant) and n.value.value is None)
               or isinstance(n, (ast.Yield, ast.YieldFrom)) for n in _own_nodes(node))


def _check_function(where: str, node, doc_for_params: str | None = None) -> list[str]:
    doc = ast.get_docstring(node)
    if not doc:
        return [f"{where}: no docstring"]
    problems = []
    secs = sections(doc)
    params = _parameters(node)
    if params and not _is_property(node):
        if "Parameters" not in secs and "Other Parameters" not in secs:
            problems.append(f"{where}: no Parameters section (for {', '.join(params)})")
        else:
            named = documented_names(secs.get("Parameters", "") + "\n"
                                     + secs.get("Other Parameters", ""))
            missing = [p for p in params if p not in named]
            if missing:
                problems.append(f"{where}: Parameters does not name {', '.join(missing)}")
    if _returns_value(node) and not _is_property(node) \
            and "Returns" not in secs and "Yields" not in secs:
        problems.append(f"{where}: no Returns (or Yields) section")
    return problems


def _fields(node: ast.ClassDef) -> list[str]:
    out = []
    for item in node.body:
        if isinstance(item, ast.AnnAssign) and isinstance(item.target, ast.Name):
            name = item.target.id
            if name.startswith("_") or "ClassVar" in ast.unparse(item.annotation):
                continue
            out.append(name)
    return out


def _check_class(where: str, node: ast.ClassDef) -> list[str]:
    doc = ast.get_docstring(node)
    if not doc:
        return [f"{where}: no docstring"]
    problems = []
    secs = sections(doc)
    if "Attributes" not in secs and "Parameters" not in secs:
        problems.append(f"{where}: no Attributes or Parameters section")
    named = documented_names(secs.get("Attributes", "") + "\n" + secs.get("Parameters", "")
                             + "\n" + secs.get("Other Parameters", ""))
    wanted = _fields(node)
    init = next((i for i in node.body if isinstance(i, (ast.FunctionDef, ast.AsyncFunctionDef))
                 and i.name == "__init__"), None)
    if init is not None:
        init_doc = ast.get_docstring(init) or ""
        init_secs = sections(init_doc)
        named |= documented_names(init_secs.get("Parameters", ""))
        wanted += [p for p in _parameters(init) if p not in wanted]
    missing = [w for w in wanted if w not in named]
    if missing and ("Attributes" in secs or "Parameters" in secs):
        problems.append(f"{where}: Attributes/Parameters do not name {', '.join(missing)}")
    return problems


def _top_level(tree: ast.Module):
    """Top-level statements, looking inside module-level ``if``/``try`` blocks too."""
    stack = list(tree.body)
    while stack:
        node = stack.pop(0)
        if isinstance(node, (ast.If, ast.Try)):
            stack[:0] = [*node.body, *getattr(node, "orelse", []),
                         *[s for h in getattr(node, "handlers", []) for s in h.body],
                         *getattr(node, "finalbody", [])]
            continue
        yield node


def offenders(source: str, module: str) -> list[str]:
    """Every missing docstring or section of one module, as ``module:name: what``."""
    tree = ast.parse(source, filename=module)
    problems = []
    for node in _top_level(tree):
        if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
            if node.name.startswith("_") or _is_overload(node):
                continue
            problems += _check_function(f"{module}:{node.name}", node)
        elif isinstance(node, ast.ClassDef) and not node.name.startswith("_"):
            problems += _check_class(f"{module}:{node.name}", node)
            for item in node.body:
                if isinstance(item, (ast.FunctionDef, ast.AsyncFunctionDef)) \
                        and not item.name.startswith("_") and not _is_overload(item):
                    problems += _check_function(f"{module}:{node.name}.{item.name}", item)
    return problems


@pytest.mark.parametrize("path", MODULES, ids=[_module_name(p) for p in MODULES])
def test_public_names_have_numpydoc_docstrings(path):
    problems = offenders(path.read_text(encoding="utf-8"), _module_name(path))
    assert not problems, f"{len(problems)} docstring problem(s):\n" + "\n".join(problems)


def test_the_checker_sees_an_omission():
    # The walker itself: a function that hides one parameter and its return, a dataclass
    # that leaves out a field, and a correct function beside them.
    source = '''
from dataclasses import dataclass

def good(a: int, *rest, key=None) -> int:
    """Sum.

    Parameters
    ----------
    a : int
        First.
    *rest : int
        More.
    key : object, optional
        Unused.

    Returns
    -------
    int
        The sum.
    """
    return a

def bad(a: int, b: int) -> int:
    """Sum.

    Parameters
    ----------
    a : int
        First.
    """
    return a + b

@dataclass
class Box:
    """A box.

    Attributes
    ----------
    width_m : float
        Width [m].
    """

    width_m: float
    depth_m: float

class Bare:
    pass
'''
    problems = offenders(source, "probe")
    text = "\n".join(problems)
    assert ":good" not in text
    assert "bad: Parameters does not name b" in text
    assert "bad: no Returns" in text
    assert "Box: Attributes/Parameters do not name depth_m" in text
    assert "Bare: no docstring" in text
    assert len(problems) == 4
