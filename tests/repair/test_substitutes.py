"""repair.substitutes: the stock transistors that meet a requirement, with their margins, ranked.

Expected values: a brute force over the stock lines written plainly here (one loop, the
requirement's comparisons one by one), on seeded random drawers (hypothesis) and on one drawer of a
thousand lines; the hFE measure of docs/repair.md computed here from its definition; hand-worked
margins for a crafted line.  All data invented.
"""

from __future__ import annotations

import math
import random

import pytest
from hypothesis import given, settings, strategies as st

from drawerfit.parts import Source, StockLine
from drawerfit.repair.substitutes import Requirement, RequirementError, find_substitutes, hfe_fit

VCEO = [10.0, 20.0, 30.0, 40.0, 45.0, 60.0, 100.0, 300.0]
IC = [0.05, 0.1, 0.15, 0.2, 0.5, 1.0, 3.0]
PD = [0.25, 0.3, 0.5, 0.6, 1.25]
VSAT = [0.1, 0.2, 0.25, 0.3, 0.5]
HFE = [20.0, 40.0, 60.0, 100.0, 110.0, 120.0, 150.0, 200.0, 260.0, 300.0, 450.0, 800.0]


def line(index, polarity="npn", hfe=(100.0, 300.0), vceo=45.0, ic_max=0.1, pd=0.5, vce_sat=0.2, qty=5,
         label=None) -> StockLine:
    """A transistor line as the loader makes it: a VCE(sat) the file does not give is the default, marked assumed."""
    assumed = ("vce_sat",) if vce_sat is None else ()
    return StockLine(index=index, kind="transistor", value=None, qty=qty,
                     source=Source("drawer.csv", None, index + 2, 1), location=f"tray {index % 7}",
                     label=label or f"Bench{polarity.upper()}-{index}", polarity=polarity,
                     hfe_min=None if hfe is None else hfe[0], hfe_max=None if hfe is None else hfe[1],
                     vceo=vceo, ic_max=ic_max, pd=pd, vbe=0.65, vce_sat=0.2 if vce_sat is None else vce_sat,
                     assumed=assumed)


def brute_force(lines, req):
    """(failed check names, unknown check names) per line index: the requirement's comparisons, one by one."""
    out = {}
    for ln in lines:
        failed, unknown = [], []
        if ln.polarity != req.polarity:
            failed.append("polarity")
        for name, have, want in (("VCEO", ln.vceo, req.vceo), ("IC max", ln.ic_max, req.ic_max),
                                 ("PD", ln.pd, req.pd)):
            if want is None:
                continue
            if have is None:
                unknown.append(name)
            elif have < want:
                failed.append(name)
        if req.vce_sat is not None:
            if "vce_sat" in ln.assumed:
                unknown.append("VCE(sat)")
            elif ln.vce_sat > req.vce_sat:
                failed.append("VCE(sat)")
        if req.hfe_min is not None or req.hfe_max is not None:
            if ln.hfe_min is None:
                unknown.append("hFE")
            elif (req.hfe_min is not None and ln.hfe_max < req.hfe_min) or \
                    (req.hfe_max is not None and ln.hfe_min > req.hfe_max):
                failed.append("hFE")
        if ln.qty < req.units:
            failed.append("on hand")
        out[ln.index] = (failed, unknown)
    return out


def distance(ln, req) -> float:
    """docs/repair.md: D = |ln(c/a)| + |ln(d/b)|, a term left out for an end not asked; no range: last."""
    if req.hfe_min is None and req.hfe_max is None:
        return 0.0
    if ln.hfe_min is None:
        return math.inf
    d = 0.0
    if req.hfe_min is not None:
        d += abs(math.log(ln.hfe_min / req.hfe_min))
    if req.hfe_max is not None:
        d += abs(math.log(ln.hfe_max / req.hfe_max))
    return d


def check_against_brute_force(lines, req):
    result = find_substitutes(lines, req)
    expect = brute_force(lines, req)
    assert sorted(s.line.index for s in result) == sorted(expect)
    assert [s.rank for s in result] == list(range(1, len(result) + 1))
    for s in result:
        failed, unknown = expect[s.line.index]
        assert [c.name for c in s.checks if c.ok is False] == failed, s.line
        assert [c.name for c in s.checks if c.ok is None] == unknown, s.line
        assert s.status == ("fail" if failed else "unknown" if unknown else "pass")
    # ranking: every passing line before every line with an unknown, before every failing one
    tiers = [{"pass": 0, "unknown": 1, "fail": 2}[s.status] for s in result]
    assert tiers == sorted(tiers)
    # within the passing and the unknown lines: the closest hFE range first, then the most on hand
    for status in ("pass", "unknown"):
        got = [s.line.index for s in result if s.status == status]
        by = {ln.index: ln for ln in lines}
        want = sorted(got, key=lambda i: (distance(by[i], req), -by[i].qty, i))
        assert got == want
        ds = [distance(by[i], req) for i in got]
        assert ds == sorted(ds)
    # failing lines: the right polarity before the other
    wrong = [s.line.polarity != req.polarity for s in result if s.status == "fail"]
    assert wrong == sorted(wrong)
    return result


@st.composite
def drawers(draw):
    n = draw(st.integers(0, 25))
    lines = []
    for i in range(n):
        hfe = draw(st.one_of(st.none(), st.tuples(st.sampled_from(HFE), st.sampled_from([1.0, 1.5, 2.0, 3.0])).map(
            lambda t: (t[0], t[0] * t[1]))))
        lines.append(line(i, polarity=draw(st.sampled_from(["npn", "pnp"])), hfe=hfe,
                          vceo=draw(st.one_of(st.none(), st.sampled_from(VCEO))),
                          ic_max=draw(st.one_of(st.none(), st.sampled_from(IC))),
                          pd=draw(st.one_of(st.none(), st.sampled_from(PD))),
                          vce_sat=draw(st.one_of(st.none(), st.sampled_from(VSAT))),
                          qty=draw(st.integers(0, 30))))
    return lines


@st.composite
def requirements(draw):
    lo = draw(st.one_of(st.none(), st.sampled_from(HFE)))
    hi = draw(st.one_of(st.none(), st.sampled_from(HFE)))
    if lo is not None and hi is not None and lo > hi:
        lo, hi = hi, lo
    return Requirement(polarity=draw(st.sampled_from(["npn", "pnp"])),
                       vceo=draw(st.one_of(st.none(), st.sampled_from(VCEO))),
                       ic_max=draw(st.one_of(st.none(), st.sampled_from(IC))),
                       pd=draw(st.one_of(st.none(), st.sampled_from(PD))),
                       vce_sat=draw(st.one_of(st.none(), st.sampled_from(VSAT))),
                       hfe_min=lo, hfe_max=hi, units=draw(st.integers(1, 4)))


@settings(max_examples=120, deadline=None, derandomize=True)
@given(lines=drawers(), req=requirements())
def test_the_list_equals_a_brute_force_over_the_lines(lines, req):
    check_against_brute_force(lines, req)


def test_a_drawer_of_a_thousand_lines():
    rnd = random.Random(12)
    lines = []
    for i in range(1000):
        lo = rnd.choice(HFE)
        lines.append(line(i, polarity=rnd.choice(["npn", "pnp"]),
                          hfe=None if rnd.random() < 0.05 else (lo, lo * rnd.choice([1.0, 2.0, 2.5, 3.0])),
                          vceo=None if rnd.random() < 0.05 else rnd.choice(VCEO),
                          ic_max=rnd.choice(IC), pd=None if rnd.random() < 0.05 else rnd.choice(PD),
                          vce_sat=rnd.choice(VSAT + [None]), qty=rnd.randint(0, 40)))
    req = Requirement("npn", vceo=40.0, ic_max=0.1, pd=0.5, hfe_min=110.0, hfe_max=300.0, vce_sat=0.3)
    result = check_against_brute_force(lines, req)
    statuses = {s.status for s in result}
    assert statuses == {"pass", "unknown", "fail"}  # the drawer exercises all three


def test_margins_and_reasons_of_a_crafted_line():
    # by hand: VCEO 30 V against 45 V is 1/3 short; IC max 150 mA against 100 mA is 50 % over;
    # VCE(sat) 0.4 V against at most 0.3 V is a third over; 2 on hand against 3 needed
    ln = line(0, hfe=(40.0, 120.0), vceo=30.0, ic_max=0.15, pd=0.5, vce_sat=0.4, qty=2)
    req = Requirement("npn", vceo=45.0, ic_max=0.1, pd=0.5, hfe_min=150.0, hfe_max=400.0, vce_sat=0.3, units=3)
    (s,) = find_substitutes([ln], req)
    by = {c.name: c for c in s.checks}
    assert by["VCEO"].ok is False and by["VCEO"].margin == pytest.approx(-1 / 3)
    assert "30 V, 45 V needed (33.3 % short)" in by["VCEO"].message
    assert by["IC max"].ok is True and by["IC max"].margin == pytest.approx(0.5)
    assert by["PD"].ok is True and by["PD"].margin == 0.0  # a rating exactly met is met
    assert by["VCE(sat)"].ok is False and by["VCE(sat)"].margin == pytest.approx(1 - 0.4 / 0.3)
    assert "33.3 % over" in by["VCE(sat)"].message
    # hFE 40-120 against 150-400: wholly below, its highest 20 % under the lowest asked
    assert by["hFE"].ok is False and by["hFE"].margin == pytest.approx(120 / 150 - 1)
    assert "wholly below" in by["hFE"].message and "20 %" in by["hFE"].message
    assert by["on hand"].ok is False and by["on hand"].message == "2 on hand, 3 needed"
    assert s.status == "fail" and [c.name for c in s.failed] == ["VCEO", "VCE(sat)", "hFE", "on hand"]


def test_unknown_ratings_are_said_and_ranked_after_known_passes():
    known = line(0, hfe=(200.0, 600.0), qty=1)  # further from the asked range
    no_vceo = line(1, hfe=(100.0, 300.0), vceo=None, qty=50)  # the asked range exactly, but VCEO unknown
    req = Requirement("npn", vceo=40.0, hfe_min=100.0, hfe_max=300.0)
    first, second = find_substitutes([no_vceo, known], req)
    assert (first.line.index, first.status) == (0, "pass")
    assert (second.line.index, second.status) == (1, "unknown")
    assert [c.message for c in second.unknown] == ["VCEO unknown: not in the stock file"]


def test_an_assumed_vce_sat_is_not_a_rating():
    # the loader's 0.2 V default stands in for the analysis; against a VCE(sat) asked it is unknown
    (s,) = find_substitutes([line(0, vce_sat=None)], Requirement("npn", vce_sat=0.3))
    assert s.status == "unknown" and s.unknown[0].name == "VCE(sat)"


def test_hfe_fit_by_hand():
    # the same range: distance 0, all of it inside, all of the asked range covered
    f = hfe_fit(100, 300, 100, 300)
    assert (f.distance, f.coverage, f.overlap, f.inside) == (0.0, 1.0, 1.0, True)
    # 100-400 against 100-200: on the log scale (where hFE spreads) half of 100-400 (a ratio of 4)
    # lies in 100-200 (a ratio of 2); D = |ln(400/200)| = ln 2
    f = hfe_fit(100, 400, 100, 200)
    assert f.coverage == pytest.approx(0.5) and f.overlap == pytest.approx(1.0)
    assert f.distance == pytest.approx(math.log(2)) and not f.inside
    # 150-200 inside 100-400: all inside, covering ln(4/3)/ln(4) of the asked range
    f = hfe_fit(150, 200, 100, 400)
    assert f.inside and f.coverage == 1.0 and f.overlap == pytest.approx(math.log(4 / 3) / math.log(4))
    assert f.distance == pytest.approx(math.log(1.5) + math.log(2))
    # one end asked: only that end counts; the open end leaves no overlap share
    f = hfe_fit(50, 150, 100, None)
    assert f.distance == pytest.approx(math.log(2)) and f.overlap is None
    assert f.coverage == pytest.approx(math.log(1.5) / math.log(3))
    # a single figure: inside or not
    assert hfe_fit(150, 150, 100, 300).coverage == 1.0 and hfe_fit(350, 350, 100, 300).coverage == 0.0


@pytest.mark.parametrize("kwargs,fragment", [
    ({"polarity": "npm"}, "unknown transistor polarity 'npm'"),
    ({"polarity": "npn", "hfe_min": 300.0, "hfe_max": 100.0}, "the lowest is above the highest"),
    ({"polarity": "npn", "vceo": -5.0}, "VCEO must be a positive"),
    ({"polarity": "npn", "hfe_min": 0.5}, "an hFE between 1 and"),
    ({"polarity": "npn", "units": 0}, "at least 1"),
])
def test_a_requirement_that_cannot_be_used_says_why(kwargs, fragment):
    with pytest.raises(RequirementError, match=fragment):
        Requirement(**kwargs)
