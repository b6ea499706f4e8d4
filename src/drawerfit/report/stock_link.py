"""Hold a saved design against the stock file it was made from (for `report --stock`).

The stock file is only read.  A changed checksum is reported, not fatal: the report still
shows the design, and says that the bins may no longer hold what they did.
"""

from __future__ import annotations

import dataclasses

from ..io.saved_design import DesignFile

__all__ = ["link_stock"]


def link_stock(design: DesignFile, stock) -> tuple[DesignFile, str]:
    """The design with the transistor's bin filled from ``stock`` (a ``parts.Stock``) when
    missing, and a note on whether the stock file still matches the design's checksum.
    """
    notes = []
    if design.stock_checksum:
        if stock.checksum == design.stock_checksum:
            notes.append("stock file checked: unchanged since the design was made")
        else:
            notes.append("the stock file has changed since the design was made: check the bins before you pick")
    from ..stages.topologies import assembly_for

    if assembly_for(design.stage.topology) is not None:  # a two-stage file names both transistors' bins itself
        return design, "; ".join(notes)
    t = design.stage.transistor
    if not design.transistor_location and t.label:
        same = [line for line in stock.transistors() if (line.label or "").strip().lower() == t.label.lower()]
        if same:
            line = same[0]
            design = dataclasses.replace(design, transistor_location=line.location,
                                         transistor_source=line.source.to_dict())
            if line.location:
                notes.append(f"{t.label} found in bin {line.location}")
    if not t.pins and t.label:
        # the pin order, when the design file lacks it and the stock line gives it
        line = next((ln for ln in stock.transistors() if (ln.label or "").strip().lower() == t.label.lower()
                     and ln.pins), None)
        if line is not None:
            stage = dataclasses.replace(design.stage, transistor=dataclasses.replace(t, pins=line.pins))
            design = dataclasses.replace(design, stage=stage)
    return design, "; ".join(notes)
