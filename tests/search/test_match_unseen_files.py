"""`match` on stock files generated here in mixed notations, against brute force on the intended values.

The brute force knows the values as numbers (never parsed), so a parser slip and a search slip both
show up as a difference.
"""

from __future__ import annotations

import itertools
import json

import numpy as np
from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings, strategies as st

from drawerfit.cli import main
from drawerfit.values import format_code

MANTISSAS = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2]


def notation(value: float, style: int) -> str:
    """One resistance written in one of the ways people type it."""
    if style == 0:
        return format_code(value, "ohm")  # 4k7, 2R2, 470R
    if style == 1:
        return f"{value:g} Ω" if value < 1e3 else f"{value / 1e3:g} kΩ" if value < 1e6 else f"{value / 1e6:g} MΩ"
    if style == 2:
        return f"{value:g}"  # plain ohms
    if style == 3:
        return f"{value:g}ohm"
    return f"{value / 1e3:g}K"


HEADERS = [("Kind", "Value", "Qty", "Bin"), ("type", "Resistance", "On hand", "Drawer"),
           ("Category", "Val", "Count", "Location")]


def brute(values, qtys, target, window, max_parts, units):
    ser = lambda a, b: a + b  # noqa: E731
    par = lambda a, b: a * b / (a + b)  # noqa: E731
    # bins of one value are one part (the files give no tolerance or rating, so every 4k7 is the same
    # part): their quantities add up, as docs/method.md says of match and design
    pooled: dict[float, int] = {}
    for v, q in zip(values, qtys):
        pooled[v] = pooled.get(v, 0) + q
    values, qtys = list(pooled), list(pooled.values())
    idx = [i for i, q in enumerate(qtys) if q >= units]
    cand = []
    for i in idx:
        cand.append((values[i], 1))
    for i, j in itertools.combinations_with_replacement(idx, 2):
        if i == j and qtys[i] < 2 * units:
            continue
        cand += [(ser(values[i], values[j]), 2), (par(values[i], values[j]), 2)]
    if max_parts >= 3:
        for a in idx:
            for b, c in itertools.combinations_with_replacement(idx, 2):
                ids = [a, b, c]
                if any(ids.count(x) * units > qtys[x] for x in ids):
                    continue
                va, vb, vc = values[a], values[b], values[c]
                cand += [(ser(va, ser(vb, vc)), 3), (par(va, par(vb, vc)), 3), (ser(va, par(vb, vc)), 3),
                         (par(va, ser(vb, vc)), 3)]
    inside = sorted((n, abs(v / target - 1)) for v, n in cand if abs(v / target - 1) <= window * (1 + 1e-12))
    return inside


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(
    st.lists(st.tuples(st.sampled_from(MANTISSAS), st.integers(0, 5), st.integers(0, 4), st.integers(0, 4)),
             min_size=1, max_size=7),
    st.sampled_from([",", ";", "\t"]), st.integers(0, 2), st.floats(20, 200000), st.sampled_from([0.01, 0.05]),
    st.integers(2, 3), st.integers(1, 2),
)
def test_match_equals_brute_force_on_unseen_mixed_notation_files(tmp_path, spec, delim, hdr, target, window,
                                                                  max_parts, units):
    values = [m * 10.0**e for m, e, _q, _s in spec]
    qtys = [q for _m, _e, q, _s in spec]
    lines = [delim.join(HEADERS[hdr])]
    for n, (v, (_m, _e, q, style)) in enumerate(zip(values, spec)):
        lines.append(delim.join(["resistor", notation(v, style), str(q), f"B{n}"]))
    path = tmp_path / f"unseen_{abs(hash((tuple(values), delim, hdr))) % 10**8}.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    top = 50
    res = CliRunner().invoke(main, ["match", f"{target:.6g}", "--stock", str(path), "--within", str(window),
                                    "--max-parts", str(max_parts), "--units", str(units), "--top", str(top),
                                    "--json"])
    assert res.exit_code == 0, res.output
    got = json.loads(res.stdout)["results"]
    tgt = float(f"{target:.6g}")
    ref = brute(values, qtys, tgt, window, max_parts, units)
    got_inside = [(r["part_count"], abs(r["error"])) for r in got if r["within"]]
    # equal up to duplicates the tool folds (the same parts combined the same way, e.g. from two equal lines);
    # compare the ranked (part count, |error|) sequence of distinct figures
    dedup = lambda xs: sorted({(n, round(e, 12)) for n, e in xs})  # noqa: E731
    assert dedup(got_inside) == dedup(ref)[: len(dedup(got_inside))]
    if len(got_inside) < top:
        assert dedup(got_inside) == dedup(ref)
    if got_inside:
        assert got[0]["within"] and got[0]["part_count"] == ref[0][0]
        assert np.isclose(abs(got[0]["error"]), min(e for n, e in ref if n == ref[0][0]), atol=1e-12)
