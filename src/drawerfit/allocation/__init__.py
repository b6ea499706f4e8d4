"""Allocation with OR-Tools CP-SAT, in one home: the design's bins (``bins``: which drawer lines give
the parts of a design) and whole parts lists (``parts_lists``: which equivalents fill which
designators).  Imported only when an allocation is needed (OR-Tools is heavy).
"""
