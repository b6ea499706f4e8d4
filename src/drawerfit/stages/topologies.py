"""The registry of circuits: the only place that maps a topology's name to its module.

Every other module dispatches through the module (``circuit = topology_module(stage.topology)``)
and never compares a topology's name; ``tests/test_circuit_interface.py`` holds both to that.
"""

from __future__ import annotations

from types import ModuleType

from . import common_emitter, follower, two_stage

__all__ = ["TOPOLOGIES", "TOPOLOGY_ROLES", "INTERFACE", "CIRCUITS", "topology_module", "ASSEMBLIES",
           "ASSEMBLY_NAMES", "ASSEMBLY_HOOKS", "assembly_for", "assembly_hook"]

CIRCUITS: tuple[ModuleType, ...] = (follower, common_emitter)
TOPOLOGIES = tuple(m.NAME for m in CIRCUITS)
_MODULES = {m.NAME: m for m in CIRCUITS}
TOPOLOGY_ROLES = {name: module.ROLES for name, module in _MODULES.items()}
# Circuits of more than one stage (the two-stage amplifier): their figures live in their own
# analysis modules (analysis/cascade.py), not behind the single-stage interface below.  Shared code
# finds one by the topology of the object in hand (``assembly_for(stage.topology)``) and calls the
# functions its module names in ``HOOKS`` (``assembly_hook``), never by comparing its name.
ASSEMBLIES: tuple[ModuleType, ...] = (two_stage,)
ASSEMBLY_NAMES = tuple(m.NAME for m in ASSEMBLIES)
_ASSEMBLY_MODULES = {m.NAME: m for m in ASSEMBLIES}

# What an assembly module names in its HOOKS, as "module:attribute" paths imported on first call, so
# the registry stays light (DEVELOPERS.md, "Adding a circuit", gives each one's call and caller).
ASSEMBLY_HOOKS = ("circuit_type", "spec_type", "parse_spec", "analyse", "hot_parts", "summary_lines", "design",
                  "design_command", "netlist", "report")

# What every circuit module provides (DEVELOPERS.md, "Adding a circuit", says what each is for).
INTERFACE = (
    # names and words
    "NAME", "TITLE", "SHORT_NAME", "OUTPUT_END", "BASE_LOAD_WORDS",
    # roles, their kinds and the spec's rules
    "ROLES", "REQUIRED", "OPTIONAL", "TRANSISTORS", "OUTPUT_NODE", "HAS_BYPASS", "HAS_GAIN_TARGET",
    "validate_roles", "elements",
    # ratings: the figure of each role
    "POWER_FIGURE", "CAP_FIGURE",
    # the vectorised DC and small-signal kernel
    "dc_inputs", "small_signal", "swing", "dc_nodes",
    # the low-frequency response
    "kernel_constants", "stage_transfer", "bypass_corner", "magnitude_constants", "magnitude",
    # the search
    "DESIGN_RESISTORS", "DESIGN_CAPACITORS", "BYPASS_ROLES", "design_roles", "nominal_extras",
    "swing_ceiling", "base_ceiling", "emitter_bounds", "base_load_floor",
    # the report
    "load_line", "schematic_heights", "draw_sides",
)


def topology_module(topology: str) -> ModuleType:
    """The module that knows a topology's roles and circuit (StageError for an unknown one)."""
    if topology not in _MODULES:
        from .base import StageError

        raise StageError(f"topology must be one of {', '.join(TOPOLOGIES)}, not {topology!r}")
    return _MODULES[topology]


def assembly_for(topology) -> ModuleType | None:
    """The module of an assembly (the two-stage amplifier) with that topology; None for anything
    else, a single stage's name or a value that is not a name at all."""
    return _ASSEMBLY_MODULES.get(topology) if isinstance(topology, str) else None


def assembly_hook(assembly: ModuleType, hook: str):
    """The function (or class) an assembly module names for ``hook`` in its ``HOOKS``, imported now."""
    from importlib import import_module

    module, _, attribute = assembly.HOOKS[hook].partition(":")
    return getattr(import_module(module), attribute)
