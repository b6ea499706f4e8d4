"""Shared test fixtures: paths to the sample drawers, and a tiny StockLine factory."""

from __future__ import annotations

from pathlib import Path

import pytest

from drawerfit.parts import Source, StockLine

ROOT = Path(__file__).resolve().parent.parent
SAMPLES = ROOT / "inventory_samples"


@pytest.fixture
def samples() -> Path:
    return SAMPLES


def make_line(index: int, kind: str, value: float, qty: int = 10, tol: float = 0.05, rating: float | None = None,
              polarized: bool = False, location: str = "") -> StockLine:
    """A stock line built in code, for tests that need exact control of the drawer."""
    if rating is None:
        rating = 0.25 if kind == "resistor" else 50.0
    return StockLine(index=index, kind=kind, value=value, qty=qty, source=Source("test.csv", None, index + 2, 1),
                     tolerance=tol, power=rating if kind == "resistor" else None,
                     voltage=rating if kind == "capacitor" else None, polarized=polarized,
                     location=location or f"bin{index}")
