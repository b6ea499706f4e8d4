"""Every file format drawerfit reads or writes, in one package.

``tables`` (raw rows of a stock file or parts list: CSV or XLSX, within the size limits),
``stock_edits`` (quantity cells rewritten in place, every other byte kept), ``files`` (the one
atomic writer, the take lock, new files that are whole or absent, outputs that never land on
inputs), ``take`` and ``take_history`` (taking parts out of the stock file: backup, log, undo),
``spec`` (the TOML stage spec), ``readable_toml`` and ``saved_design`` (DESIGN.toml: one
writer, one reader), ``kit_file`` (KIT.json) and ``design_json`` (the `design --json` shape).
Nothing here is imported at package start-up.
"""
