"""io.cascade_spec: the two-stage amplifier's spec, its defaults and its error messages.

Expected values: IEC 60062 letter codes (4k7 = 4700 Ω, 47k = 47 000 Ω, 470u = 470 µF), the
documented defaults of docs/spec-format.md ("Two-stage amplifier": capacitor coupling, IE window
±10 % around a single ie1/ie2) and the role scheme of stages/two_stage.py.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings, strategies as st

from drawerfit.io.cascade_spec import CascadeSpec
from drawerfit.io.spec import load_spec, parse_spec
from drawerfit.parts import Source, SpecError, Stock, StockLine

SPEC = '''
title = "line driver"
topology = "two-stage"
coupling = "capacitor"
polarity = "npn"
supply = "12 V"
source_resistance = "600"
load = "600"
[transistors.Q1]
hfe_min = 100
hfe_max = 300
vceo = "40 V"
[transistors.Q2]
hfe = 150
pd = "500 mW"
[parts]
R1 = "47k"
R2 = "10k"
RC = "4k7"
RE = "220"
RE2 = "820"
CE = "100u"
C1 = "10u"
C2 = { value = "10u", rating = "25 V" }
R3 = "22k 1%"
R4 = "22k"
RE3 = { value = "470", rating = "0.5 W" }
C3 = "470u"
[targets]
gain_min = 5
gain_max = 30
ie1 = "1 mA"
ie2_min = "8 mA"
ie2_max = "14 mA"
f_low = "20 Hz"
swing = "1 V"
'''


def _write(tmp_path, text, name="amp.toml"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_a_full_spec_is_read_in_si_units(tmp_path):
    spec = load_spec(_write(tmp_path, SPEC))
    assert isinstance(spec, CascadeSpec) and spec.kind == "analyze"
    assert spec.coupling == "capacitor" and spec.polarity == "npn"
    assert spec.supply == 12.0 and spec.source_resistance == 600.0 and spec.load == 600.0
    # IEC 60062 letter code
    assert spec.parts["R1"].value == 47_000 and spec.parts["RC"].value == 4_700
    assert spec.parts["C3"].value == pytest.approx(470e-6, rel=1e-12)
    assert spec.parts["R3"].tolerance == pytest.approx(0.01)
    assert spec.parts["RE3"].rating == 0.5 and spec.parts["C2"].rating == 25.0
    q1, q2 = spec.transistors["Q1"], spec.transistors["Q2"]
    assert (q1.hfe_min, q1.hfe_max, q1.vceo) == (100, 300, 40.0)
    assert (q2.hfe_min, q2.hfe_max, q2.pd) == (150, 150, 0.5)
    # one ie1 opens the documented ±10 % window
    t = spec.targets
    assert t.ie1_min == pytest.approx(0.9e-3) and t.ie1_max == pytest.approx(1.1e-3)
    assert (t.ie2_min, t.ie2_max, t.gain_min, t.gain_max) == (8e-3, 14e-3, 5, 30)
    assert t.f_low == 20 and t.swing == 1
    amp = spec.circuit()
    assert amp.coupling == "capacitor" and amp.bypassed and amp.q2 is q2


def test_defaults_are_said(tmp_path):
    text = SPEC.replace('coupling = "capacitor"\n', "")
    spec = load_spec(_write(tmp_path, text))
    assert spec.coupling == "capacitor"  # documented default
    said = "; ".join(spec.assumptions)
    assert "Q1 vbe 0.65 V" in said and "Q2 vce_sat 0.2 V" in said
    assert "C1" in said and "electrolytic" in said


def test_a_direct_coupled_spec_needs_no_c2_r3_r4(tmp_path):
    text = SPEC.replace('C2 = { value = "10u", rating = "25 V" }\nR3 = "22k 1%"\nR4 = "22k"\n', "")
    text = text.replace('coupling = "capacitor"', 'coupling = "direct"')
    spec = load_spec(_write(tmp_path, text))
    assert spec.coupling == "direct" and "C2" not in spec.parts
    assert spec.circuit().coupling == "direct"


def test_a_design_spec_may_leave_out_parts_and_transistors(tmp_path):
    text = SPEC.split("[transistors.Q1]")[0] + SPEC[SPEC.index("[targets]"):]
    spec = load_spec(_write(tmp_path, text))
    assert spec.kind == "design" and spec.transistors == {}
    with pytest.raises(SpecError, match="design spec"):
        spec.circuit()


def _stock_with(label, polarity="npn"):
    src = Source(file="drawer.csv", sheet=None, row=2)
    line = StockLine(index=0, kind="transistor", value=None, qty=5, source=src, label=label,
                     polarity=polarity, hfe_min=120.0, hfe_max=360.0, vceo=45.0)
    return Stock(lines=(line,), files=("drawer.csv",))


def test_a_transistor_by_label_is_resolved_from_the_stock(tmp_path):
    text = SPEC.replace("[transistors.Q1]\nhfe_min = 100\nhfe_max = 300\n", '[transistors.Q1]\nlabel = "QN-GEN"\n')
    spec = load_spec(_write(tmp_path, text), stock=_stock_with("QN-GEN"))
    q1 = spec.transistors["Q1"]
    assert (q1.hfe_min, q1.hfe_max) == (120.0, 360.0) and q1.label == "QN-GEN"
    assert q1.vceo == 40.0  # the spec's own key wins over the stock line's (docs/spec-format.md)
    with pytest.raises(SpecError, match=r"transistors\.Q1\.label.*needs --stock"):
        load_spec(_write(tmp_path, text, "b.toml"))


@pytest.mark.parametrize("old,new,message", [
    ('coupling = "capacitor"', 'coupling = "transformer"', r"coupling = 'transformer': expected one of"),
    ("[transistors.Q2]\nhfe = 150\n", "", r"transistors\.Q2: missing"),
    ("hfe = 150", 'hfe = "150 V"', r"transistors\.Q2\.hfe = '150 V': hFE is a plain number"),
    ("hfe_max = 300", "hfe_max = 50", r"transistors\.Q1\.hfe_min = 100: is above hfe_max"),
    ("hfe = 150", "hfe = 150\ni_sat = 1e-14", r"transistors\.Q2\.i_sat"),
    ('R4 = "22k"\n', "", r"parts\.R4: missing"),
    ('RE2 = "820"\n', "", r"parts\.CE.*no RE2"),
    ('R1 = "47k"', 'R1 = "4x7"', r"parts\.R1 = '4x7'"),
    ('R1 = "47k"', 'R1 = "47k"\nR9 = "1k"', r"parts\.R9: unknown key"),
    ("gain_min = 5", "gain_min = 50", r"targets\.gain_min = 50: is above gain_max"),
    ('ie1 = "1 mA"', 'ie1 = "1 mA"\nie1_min = "1 mA"', r"targets\.ie1.*not both"),
    ('f_low = "20 Hz"', 'f_low = "20 V"', r"targets\.f_low"),
    ('[transistors.Q1]', 'bypass = true\n[transistors.Q1]', r"bypass = True: for a design spec only"),
])
def test_mistakes_name_file_and_key(tmp_path, old, new, message):
    assert old in SPEC
    path = _write(tmp_path, SPEC.replace(old, new, 1))
    with pytest.raises(SpecError, match=message) as info:
        load_spec(path)
    assert str(info.value).startswith(str(path))


def test_a_direct_spec_with_a_capacitor_coupling_part_is_refused(tmp_path):
    text = SPEC.replace('coupling = "capacitor"', 'coupling = "direct"')
    with pytest.raises(SpecError, match=r"parts\.C2.*no C2"):
        load_spec(_write(tmp_path, text))


@settings(max_examples=60, deadline=None)
@given(st.dictionaries(st.sampled_from(["coupling", "transistors", "parts", "targets", "load", "supply"]),
                       st.one_of(st.text(max_size=8), st.integers(), st.floats(), st.booleans(),
                                 st.lists(st.integers(), max_size=2),
                                 st.dictionaries(st.text(max_size=4), st.text(max_size=4), max_size=2))))
def test_any_malformed_tree_is_a_spec_error_never_a_crash(tree):
    # property: whatever the tree holds, the reader answers with SpecError or a spec
    data = {"topology": "two-stage", "supply": "12 V", **tree}
    try:
        parse_spec(data, "hostile.toml")
    except SpecError as exc:
        assert str(exc).startswith("hostile.toml")


def test_the_documented_example_and_the_sample_load():
    import re
    import tomllib
    from pathlib import Path

    root = Path(__file__).resolve().parents[2]
    doc = (root / "docs" / "spec-format.md").read_text(encoding="utf-8")
    blocks = [b for b in re.findall(r"```toml\n(.*?)```", doc, flags=re.S) if 'topology = "two-stage"' in b]
    assert len(blocks) == 1
    spec = parse_spec(tomllib.loads(blocks[0]), "docs/spec-format.md")
    assert spec.circuit().bypassed and spec.targets.f_low == 20
    sample = load_spec(root / "inventory_samples" / "specs" / "two_stage_buffered.toml")
    assert sample.circuit().load == 600.0
