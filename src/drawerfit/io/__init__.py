"""Every file format drawerfit reads or writes, in one package.

``tables`` (raw rows of a stock file or parts list: CSV or XLSX, within the size limits),
``stock_edits`` (quantity cells rewritten in place, every other byte kept), ``files`` (the one
atomic writer, the take lock, new files that are whole or absent, outputs that never land on
inputs), ``take`` and ``take_history`` (taking parts out of the stock file: backup, log, undo),
``spec`` (the TOML stage spec), ``readable_toml`` and ``saved_design`` (DESIGN.toml: one
writer, one reader) and ``kit_file`` (KIT.json).  The JSON the commands print is each result's
``to_dict()``.  Nothing here is imported at package start-up.
"""
