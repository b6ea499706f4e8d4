"""Carrying a stage out of drawerfit: the HTML report and the exports.

``html.write_report`` (the page), ``export.design_netlist`` (SPICE deck), ``bom.write_bom``
(CSV/XLSX parts list), with ``design_file`` (reading DESIGN.toml), ``figures`` (what the page
shows), ``schematic`` (schemdraw), ``plots`` (matplotlib) and ``netlist`` (the stage as a deck).
Nothing here is imported at start-up; each module imports its heavy libraries inside functions.
See docs/report-and-export.md.
"""
