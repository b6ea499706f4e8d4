"""io.saved_two_stage and the reading side of io.saved_design: a saved two-stage design.

Expected values: the round trip (what is written is read back as the same amplifier: a property),
Ohm's law for two equal resistors in parallel (560 Ω ∥ 560 Ω = 280 Ω), the IEC 60062 letter code
("280R", "4k7") and the counts of a pick list (parts per unit × units) worked by hand from the
invented drawer in tests/io/two_stage_drawer.py.
"""

from __future__ import annotations

import pytest

from drawerfit.io.saved_design import load_design
from drawerfit.io.saved_two_stage import two_stage_tree, write_two_stage_design
from drawerfit.parts import SpecError
from drawerfit.stock import load_stock

from .two_stage_drawer import build, write_drawer


@pytest.fixture()
def made(tmp_path):
    csv = write_drawer(tmp_path)
    stock = load_stock(str(csv))
    circuit, role_lines, transistor_lines, arrangements = build(stock)
    path = write_two_stage_design(tmp_path / "amp.toml", circuit, role_lines, units=4, stock_file=str(csv),
                                  transistor_lines=transistor_lines, arrangements=arrangements)
    return path, circuit, stock


def test_the_file_reads_back_as_the_same_amplifier(made):
    path, circuit, stock = made
    design = load_design(path)
    assert design.stage == circuit  # round trip: every value, tolerance, rating, both transistors
    assert design.units == 4 and design.stock_checksum == stock.checksum
    assert design.transistor_places["Q1"][0] == "T-1" and design.transistor_places["Q2"][0] == "T-2"
    # Ohm's law: two 560 Ω in parallel are 280 Ω, written in the letter code (IEC 60062)
    text = path.read_text(encoding="utf-8")
    assert 'value = "280R"' in text and 'topology = "two-stage"' in text
    re3 = design.roles["RE3"]
    assert re3.arrangement == "parallel" and [p.value for p in re3.parts] == [560.0, 560.0]


def test_the_pick_list_counts_parts_per_unit_times_units(made):
    path, _, _ = made
    picks = {item.location: item for item in load_design(path).pick_list}
    # by hand: RE3 is two parts from RB-1, C1 and C2 both come from CE-1, everything else one part
    assert (picks["RB-1"].per_unit, picks["RB-1"].count) == (2, 8)
    assert (picks["CE-1"].per_unit, picks["CE-1"].count) == (2, 8)
    assert set(picks["CE-1"].roles) == {"C1", "C2"} and set(picks["RB-1"].roles) == {"RE3a", "RE3b"}
    for loc in ("RA-1", "RA-2", "RA-3", "RA-4", "RA-5", "RA-6", "RA-7", "CE-2", "CE-3", "T-1", "T-2"):
        assert (picks[loc].per_unit, picks[loc].count) == (1, 4), loc
    assert len(picks) == 13  # every line of the invented drawer, once


def test_the_analysis_of_the_file_is_the_amplifiers(made):
    import drawerfit

    path, circuit, _ = made
    from_file = drawerfit.analyse(str(path)).to_dict()
    direct = drawerfit.analyse(circuit).to_dict()
    assert from_file["dc"] == direct["dc"] and from_file["ac"] == direct["ac"]


def test_a_role_of_several_parts_needs_its_arrangement(tmp_path):
    stock = load_stock(str(write_drawer(tmp_path)))
    circuit, role_lines, transistor_lines, _ = build(stock)
    with pytest.raises(SpecError, match="RE3: 2 parts: say how they are wired"):
        two_stage_tree(circuit, role_lines, units=1, transistor_lines=transistor_lines)
    with pytest.raises(SpecError, match="RE3: unknown arrangement"):
        two_stage_tree(circuit, role_lines, units=1, arrangements={"RE3": "sideways"})
    with pytest.raises(SpecError, match="units must be"):
        two_stage_tree(circuit, role_lines, units=0, arrangements={"RE3": "parallel"})
    with pytest.raises(SpecError, match="RX: the amplifier has no such part"):
        two_stage_tree(circuit, {"RX": role_lines["R1"]}, units=1)
    with pytest.raises(SpecError, match="Q3: the transistors are Q1, Q2"):
        two_stage_tree(circuit, {}, units=1, transistor_lines={"Q3": transistor_lines["Q1"]})


def test_a_hand_edited_file_with_an_unknown_role_is_a_spec_error(made):
    path, _, _ = made
    text = path.read_text(encoding="utf-8").replace("[design.roles.Q2]", "[design.roles.Q7]")
    bad = path.with_name("bad.toml")
    bad.write_text(text, encoding="utf-8")
    with pytest.raises(SpecError, match=r"design\.roles\.Q7: no such role"):
        load_design(bad)


# --- the hand-written reference file (tests/data/io/two_stage_design.toml) --------------------------

def test_the_reference_two_stage_design_reads_as_written():
    import hashlib
    import tomllib
    from pathlib import Path

    data = Path(__file__).resolve().parents[1] / "data" / "io"
    ref = data / "two_stage_design.toml"
    d = load_design(ref)
    amp = d.stage
    # IEC 60062 codes as written by hand: 20k, 4k7 1 %, 1k, 22µ
    assert amp.coupling == "direct" and amp.supply == 9.0 and amp.load == 1e3
    assert amp.parts["R1"].value == 20e3 and amp.parts["R2"].value == 4700.0
    assert amp.parts["R2"].tolerance == pytest.approx(0.01) and amp.parts["C3"].value == pytest.approx(22e-6)
    assert amp.q1 == amp.q2 and amp.q1.label == "QX-TEST-1" and amp.q1.pd == 0.5
    assert d.roles["R1"].arrangement == "series" and [p.value for p in d.roles["R1"].parts] == [10e3, 10e3]
    assert d.transistor_places["Q2"][0] == "T1"
    tree = tomllib.loads(ref.read_text(encoding="utf-8"))
    assert d.stock_checksum == "sha256:" + hashlib.sha256((data / "drawer_semicolon.csv").read_bytes()).hexdigest()
    assert [(p.location, p.per_unit, p.count, p.roles) for p in d.pick_list] == \
        [(e["location"], e["per_unit"], e["count"], tuple(e["roles"])) for e in tree["pick_list"]]


def test_the_writer_reproduces_the_reference_design(tmp_path):
    # round trip: the reference amplifier and its stock lines, written again, read back the same
    import shutil
    from pathlib import Path

    data = Path(__file__).resolve().parents[1] / "data" / "io"
    drawer = tmp_path / "drawer_semicolon.csv"
    shutil.copy(data / "drawer_semicolon.csv", drawer)
    ref = load_design(data / "two_stage_design.toml")
    stock = load_stock(str(drawer))
    by_row = {line.source.row: line for line in stock.lines}
    role_lines = {role: [(by_row[c.parts[0].source["row"]], len(c.parts))] for role, c in ref.roles.items()}
    again = write_two_stage_design(tmp_path / "again.toml", ref.stage, role_lines, units=ref.units,
                                   stock_file=str(drawer), transistor_lines={"Q1": by_row[7], "Q2": by_row[7]},
                                   arrangements={"R1": "series"})
    d = load_design(again)
    assert d.stage == ref.stage and d.units == ref.units and d.stock_checksum == ref.stock_checksum
    key = lambda p: (p.source["row"], p.per_unit, p.count, sorted(p.roles))  # noqa: E731
    assert sorted(map(key, d.pick_list)) == sorted(map(key, ref.pick_list))
    assert {r: (c.arrangement, [p.value for p in c.parts]) for r, c in d.roles.items()} == \
        {r: (c.arrangement, [p.value for p in c.parts]) for r, c in ref.roles.items()}


def test_a_value_with_more_digits_is_kept_exactly(tmp_path):
    # 4k7 ∥ 4k7 ∥ 10k = 1902.834… Ω (Ohm's law) has more digits than the letter code shows: the text
    # is rounded ("1k9", docs/spec-format.md) and [exact] keeps the number, read back bit for bit
    from drawerfit.io.spec import load_spec
    from drawerfit.stages import Part
    from drawerfit.stages.two_stage import TwoStage

    from .two_stage_drawer import direct_pnp

    value = 1.0 / (1 / 4700 + 1 / 4700 + 1 / 10e3)
    a = direct_pnp()
    parts = dict(a.parts, RE3=Part(value, 0.05, 0.5))
    amp = TwoStage(a.polarity, a.supply, a.coupling, parts, a.q1, a.q2, a.source_resistance, a.load)
    path = write_two_stage_design(tmp_path / "exact.toml", amp, {}, units=1)
    assert 'value = "1k9"' in path.read_text(encoding="utf-8")
    assert load_design(path).stage.parts["RE3"].value == value
    assert load_spec(path).circuit() == amp
