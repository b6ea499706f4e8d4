"""drawerfit: design and fill small transistor stages from the parts you already own.

The library reads naturally in a notebook; every function takes objects or paths::

    import drawerfit
    stock = drawerfit.load_stock("inventory_samples/teaching_lab.csv")
    drawerfit.match("4k7", stock, within=0.01)
    result = drawerfit.design("inventory_samples/specs/bench_buffer.toml", stock, units=10)
    result.to_pandas()

Each result has a short repr, ``to_dict()`` (the JSON the command line prints) and, where a table
fits, ``to_pandas()``.  The functions live in ``drawerfit.api``; heavy modules are imported on
first use, so importing the package stays light.
"""

from __future__ import annotations

from importlib import import_module

from .values import format_code, format_si, parse_value, parse_quantity, parse_tolerance
from .parts import DrawerfitError, NoDesignError, SpecError, Stock, StockError, StockLine

__version__ = "0.1.0"

# name -> module that defines it; loaded when first asked for (PEP 562)
_LAZY = {
    **{name: "drawerfit.api" for name in (
        "load_stock", "load_spec", "analyse", "analyze", "match", "substitutes", "design", "mend", "save_design",
        "load_design", "kit",
        "load_parts_list", "save_kit", "take", "undo", "history")},
}
# (no lazy name may equal a subpackage's: importing ``drawerfit.x`` binds ``drawerfit.x`` to the module)


def __getattr__(name: str):
    if name in _LAZY:
        return getattr(import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'drawerfit' has no attribute {name!r}")


__all__ = [
    "format_code", "format_si", "parse_value", "parse_quantity", "parse_tolerance",
    "DrawerfitError", "NoDesignError", "SpecError", "Stock", "StockError", "StockLine",
    *_LAZY,
]
