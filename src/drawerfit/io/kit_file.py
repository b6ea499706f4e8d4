"""KIT.json, the saved kit: its one writer and its one reader (what `take` reads back).

The shape is ``KitResult.to_dict()`` (docs/kit-and-take.md): the filled and unfilled designators, the
shopping list, the pick list with the stock file's checksum, and the cautions.
"""

from __future__ import annotations

import json
from pathlib import Path

from ..parts import SpecError

__all__ = ["kit_text", "write_kit", "read_kit_tree"]


def kit_text(result) -> str:
    """The JSON text of a kit, as `kit --json` prints it and `kit --save` writes it."""
    return json.dumps(result.to_dict(), indent=2, ensure_ascii=False, allow_nan=False)


def write_kit(path: str | Path, result) -> Path:
    """Write KIT.json at once (``files.atomic_write``); the file written."""
    from .files import atomic_write

    return atomic_write(path, kit_text(result) + "\n")


def read_kit_tree(path: str | Path, error: type[Exception] = SpecError, what: str = "kit") -> dict:
    """The JSON tree of a saved kit as written (size-limited; ``error`` names the file)."""
    from ..constants import MAX_TEXT_INPUT_BYTES
    from .files import read_limited

    raw = read_limited(path, MAX_TEXT_INPUT_BYTES, error, what)
    try:
        return json.loads(raw.decode("utf-8-sig"))
    except (ValueError, RecursionError) as exc:
        raise error(f"{path}: not a readable JSON file ({str(exc)[:200]})") from None
