"""E-series tables against IEC 60063, cross-checked with the `eseries` package from the registry."""

from __future__ import annotations

import pytest

from drawerfit.eseries import SERIES, decade_values, nearest, neighbours, series_values

eseries = pytest.importorskip("eseries")


@pytest.mark.parametrize("name", ["E3", "E6", "E12", "E24", "E48", "E96", "E192"])
def test_tables_equal_the_eseries_package(name):
    # source: the `eseries` package (PyPI), which carries the IEC 60063 tables as integers
    ref = eseries.series(getattr(eseries, name))
    scale = 10 if name in ("E3", "E6", "E12", "E24") else 100
    assert [round(v * scale) for v in series_values(name)] == list(ref)


def test_sizes_and_known_departures_from_the_geometric_rule():
    # IEC 60063: E-n has n values per decade; E24 departs from round(10**(i/24), 1) at these values
    assert {k: len(v) for k, v in SERIES.items()} == {"E3": 3, "E6": 6, "E12": 12, "E24": 24, "E48": 48,
                                                     "E96": 96, "E192": 192}
    geometric = [round(10 ** (i / 24), 1) for i in range(24)]
    departed = [v for v, g in zip(series_values("E24"), geometric) if v != g]
    assert departed == [2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2]
    assert 9.20 in series_values("E192")  # the published E192 exception (IEC 60063)


def test_decades_and_nearest():
    assert decade_values("E6", 1e3, 1e4) == [1000.0, 1500.0, 2200.0, 3300.0, 4700.0, 6800.0, 10000.0]
    assert nearest(4.9e3, "E12") == 4700.0
    assert nearest(5.3e-9, "E6") == pytest.approx(4.7e-9)
    assert neighbours(5000.0, "E24") == (4700.0, 5100.0)
    assert neighbours(4700.0, "E24") == (4700.0, 4700.0)
