"""The shape of the code (README, "Layout"; DEVELOPERS, "Layers"), checked by
walking every module's imports with ast: the text UI reaches the engine only
through its front door, ``survey.api``, and never takes a private name; the
engine never imports the text UI; each engine module is small enough to read in
one sitting and says in its docstring what it owns."""

from __future__ import annotations

import ast

import pytest

from .helpers import ROOT

MAX_ENGINE_LINES = 800


def modules(package: str):
    return sorted((ROOT / package).rglob("*.py"))


def imports(path):
    """(module imported, names taken) for every import in ``path``."""
    tree = ast.parse(path.read_text("utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield alias.name, ()
        elif isinstance(node, ast.ImportFrom):
            if node.level:  # relative: resolve against the package
                parts = path.relative_to(ROOT).with_suffix("").parts[:-node.level]
                base = ".".join(parts + ((node.module,) if node.module else ()))
            else:
                base = node.module or ""
            yield base, tuple(a.name for a in node.names)


@pytest.mark.parametrize("path", modules("tui"), ids=lambda p: str(p.relative_to(ROOT)))
def test_the_text_ui_uses_the_front_door_only(path):
    for module, names in imports(path):
        if module == "survey" or module.startswith("survey."):
            front = module == "survey.api" or (module == "survey" and set(names) <= {"api", "__version__"})
            assert front, f"{path.name} imports {module} {names}: use survey.api"
            assert not any(n.startswith("_") for n in names), f"{path.name} takes a private name {names}"


@pytest.mark.parametrize("path", modules("survey"), ids=lambda p: str(p.relative_to(ROOT)))
def test_the_engine_never_imports_the_text_ui(path):
    for module, _ in imports(path):
        assert not (module == "tui" or module.startswith("tui.")), f"{path.name} imports {module}"


@pytest.mark.parametrize("path", modules("survey"), ids=lambda p: str(p.relative_to(ROOT)))
def test_engine_modules_are_small_and_say_what_they_own(path):
    text = path.read_text("utf-8")
    assert text.count("\n") <= MAX_ENGINE_LINES, f"{path.name}: {text.count(chr(10))} lines"
    if path.name != "__init__.py" or text.strip():
        assert ast.get_docstring(ast.parse(text)), f"{path.name} has no docstring saying what it owns"


def test_the_front_door_exports_what_it_names():
    from survey import api

    missing = [n for n in api.__all__ if not hasattr(api, n)]
    assert not missing and len(set(api.__all__)) == len(api.__all__)
