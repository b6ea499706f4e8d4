"""What to buy and the nearest design when the drawer cannot build the stage.

Oracles: brute force on small drawers — the naive enumeration of the search (every combination
of one candidate per role, no bounds: ``exhaustive=True``) over the combined space of drawer
singles and pairs plus catalogue parts as singles, for the fewest bought parts; the analysis
engine's own worst case (``analysis.core.worst_case`` with ``analysis.targets`` margins, the
path ``analyse`` takes, held against ngspice in tests/reference) over every single-part design,
for the nearest design; and hand derivations named beside the values.
"""

from __future__ import annotations

import itertools
import json
import math

import numpy as np
from click.testing import CliRunner
from hypothesis import HealthCheck, event, given, settings, strategies as st

from drawerfit.cli import main
from drawerfit.parts import Source, Stock, StockLine
from drawerfit.search import shopping
from drawerfit.search.design import design
from drawerfit.search.runner import run_search
from drawerfit.search.problem import DesignProblem, DesignTargets
from drawerfit.search.tables import RoleTable, build_tables, with_default_ratings

from ..conftest import make_line
from .test_design_search import transistor

E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)  # IEC 60063 E12 mantissas


def bought_line(kind: str, value: float, tol: float, rating: float, polarized: bool = False) -> StockLine:
    """A catalogue entry (index, quantity and source are set by the shopping code)."""
    return StockLine(index=0, kind=kind, value=value, qty=0, source=Source("catalogue", None, 0), tolerance=tol,
                     power=rating if kind == "resistor" else None, voltage=rating if kind == "capacitor" else None,
                     polarized=polarized)


def _subset(t: RoleTable, keep: np.ndarray) -> RoleTable:
    return t.take(keep)


def brute_force_purchases(problem, drawer_lines, catalogue):
    """The best design of the combined space by (bought parts, usual objective), or None.

    The space is built here independently of the shopping code: every equivalent of drawer and
    catalogue lines together, less the pairs that contain a catalogue line (a bought part fills a
    role alone); then every combination is enumerated naively."""
    lines, _ = with_default_ratings(drawer_lines)
    extra = shopping.purchase_lines(max(ln.index for ln in lines) + 1, problem.units, catalogue)
    ids = [ln.index for ln in extra]
    every = lines + extra

    def tables(kind):
        out = {}
        for c, t in build_tables([ln for ln in every if ln.kind == kind], kind, problem.max_parts,
                                 problem.units).items():
            with_bought = np.isin(t.members, ids).any(axis=1)
            out[c] = _subset(t, np.flatnonzero(~with_bought if c > 1 else np.ones(len(t), bool)))
        return out

    found, _, _ = run_search(problem, every, 1, True, virtual_ids=ids, tables=(tables("resistor"), tables("capacitor")))
    return found[0] if found else None


def _with_bought(drawer_lines, buy, units):
    """The drawer with exactly the bought parts added, as new stock lines."""
    lines = list(drawer_lines)
    for b in buy:
        i = max(ln.index for ln in lines) + 1
        lines.append(StockLine(index=i, kind=b["kind"], value=b["value"], qty=b["count"],
                               source=Source("new.csv", None, i + 2, 1), tolerance=b["tolerance"],
                               power=b["rating"] if b["kind"] == "resistor" else None,
                               voltage=b["rating"] if b["kind"] == "capacitor" else None,
                               polarized=b["polarized"], location="NEW"))
    return Stock(lines=tuple(lines))


@st.composite
def shopping_cases(draw):
    lines = []
    for _ in range(draw(st.integers(2, 3))):
        v = draw(st.sampled_from(E12)) * 10 ** draw(st.integers(2, 4))
        lines.append(make_line(len(lines), "resistor", v, qty=draw(st.integers(1, 3)), tol=0.01))
    for _ in range(draw(st.integers(1, 2))):
        pol = draw(st.booleans())
        v = draw(st.sampled_from(E12)) * 10 ** draw(st.integers(-7, -5))
        lines.append(make_line(len(lines), "capacitor", v, qty=draw(st.integers(1, 2)), tol=0.2 if pol else 0.1,
                               polarized=pol, rating=draw(st.sampled_from([16.0, 50.0]))))
    lines.append(transistor(len(lines)))
    # catalogue: two resistors near what a 1 mA follower on 12 V wants, two capacitors
    cat = [bought_line("resistor", draw(st.sampled_from([4.7e3, 5.1e3, 5.6e3, 10e3, 22e3, 47e3])), 0.01, 0.25)
           for _ in range(2)]
    cat += [bought_line("capacitor", draw(st.sampled_from([1e-6, 4.7e-6, 22e-6])), 0.2, 25.0, polarized=True),
            bought_line("capacitor", draw(st.sampled_from([100e-9, 470e-9])), 0.1, 63.0)]
    return lines, cat


@settings(max_examples=16, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(case=shopping_cases(), f=st.sampled_from([20.0, 200.0]), units=st.sampled_from([1, 2]))
def test_fewest_purchases_equal_brute_force(case, f, units):
    drawer, cat = case
    p = DesignProblem("emitter-follower", "npn", 12.0, DesignTargets(ie_min=0.9e-3, ie_max=1.1e-3, f_low=f),
                      load=10e3, source_resistance=600.0, max_parts=2, units=units)
    lines, _ = with_default_ratings(drawer)
    st_: dict = {}
    alone, _, _ = run_search(p, lines, 1, False, stats_out=st_)
    assert not st_.get("truncated")
    if alone:
        event("the drawer alone does")
        return
    got = shopping.cheapest_purchases(p, lines, cat, drawer_proven=True)
    oracle = brute_force_purchases(p, drawer, cat)
    assert got.proven and got.ties_complete
    if oracle is None:
        event("no purchase does")
        assert got.design is None
        return
    event(f"{oracle.key[0]} to buy")
    assert got.bought == oracle.key[0]
    assert got.design.key[1:] == oracle.key[1:]  # and the same design: the usual objective breaks ties
    # the list, added to the drawer as real lines, lets the ordinary search succeed
    buy = shopping._buy_list(got.design, units)
    assert sum(b["per_unit"] for b in buy) == got.bought
    assert design(p, _with_bought(drawer, buy, units), suggest=False).feasible


def test_a_drawer_pair_and_one_purchase_beat_two_single_purchases():
    # Follower, 12 V, IE 0.9..1.1 mA, f_low 20 Hz into 10 kΩ, source 600 Ω, input resistance at
    # least 4 kΩ.  The drawer holds 10k (R1 = R2 = 10k: VTH = 6 V, RTH = 5 kΩ, input resistance
    # about 5 kΩ), 4k7 and 680R, all 1 %; for IE = 1 mA the emitter wants
    # RE = (6 − 0.65)/1 mA − 5k/(β+1) ≈ 5.32 kΩ (divider and IE formulas, docs/method.md).  No
    # single drawer part is near: 4k7 gives 1.13 mA, 10k 0.53 mA; the pair 4k7 + 680R = 5.38 kΩ
    # gives 0.99 mA.  The capacitors: one 4.7 µF electrolytic (a single part) and 100 nF film; 100 nF
    # in either coupling role is far too small (1/(2π·10 kΩ·100 nF) ≈ 160 Hz), so one capacitor
    # must be bought whatever the resistors.  With single parts only (the former search), RE must
    # be bought as well: two purchases.  With the drawer's pairs, RE = 4k7 + 680R and one bought
    # capacitor do: one purchase.
    lines = [make_line(0, "resistor", 10e3, qty=4, tol=0.01), make_line(1, "resistor", 4.7e3, qty=4, tol=0.01),
             make_line(2, "resistor", 680.0, qty=4, tol=0.01),
             make_line(3, "capacitor", 4.7e-6, qty=1, tol=0.2, polarized=True, rating=25.0),
             make_line(4, "capacitor", 100e-9, qty=4, tol=0.1, rating=63.0), transistor(5)]
    cat = [bought_line("resistor", 5.36e3, 0.01, 0.25), bought_line("capacitor", 22e-6, 0.2, 25.0, polarized=True)]
    p = DesignProblem("emitter-follower", "npn", 12.0,
                      DesignTargets(ie_min=0.9e-3, ie_max=1.1e-3, f_low=20.0, rin_min=4e3),
                      load=10e3, source_resistance=600.0, max_parts=2)
    single = p.with_(max_parts=1)
    # brute force over each space (oracle), then the shopping search
    assert brute_force_purchases(single, lines, cat).key[0] == 2
    assert brute_force_purchases(p, lines, cat).key[0] == 1
    drawer, _ = with_default_ratings(lines)
    assert shopping.cheapest_purchases(single, drawer, cat, drawer_proven=True).bought == 2
    got = shopping.cheapest_purchases(p, drawer, cat, drawer_proven=True)
    assert got.bought == 1 and got.proven
    re = got.design.roles["RE"].equivalent
    assert sorted(m.value for m in re.members) == [680.0, 4.7e3]
    # through design(): the list is one capacitor, proven fewest, and checked
    r = design(p, Stock(lines=tuple(lines)), catalogue=cat)
    assert r.status == "infeasible"
    assert [(b["kind"], b["value"], b["per_unit"]) for b in r.buy] == [("capacitor", 22e-6, 1)]
    assert r.buy_proven and r.buy_checked
    # exactly that part added to the whole drawer: the ordinary search finds a design
    assert design(p, _with_bought(lines, r.buy, 1), suggest=False).feasible


def test_no_purchase_can_help_is_said_and_proven():
    # IE 5 mA with an input resistance of at least 100 kΩ: the divider's RTH must then be above
    # 100 kΩ, and IB·RTH alone moves VB by about 5 mA/(hFE+1)·100 kΩ = 1.7 V to 5 V across the
    # hFE range 100..300 — far beyond a ±10 % IE window whatever the parts (divider formula,
    # docs/method.md).
    lines = [make_line(0, "resistor", 220e3, qty=4, tol=0.01), make_line(1, "resistor", 1e3, qty=4, tol=0.01),
             make_line(2, "capacitor", 10e-6, qty=4, tol=0.2, polarized=True, rating=25.0), transistor(3)]
    p = DesignProblem("emitter-follower", "npn", 12.0,
                      DesignTargets(ie_min=4.5e-3, ie_max=5.5e-3, f_low=20.0, rin_min=100e3),
                      load=1e3, source_resistance=600.0, max_parts=1)
    r = design(p, Stock(lines=tuple(lines)))
    # an empty list is never "proven fewest"; it says why it is empty, and that this is proven
    assert r.status == "infeasible" and r.buy == [] and not r.buy_proven and not r.buy_checked
    assert "no purchase of standard parts" in r.buy_note and "stopped" not in r.buy_note


# --- the nearest design ------------------------------------------------------------------------


def _ceil_grid(s: float) -> float:
    return next(g for g in shopping.SHORTFALL_GRID if g >= s)


def shortfalls(problem, lines):
    """Largest relative shortfall of every single-part design the stock allows (inf where a hard
    constraint fails: active region, polarity), judged by analysis.core.worst_case."""
    from drawerfit.analysis import core
    from drawerfit.analysis.targets import rating_margins, target_margins
    from drawerfit.search.design import transistor_model

    res_roles, cap_roles = problem.roles
    res = [ln for ln in lines if ln.kind == "resistor"]
    caps = [ln for ln in lines if ln.kind == "capacitor"]
    (tr,) = [ln for ln in lines if ln.kind == "transistor"]
    combos = []
    for pick in itertools.product(*([res] * len(res_roles) + [caps] * len(cap_roles))):
        used: dict[int, int] = {}
        for ln in pick:
            used[ln.index] = used.get(ln.index, 0) + problem.units
        if all(n <= next(x.qty for x in lines if x.index == i) for i, n in used.items()):
            combos.append(dict(zip(res_roles + cap_roles, pick)))
    roles = res_roles + cap_roles
    val = {r: np.array([c[r].value for c in combos]) for r in roles}
    tol = {r.lower(): np.array([c[r].tolerance for c in combos]) for r in roles}
    m = transistor_model(tr)
    kw = dict(topology=problem.topology, polarity=problem.polarity, supply=problem.supply, rc=0.0, re2=0.0, ce=0.0,
              rs=problem.source_resistance, rl=problem.rl, hfe=m.hfe, vbe=m.vbe, vce_sat=m.vce_sat,
              vbe_tempco=m.vbe_tempco, i_sat=None, **{r.lower(): val[r] for r in roles})
    c = problem.conditions
    wc = core.worst_case(tolerances=tol, hfe_min=m.hfe_min, hfe_max=m.hfe_max, temp_min=c.ambient_min,
                         temp_max=c.ambient_max, **kw)
    margins = target_margins(problem.targets, wc.low, wc.high)
    margins.update(rating_margins(
        wc.low, wc.high, conditions=c, supply=problem.supply,
        power_ratings={r: np.array([x[r].power for x in combos]) for r in res_roles},
        voltage_ratings={r: np.array([x[r].voltage for x in combos]) for r in cap_roles},
        polarized={r: np.array([x[r].polarized for x in combos]) for r in cap_roles},
        pd=m.pd, vceo=m.vceo, ic_max=m.ic_max))
    worst = np.zeros(len(combos))
    for name, a in margins.items():
        a = np.asarray(a, float)
        if name.endswith("polarity"):
            worst = np.where(a < 0, np.inf, worst)
        else:
            worst = np.maximum(worst, -a)
    worst = np.where(wc.all_active, worst, np.inf)
    return combos, np.maximum(worst, 0.0)


@settings(max_examples=16, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(case=shopping_cases(), f=st.sampled_from([20.0, 200.0]), swing=st.sampled_from([None, 3.0]))
def test_nearest_design_is_the_least_shortfall_on_the_grid(case, f, swing):
    drawer, _ = case
    p = DesignProblem("emitter-follower", "npn", 12.0,
                      DesignTargets(ie_min=0.9e-3, ie_max=1.1e-3, f_low=f, swing=swing),
                      load=10e3, source_resistance=600.0, max_parts=1)
    lines, _ = with_default_ratings(drawer)
    combos, s = shortfalls(p, lines)
    finite = s[np.isfinite(s)]
    near = shopping.nearest_design(p, lines)
    assert near.proven
    if not len(finite) or finite.min() > shopping.SHORTFALL_GRID[-1]:
        event("no single-part design")
        assert near.design is None
        return
    expected = _ceil_grid(float(finite.min()))
    event("met" if finite.min() == 0 else "missed")
    assert near.level == expected
    # the design given lies on that level: its own shortfall (analysis engine) rounds up to it
    # (parts are told apart by what they are, not by bin: two bins of one identical part are one
    # candidate for the search, docs/method.md "Stock shared across roles and units")
    def what(x):
        return (x.kind, x.value, x.tolerance, x.rating)

    key = {r: what(c.equivalent.members[0]) for r, c in near.design.roles.items()}
    js = [i for i, c in enumerate(combos) if {r: what(x) for r, x in c.items()} == key]
    assert js
    for j in js:
        assert _ceil_grid(float(s[j])) == expected
        assert near.below < s[j] <= near.level or (near.below == 0.0 and s[j] <= near.level)


# --- the command -----------------------------------------------------------------------------------

from ..commands.test_design_cli import HEADER, SPEC  # noqa: E402  (the same drawer header and buffer spec)


def _csv(rows: list[str]) -> str:
    return HEADER + "\n".join(rows) + "\nNPN,,,,,,10,T1,QN-SIG-A,120,300,40,0.2,0.5,0.65,0.2,\n"


def test_command_infeasible_json_with_proven_list(tmp_path):
    # E12 resistors 1k..82k, 1 %, and only 100 nF capacitors; single parts (--max-parts 1).
    # C2 sees at least the 10 kΩ load: 1/(2π·10 kΩ·100 nF) ≈ 159 Hz; C1 sees at most
    # 600 Ω + 82k ∥ 82k = 41.6 kΩ: ≥ 38 Hz (f = 1/(2πRC)); the stage corner is near or above the
    # largest of these (docs/method.md), so both coupling capacitors must be bought: 2 parts.
    rows = [f"resistor,{m * 10 ** e:g},1%,0.25,,,10,R{e}-{i},,,,,,,,," for e in (3, 4) for i, m in enumerate(E12)]
    rows.append("capacitor,100n,10%,,50,film,10,C1,,,,,,,,,")
    stock = tmp_path / "drawer.csv"
    stock.write_text(_csv(rows), encoding="utf-8")
    spec = tmp_path / "buffer.toml"
    spec.write_text(SPEC, encoding="utf-8")
    r = CliRunner().invoke(main, ["design", str(spec), "--stock", str(stock), "--json", "--max-parts", "1"])
    assert r.exit_code == 3, r.output
    d = json.loads(r.stdout)
    assert d["feasible"] is False and "corner" in d["reason"]
    near = d["nearest"]
    # the corner is the cause: the most missed constraint; the nearest design may give a little of
    # another constraint to miss the corner by less (it makes the largest shortfall least)
    assert near["space"] == "single parts" and near["missed"][0] == "f_low"
    assert all(near["margins"][k] >= near["margins"]["f_low"] for k in near["missed"])
    assert 0 < near["none_within"] < near["shortfall"] <= near["shortfall_level"] and near["proven"] is True
    assert math.isclose(near["shortfall"], -near["margins"]["f_low"])
    assert sorted(b["roles"] for b in d["buy"]) == [["C1"], ["C2"]]
    assert all(b["kind"] == "capacitor" and b["per_unit"] == 1 and b["count"] == 1 for b in d["buy"])
    assert d["buy_proven"] is True and d["buy_checked"] is True
    # the design the list is for takes the bought parts in the roles named, and drawer parts elsewhere
    parts = d["buy_design"]["parts"]
    for b in d["buy"]:
        (role,) = b["roles"]
        assert [x["source"]["file"] for x in parts[role]["parts"]] == ["(to buy)"]
        assert parts[role]["value"] == b["value"]
    assert all(x["source"]["file"] == str(stock) for r in ("R1", "R2", "RE") for x in parts[r]["parts"])
    # the people's output says the same
    r2 = CliRunner().invoke(main, ["design", str(spec), "--stock", str(stock), "--max-parts", "1"])
    assert r2.exit_code == 3
    assert "What to buy (2 parts per unit, the fewest possible; checked:" in r2.stdout
    assert "nearest single-part design" in r2.stdout
    # those two parts added to the drawer: the design succeeds
    for b in d["buy"]:
        diel = "electrolytic" if b["polarized"] else "film"
        rows.append(f"capacitor,{b['value']:g},{b['tolerance']:.0%},,{b['voltage']:g},{diel},{b['count']},NEW,,,,,,,,,")
    stock.write_text(_csv(rows), encoding="utf-8")
    r3 = CliRunner().invoke(main, ["design", str(spec), "--stock", str(stock), "--json", "--max-parts", "1"])
    assert r3.exit_code == 0, r3.output
