"""One circuit interface: only the circuit modules and their registry know a topology's name, and
every registered circuit module provides the whole interface.

Expected values: the project's own rule (DEVELOPERS.md, "Adding a circuit"): a circuit is one module
under ``stages/``, listed in ``stages/topologies.py``, and everything else dispatches through it.
String constants and comparisons are read from the source with Python's ``ast`` module.
"""

from __future__ import annotations

import ast
import subprocess
import sys
from pathlib import Path

import pytest

from drawerfit.analysis.dc import DCFigures
from drawerfit.stages import topologies
from drawerfit.stages.base import CAPACITOR_ROLES, RESISTOR_ROLES

ROOT = Path(__file__).resolve().parent.parent
PACKAGE = ROOT / "src" / "drawerfit"
CIRCUIT_FILES = {PACKAGE / "stages" / f"{m.__name__.rsplit('.', 1)[1]}.py"
                 for m in topologies.CIRCUITS + topologies.ASSEMBLIES}
REGISTRY = PACKAGE / "stages" / "topologies.py"

# The interface, written out here on its own so that a name dropped from the registry's list
# (or from a module) fails; DEVELOPERS.md, "Adding a circuit", describes each.
CONSTANTS = ("NAME", "TITLE", "SHORT_NAME", "OUTPUT_END", "BASE_LOAD_WORDS", "ROLES", "REQUIRED",
             "OPTIONAL", "TRANSISTORS", "OUTPUT_NODE", "HAS_BYPASS", "HAS_GAIN_TARGET", "POWER_FIGURE",
             "CAP_FIGURE", "DESIGN_RESISTORS", "DESIGN_CAPACITORS", "BYPASS_ROLES")
FUNCTIONS = ("validate_roles", "elements", "dc_inputs", "small_signal", "swing", "dc_nodes",
             "kernel_constants", "stage_transfer", "bypass_corner", "magnitude_constants", "magnitude",
             "design_roles", "nominal_extras", "swing_ceiling", "base_ceiling", "emitter_bounds",
             "base_load_floor", "load_line", "schematic_heights", "draw_sides")


def topology_name_uses(path: Path, names) -> list[str]:
    """'file:line: what' for each string constant equal to a topology name and each comparison
    for equality with a ``.topology`` attribute in the file."""
    out = []
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.Constant) and isinstance(node.value, str) and node.value.strip() in names:
            out.append(f"{path.name}:{node.lineno}: the string {node.value!r}")
        elif isinstance(node, ast.Compare) and any(isinstance(op, (ast.Eq, ast.NotEq, ast.Is, ast.IsNot))
                                                   for op in node.ops):
            # membership in the registry (``in TOPOLOGIES``) is fine; equality picks one circuit out
            sides = [node.left, *node.comparators]
            if any(isinstance(x, ast.Attribute) and x.attr == "topology" for x in sides):
                out.append(f"{path.name}:{node.lineno}: a comparison with .topology")
    return out


def test_no_topology_name_outside_the_circuit_modules():
    names = set(topologies.TOPOLOGIES) | set(topologies.ASSEMBLY_NAMES)
    found = []
    for path in sorted(PACKAGE.rglob("*.py")):
        if path in CIRCUIT_FILES or path == REGISTRY:
            continue
        found += topology_name_uses(path, names)
    assert found == []


def test_the_walker_finds_a_planted_name(tmp_path):
    # the check above can fail: a planted literal and a planted comparison are both found
    name = topologies.TOPOLOGIES[0]
    f = tmp_path / "planted.py"
    f.write_text(f"def f(stage):\n    x = {name!r}\n    return stage.topology == x\n", encoding="utf-8")
    assert topology_name_uses(f, {name}) == [f"planted.py:2: the string {name!r}",
                                             "planted.py:3: a comparison with .topology"]


# The two-stage amplifier's own modules outside stages/: it stands beside the single-stage interface
# (topologies.ASSEMBLIES), so its figures, spec, saved file, netlist, search and text name Q1 and Q2
# as its circuit module does; they serve that one circuit and no other.
TWO_STAGE_OWN = {PACKAGE / p for p in (
    "analysis/cascade.py", "analysis/cascade_result.py", "analysis/cascade_checks.py",
    "analysis/cascade_targets.py", "io/cascade_spec.py",
    "io/saved_two_stage.py", "report/export_two_stage.py", "report/schematic_two_stage.py",
    "report/report_two_stage.py", "search/cascade_problem.py", "search/cascade_search.py",
    "search/cascade_result.py", "commands/design_two_stage.py")}


def designator_uses(path: Path, names) -> list[str]:
    """'file:line: the string ...' for each string constant (an f-string's pieces too) that is a
    transistor designator once stripped of white space."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    return [f"{path.name}:{node.lineno}: the string {node.value!r}" for node in ast.walk(tree)
            if isinstance(node, ast.Constant) and isinstance(node.value, str) and node.value.strip() in names]


def test_no_transistor_designator_outside_the_circuit_modules():
    # shared code takes the designator from the circuit module (TRANSISTORS, Stage.transistor_name,
    # .transistors), so a circuit whose transistors are named otherwise needs no change there
    names = {t for m in topologies.CIRCUITS + topologies.ASSEMBLIES for t in m.TRANSISTORS}
    assert names >= {"Q1", "Q2"}
    assert all(path.exists() for path in TWO_STAGE_OWN)
    found = []
    for path in sorted(PACKAGE.rglob("*.py")):
        if path in CIRCUIT_FILES or path in TWO_STAGE_OWN:
            continue
        found += designator_uses(path, names)
    assert found == []


def test_no_output_node_switch_outside_the_circuit_modules():
    # the search bounds and the schematic ask the circuit module (emitter_bounds, base_load_floor,
    # schematic_heights, draw_sides) rather than branch on where its output is
    found = []
    for path in sorted(PACKAGE.rglob("*.py")):
        if path in CIRCUIT_FILES or path == REGISTRY:
            continue
        tree = ast.parse(path.read_text(encoding="utf-8"))
        found += [f"{path.name}:{n.lineno}" for n in ast.walk(tree)
                  if isinstance(n, ast.Attribute) and n.attr == "OUTPUT_NODE"]
    assert found == []


def test_the_designator_walker_finds_planted_ones(tmp_path):
    # the check above can fail: a plain literal, a dict key and an f-string's piece are all found
    f = tmp_path / "planted.py"
    f.write_text('a = "Q1"\nb = {"Q2": 1}\nc = f"Q1\\n{a}"\nd = "Q1 power"\n', encoding="utf-8")
    assert designator_uses(f, {"Q1", "Q2"}) == ["planted.py:1: the string 'Q1'", "planted.py:2: the string 'Q2'",
                                                "planted.py:3: the string 'Q1\\n'"]


def _imported_modules(path: Path) -> set[str]:
    """The dotted names every import in the file (inside functions too) may load: each module, and
    each module plus one imported name (``from ..stages import two_stage``)."""
    package = ["drawerfit", *path.relative_to(PACKAGE).parent.parts]
    out = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            out |= {a.name for a in node.names}
        elif isinstance(node, ast.ImportFrom):
            base = package[:len(package) - node.level + 1] if node.level else []
            module = ".".join(base + ([node.module] if node.module else []))
            out |= {module} | {f"{module}.{a.name}" for a in node.names}
    return out


def _module_name(path: Path) -> str:
    return ".".join(["drawerfit", *path.relative_to(PACKAGE).with_suffix("").parts])


def test_shared_modules_reach_the_two_stage_amplifier_through_the_registry():
    # shared code asks topologies.assembly_for / assembly_hook; only the two-stage's own modules
    # (and the registry) import them
    own = TWO_STAGE_OWN | {PACKAGE / "stages" / "two_stage.py"}
    names = {_module_name(p) for p in own}
    found = []
    for path in sorted(PACKAGE.rglob("*.py")):
        if path in own or path == REGISTRY:
            continue
        found += [f"{path.relative_to(PACKAGE)}: {m}" for m in sorted(_imported_modules(path) & names)]
    assert found == []


def test_the_import_reader_resolves_relative_imports():
    # the check above can fail: a relative import of the two-stage module is read as its full name
    path = PACKAGE / "io" / "spec.py"
    assert "drawerfit.stages.topologies" in _imported_modules(path)
    assert _module_name(PACKAGE / "stages" / "two_stage.py") == "drawerfit.stages.two_stage"
    assert "drawerfit.stages.two_stage" in _imported_modules(REGISTRY)


@pytest.mark.parametrize("assembly", topologies.ASSEMBLIES, ids=lambda m: m.NAME)
def test_assembly_names_every_hook(assembly):
    assert set(assembly.HOOKS) == set(topologies.ASSEMBLY_HOOKS)
    for hook in topologies.ASSEMBLY_HOOKS:
        assert callable(topologies.assembly_hook(assembly, hook)), hook
    assert topologies.assembly_for(assembly.NAME) is assembly
    # a single stage's name, an unknown one and a value that is no name are not assemblies
    assert topologies.assembly_for(topologies.TOPOLOGIES[0]) is None
    assert topologies.assembly_for("no-such-circuit") is None
    assert topologies.assembly_for(["a", "list"]) is None
    developers = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    section = developers.split("## Adding a circuit", 1)[1].split("\n## ", 1)[0]
    assert [h for h in topologies.ASSEMBLY_HOOKS if f"`{h}`" not in section] == []


def test_registry_lists_every_circuit_module_once():
    assert len(topologies.CIRCUITS) >= 2
    assert all(path.exists() for path in CIRCUIT_FILES)
    assert not set(topologies.ASSEMBLY_NAMES) & set(topologies.TOPOLOGIES)
    assert len(set(topologies.TOPOLOGIES)) == len(topologies.CIRCUITS)
    for m in topologies.CIRCUITS:
        assert topologies.topology_module(m.NAME) is m


def test_registry_interface_is_the_documented_one():
    assert set(topologies.INTERFACE) == set(CONSTANTS) | set(FUNCTIONS)
    developers = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    section = developers.split("## Adding a circuit", 1)[1].split("\n## ", 1)[0]
    missing = [n for n in topologies.INTERFACE if f"`{n}`" not in section]
    assert missing == []


@pytest.mark.parametrize("circuit", topologies.CIRCUITS, ids=lambda m: m.NAME)
def test_circuit_module_provides_the_interface(circuit):
    missing = [n for n in CONSTANTS + FUNCTIONS if not hasattr(circuit, n)]
    assert missing == []
    assert all(callable(getattr(circuit, n)) for n in FUNCTIONS)
    # roles: every required and optional role is listed once, each of a kind the stage knows
    assert set(circuit.REQUIRED) | set(circuit.OPTIONAL) == set(circuit.ROLES)
    assert len(set(circuit.ROLES)) == len(circuit.ROLES)
    assert set(circuit.ROLES) <= set(RESISTOR_ROLES) | set(CAPACITOR_ROLES)
    # ratings: a figure for every resistor and capacitor role, each a field of the DC figures
    assert set(circuit.POWER_FIGURE) == set(circuit.ROLES) & set(RESISTOR_ROLES)
    assert set(circuit.CAP_FIGURE) == set(circuit.ROLES) & set(CAPACITOR_ROLES)
    fields = set(DCFigures.__dataclass_fields__)
    assert set(circuit.POWER_FIGURE.values()) | set(circuit.CAP_FIGURE.values()) <= fields
    # the search's roles: required ones without a bypass, the bypass roles only where there is one
    res, caps = circuit.design_roles(False)
    assert set(res) | set(caps) == set(circuit.REQUIRED)
    res_b, caps_b = circuit.design_roles(True)
    added = (set(res_b) | set(caps_b)) - set(res) - set(caps)
    assert added == (set(circuit.OPTIONAL) if circuit.HAS_BYPASS else set())
    # the netlist: one element per required role and per transistor, on the output node
    elements = circuit.elements("npn", dict.fromkeys(circuit.REQUIRED))
    assert {e[0] for e in elements} == set(circuit.REQUIRED) | set(circuit.TRANSISTORS)
    assert any(circuit.OUTPUT_NODE in e[1:3] and e[0] == "C2" for e in elements)


def test_circuit_modules_import_without_numpy():
    # `drawerfit --help` stays fast: the registry and its modules import numpy only inside kernels
    code = ("import sys, drawerfit.stages.topologies as t; "
            "print(sorted(m for m in ('numpy', 'scipy', 'pandas') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                         env={"PYTHONPATH": str(ROOT / "src")}).stdout.strip()
    assert out == "[]"
