"""Parts lists: fill a whole list from the drawer for N units, jointly, and say what to buy.

``parts_list`` reads the list (CSV or XLSX), ``candidates`` finds each line's equivalents,
``fill`` runs the allocation (``drawerfit.allocation``, CP-SAT) and builds the ``KitResult``
(``result``: the pick list, the cautions, and its dict and table forms).
"""
