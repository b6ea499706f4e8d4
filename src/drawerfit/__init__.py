"""drawerfit: design and fill small transistor stages from the parts you already own.

The library is usable without the command line::

    from drawerfit import load_stock, parse_value
    stock = load_stock("inventory_samples/teaching_lab.csv")

Heavy modules are imported on first use, so importing the package stays light.
"""

from __future__ import annotations

from importlib import import_module

from .values import format_code, format_si, parse_value, parse_quantity, parse_tolerance
from .parts import DrawerfitError, NoDesignError, SpecError, Stock, StockError, StockLine

__version__ = "0.1.0"

# name -> module that defines it; loaded when first asked for (PEP 562)
_LAZY = {
    "load_stock": "drawerfit.stock",
    "equivalents": "drawerfit.equivalents",
    "match": "drawerfit.search.match",
    "analyse": "drawerfit.analysis",
    "load_spec": "drawerfit.io.spec",
    "design": "drawerfit.search.design",
}


def __getattr__(name: str):
    if name in _LAZY:
        return getattr(import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'drawerfit' has no attribute {name!r}")


__all__ = [
    "format_code", "format_si", "parse_value", "parse_quantity", "parse_tolerance",
    "DrawerfitError", "NoDesignError", "SpecError", "Stock", "StockError", "StockLine",
    *_LAZY,
]
