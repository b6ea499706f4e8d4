"""Mending a stage with what is in the drawer.

``repair.substitutes``: the stock transistors that meet a requirement
(polarity, VCEO, IC max, PD, hFE range, VCE(sat)), ranked, and, given the stage they go into,
which keep it in spec unchanged (``repair.in_stage``).  Results: ``repair.result``.
``repair.mend``: a board mended with the fewest part changes (``search.changes``), as a repair note
with the stage before and after.

Nothing heavy is imported here: numpy comes in with the stage analysis, pandas with ``to_pandas``.
"""

from __future__ import annotations

__all__ = ["Requirement", "RequirementError", "find_substitutes", "substitutes_for"]


def __getattr__(name: str):
    if name in __all__:
        from . import substitutes as _mod

        return getattr(_mod, name)
    raise AttributeError(name)
