"""The topologies drawerfit models, each a module that knows its roles and circuit elements."""

from __future__ import annotations

from types import ModuleType

from . import common_emitter, follower

__all__ = ["TOPOLOGIES", "TOPOLOGY_ROLES", "topology_module"]

TOPOLOGIES = (follower.NAME, common_emitter.NAME)
_MODULES = {follower.NAME: follower, common_emitter.NAME: common_emitter}
TOPOLOGY_ROLES = {name: module.ROLES for name, module in _MODULES.items()}


def topology_module(topology: str) -> ModuleType:
    """The module that knows a topology's roles and circuit (StageError for an unknown one)."""
    if topology not in _MODULES:
        from .base import StageError

        raise StageError(f"topology must be one of {', '.join(TOPOLOGIES)}, not {topology!r}")
    return _MODULES[topology]
