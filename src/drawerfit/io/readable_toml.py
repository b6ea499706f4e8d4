"""TOML files for people: values in the trade's notation, with the exact numbers kept beside them.

A saved design is read by people and analysed again by drawerfit, which must judge it with the
very floats the search judged it with.  So every value is written as people write it (``4k7``,
``47µ``, ``1 %``, ``250 mW``, ``4.5 mA``): exactly when its shortest decimal has at most
``EXACT_SHOWN`` significant digits (any value typed into a stock file or spec), else rounded to
``ROUNDED_DIGITS`` significant digits, with the exact float written to the ``[exact]`` table at
the end under the dotted path of its key (``"parts.R1.tolerance" = 0.010000000000000009``: the
arithmetic of a network, or of an IE window, leaves such tails).

Reading (``restore``) puts each exact number back in place of the text it rounds.  A text that no
longer rounds from its exact number was changed by a person: it is read as written, and a note
says that its exact number was not used.  docs/spec-format.md, "Saved designs", documents both.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Mapping

from ..parts import SpecError
from ..values import ValueParseError, parse_quantity, rounded, significant_digits, trade_code, trade_si

__all__ = ["Value", "dumps", "restore", "EXACT_TABLE", "EXACT_SHOWN", "ROUNDED_DIGITS"]

EXACT_TABLE = "exact"
EXACT_SHOWN = 6  # significant digits written as they are; 4k753 and 13.65 V stay exact text
ROUNDED_DIGITS = 3  # what a longer number is rounded to: the digits an E192 part carries


@dataclass(frozen=True)
class Value:
    """A number to write for people: ``unit`` 'ohm', 'F', 'V', 'A', 'W', 'Hz', '%' or None (a
    plain TOML number); ``code`` writes the IEC 60062 letter code (part values) instead of SI."""

    number: float
    unit: str | None = None
    code: bool = False


def _text(v: Value, path: tuple[str, ...], exact: dict[str, float]) -> Any:
    number = float(v.number)
    digits = None
    if significant_digits(number) > EXACT_SHOWN:
        digits = ROUNDED_DIGITS
        exact[".".join(path)] = number
    if v.unit is None:
        d = rounded(number, digits)
        return int(d) if d == d.to_integral_value() and abs(d) < 2**53 else float(d)
    if v.code:
        return trade_code(number, v.unit, digits)
    return trade_si(number, v.unit, digits)


def _render(node: Any, path: tuple[str, ...], exact: dict[str, float]) -> Any:
    if isinstance(node, Value):
        return _text(node, path, exact)
    if isinstance(node, Mapping):
        return {k: _render(v, (*path, str(k)), exact) for k, v in node.items()}
    if isinstance(node, (list, tuple)):
        return [_render(v, (*path, str(i)), exact) for i, v in enumerate(node)]
    return node


def dumps(doc: Mapping[str, Any], header: str = "") -> str:
    """TOML text of ``doc`` with every ``Value`` written for people, and ``[exact]`` last when a
    value had to be rounded.  ``header`` is prepended as comment lines."""
    import tomli_w

    exact: dict[str, float] = {}
    tree = _render(doc, (), exact)
    if EXACT_TABLE in tree:
        raise ValueError(f"{EXACT_TABLE!r} is reserved for the exact numbers")
    if exact:
        tree[EXACT_TABLE] = exact
    comments = "".join(f"# {line}".rstrip() + "\n" for line in header.splitlines())
    return comments + tomli_w.dumps(tree)


def _reads_as(shown: Any) -> float | None:
    if isinstance(shown, bool):
        return None
    if isinstance(shown, (int, float)):
        return float(shown)
    if isinstance(shown, str):
        try:
            return parse_quantity(shown).value
        except ValueParseError:
            return None
    return None


def _locate(tree: Any, key: str) -> tuple[Any, Any] | None:
    """(container, key or index) of a dotted path such as 'design.roles.RE.parts.1.value'."""
    steps = key.split(".")
    node = tree
    for i, step in enumerate(steps):
        last = i == len(steps) - 1
        if isinstance(node, dict) and step in node:
            if last:
                return node, step
            node = node[step]
        elif isinstance(node, list) and step.isdigit() and int(step) < len(node):
            if last:
                return node, int(step)
            node = node[int(step)]
        else:
            return None
    return None


def _copy(node: Any) -> Any:
    if isinstance(node, dict):
        return {k: _copy(v) for k, v in node.items()}
    if isinstance(node, list):
        return [_copy(v) for v in node]
    return node


def restore(data: Mapping[str, Any], path: str) -> tuple[dict, list[str]]:
    """``data`` (a parsed TOML tree) without its ``[exact]`` table and with each exact number put
    in place of the text it rounds; and notes on exact numbers not used (the text was changed)."""
    if EXACT_TABLE not in data:
        return dict(data), []
    table = data[EXACT_TABLE]
    if not isinstance(table, dict):
        raise SpecError(f"{path}: {EXACT_TABLE}: must be a table of numbers")
    tree = _copy({k: v for k, v in data.items() if k != EXACT_TABLE})
    notes: list[str] = []
    for key, number in table.items():
        if isinstance(number, bool) or not isinstance(number, (int, float)) or not math.isfinite(number):
            shown = repr(number)
            raise SpecError(f"{path}: {EXACT_TABLE}.{key} = {shown[:60]}: must be a number")
        spot = _locate(tree, key)
        if spot is None:
            notes.append(f"{EXACT_TABLE}.{key} names no key of the file; not used")
            continue
        parent, step = spot
        now = _reads_as(parent[step])
        if now is not None and now in (float(number), float(rounded(number, ROUNDED_DIGITS))):
            parent[step] = float(number)
        elif now is not None:
            notes.append(f"{key} was changed from the saved value, so it is read as written "
                         f"({parent[step]!s}) and its exact number in [{EXACT_TABLE}] is not used")
    return tree, notes
