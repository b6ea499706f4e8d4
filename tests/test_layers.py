"""The import layers of drawerfit: no module imports one of a higher layer, and DEVELOPERS.md draws the
same layers.

Expected values: the layers below, the project's own rule (DEVELOPERS.md, "Architecture"); every
``import`` of every module is read from its source with Python's ``ast`` module, inside functions
too (an import deferred for speed is still a dependency).
"""

from __future__ import annotations

import ast
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
SRC = ROOT / "src"

# Lowest first.  A module belongs to the layer of the longest prefix that names it; it may import
# its own layer and the ones below.  The package root (``drawerfit/__init__``) is the namespace
# (version, lazy names) and is exempt.
LAYERS: list[tuple[str, tuple[str, ...]]] = [
    ("base", ("drawerfit.values", "drawerfit.eseries", "drawerfit.constants", "drawerfit.parts",
              "drawerfit.progress", "drawerfit.texttable", "drawerfit.io.files")),
    ("stock", ("drawerfit.stock", "drawerfit.io.tables")),
    ("equivalents", ("drawerfit.equivalents", "drawerfit.triples")),
    ("stages", ("drawerfit.stages",)),
    ("analysis", ("drawerfit.analysis", "drawerfit.cautions")),
    ("allocation", ("drawerfit.allocation",)),
    ("search", ("drawerfit.search", "drawerfit.kits", "drawerfit.results", "drawerfit.repair")),
    ("files", ("drawerfit.io",)),
    ("report", ("drawerfit.report",)),
    ("api", ("drawerfit.api",)),
    ("commands", ("drawerfit.commands",)),
    ("cli", ("drawerfit.cli", "drawerfit.__main__")),
]


def layer_of(module: str) -> int | None:
    best, level = -1, None
    for i, (_name, prefixes) in enumerate(LAYERS):
        for p in prefixes:
            if (module == p or module.startswith(p + ".")) and len(p) > best:
                best, level = len(p), i
    return level


def _module_name(path: Path, src: Path = SRC) -> str:
    parts = list(path.relative_to(src).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def _is_module(name: str, src: Path = SRC) -> bool:
    rel = Path(src, *name.split("."))
    return rel.with_suffix(".py").exists() or (rel / "__init__.py").exists()


def imports_of(path: Path, src: Path = SRC) -> list[tuple[int, str]]:
    """(line, drawerfit module imported) for every import in the file."""
    name = _module_name(path, src)
    package = name.split(".") if path.name == "__init__.py" else name.split(".")[:-1]
    out = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            out += [(node.lineno, a.name) for a in node.names if a.name.split(".")[0] == "drawerfit"]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = ".".join(package[:len(package) - node.level + 1] + ([node.module] if node.module else []))
            else:
                base = node.module or ""
            if base.split(".")[0] != "drawerfit":
                continue
            for a in node.names:  # "from pkg import module" depends on the module
                sub = f"{base}.{a.name}"
                out.append((node.lineno, sub if _is_module(sub, src) else base))
    return out


def violations(src: Path = SRC) -> list[str]:
    """Every import of a module of a higher layer, as 'file:line: who (layer) imports what (layer)'."""
    bad = []
    for path in sorted((src / "drawerfit").rglob("*.py")):
        me = _module_name(path, src)
        if me == "drawerfit":
            continue
        mine = layer_of(me)
        for line, target in imports_of(path, src):
            theirs = layer_of(target)
            if target != "drawerfit" and theirs is not None and mine is not None and theirs > mine:
                bad.append(f"{path.relative_to(src)}:{line}: {me} ({LAYERS[mine][0]}) imports {target}"
                           f" ({LAYERS[theirs][0]})")
    return bad


def test_every_module_has_a_layer():
    missing = [_module_name(p) for p in sorted((SRC / "drawerfit").rglob("*.py"))
               if _module_name(p) != "drawerfit" and layer_of(_module_name(p)) is None]
    assert not missing, f"modules with no layer (add them to LAYERS and to DEVELOPERS.md): {missing}"


def test_no_module_imports_a_higher_layer():
    bad = violations()
    assert not bad, "imports against the layers:\n" + "\n".join(bad)


def test_the_checker_catches_an_upward_import(tmp_path):
    # a synthetic tree: values importing the CLI inside a function, and io.files (base) importing
    # io.spec through "from . import spec" (a module named in a from-import), must both be caught;
    # the same imports the other way round are allowed
    pkg = tmp_path / "drawerfit"
    (pkg / "io").mkdir(parents=True)
    for name in ("__init__.py", "cli.py", "io/__init__.py", "io/spec.py"):
        (pkg / name).write_text("")
    (pkg / "values.py").write_text("def f():\n    from .cli import main\n")
    (pkg / "io" / "files.py").write_text("from . import spec\nfrom ..values import f\n")
    (pkg / "api.py").write_text("from .io import files\nfrom . import values\n")
    found = violations(tmp_path)
    assert len(found) == 2
    assert found[0].startswith("drawerfit/io/files.py:1: drawerfit.io.files (base) imports drawerfit.io.spec (files)")
    assert found[1].startswith("drawerfit/values.py:2: drawerfit.values (base) imports drawerfit.cli (cli)")


def test_developers_guide_draws_the_same_layers():
    text = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    block = text.split("<!-- layers -->", 2)[1]
    drawn = [line.split("│")[1].strip().split()[0] for line in block.splitlines() if line.startswith("│")]
    assert drawn == [name for name, _ in reversed(LAYERS)]
