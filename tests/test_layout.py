"""The package's stages import only the stages before them in the data flow (DEVELOPERS.md,
'The shape of the code'; issue 11). Checked on the source with Python's own parser."""
from __future__ import annotations

import ast
from pathlib import Path

import dossier

PACKAGE = Path(dossier.__file__).resolve().parent

#: Stage rank of every top-level name in the package; a module may import a rank at or below its own.
#: The shared vocabulary is rank 0; science is pure and depends on nothing else, so it comes first.
RANK = {
    "units": 0, "errors": 0, "records": 0,
    "schema": 0,  # the JSON Schema of dossier.json (a data file and its loader)
    "__init__": 7,  # the package's own front door (dossier.read) may reach any stage
    "science": 1, "reading": 2, "project": 3, "analysis": 4, "report": 5, "archive": 6,
    "commands": 7, "cli": 7, "__main__": 7,
}


def _stage(module_path: Path) -> str:
    rel = module_path.relative_to(PACKAGE)
    return rel.parts[0].removesuffix(".py")


def _imported_stages(tree: ast.AST) -> set[str]:
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            parts = node.module.split(".")
            if parts[0] == "dossier":
                if len(parts) > 1:
                    found.add(parts[1])
                else:
                    found.update(a.name for a in node.names)
        elif isinstance(node, ast.Import):
            for a in node.names:
                parts = a.name.split(".")
                if parts[0] == "dossier" and len(parts) > 1:
                    found.add(parts[1])
    return found


def test_every_module_belongs_to_a_known_stage():
    stages = {_stage(p) for p in PACKAGE.rglob("*.py")}
    assert stages <= set(RANK), sorted(stages - set(RANK))


def test_no_stage_imports_a_later_stage():
    wrong = []
    for path in sorted(PACKAGE.rglob("*.py")):
        own = RANK[_stage(path)]
        for name in _imported_stages(ast.parse(path.read_text(encoding="utf-8"))):
            if name == "__version__":
                continue
            if RANK.get(name, 0) > own:
                wrong.append(f"{path.relative_to(PACKAGE)} imports dossier.{name}")
    assert not wrong, wrong


def test_no_relative_imports():
    """Absolute imports only, so that the stage of every import can be read from its text."""
    rel = [str(p.relative_to(PACKAGE)) for p in PACKAGE.rglob("*.py")
           if any(isinstance(n, ast.ImportFrom) and n.level for n in ast.walk(ast.parse(p.read_text(encoding="utf-8"))))]
    assert not rel, rel


def test_every_stage_package_says_what_it_owns_and_may_import():
    for stage in ("reading", "project", "science", "analysis", "report", "archive"):
        doc = ast.get_docstring(ast.parse((PACKAGE / stage / "__init__.py").read_text(encoding="utf-8"))) or ""
        assert "import" in doc and len(doc) > 200, stage


#: Size limits of issue 11 (a function that needs more than a screen is two functions; common practice, no source).
MAX_FUNCTION_LINES = 80
MAX_MODULE_LINES = 600


def test_no_function_over_a_screen_and_no_module_over_the_limit():
    too_long = []
    for path in sorted(PACKAGE.rglob("*.py")):
        text = path.read_text(encoding="utf-8")
        if len(text.splitlines()) > MAX_MODULE_LINES:
            too_long.append(f"{path.relative_to(PACKAGE)}: {len(text.splitlines())} lines")
        for node in ast.walk(ast.parse(text)):
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
                n = node.end_lineno - node.lineno + 1
                if n > MAX_FUNCTION_LINES:
                    too_long.append(f"{path.relative_to(PACKAGE)}:{node.lineno} {node.name}: {n} lines")
    assert not too_long, too_long
