"""spec.load_spec: the TOML stage spec, its defaults, and its error messages.

Expected values: IEC 60062 letter codes (4k7 = 4700 Ω, 22u = 22 µF) and the documented
defaults in docs/spec-format.md.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings, strategies as st

from drawerfit.parts import Source, SpecError, Stock, StockLine
from drawerfit.io.spec import load_spec, parse_spec
from drawerfit.values import format_code

ISSUE_EXAMPLE = '''
topology = "emitter-follower"     # or "common-emitter"
polarity = "npn"                  # or "pnp"
supply = "12 V"
source_resistance = "600"         # ohms, optional
load = "10k"                      # optional
[transistor]
hfe = 150                         # or hfe_min and hfe_max; or label = "..." with --stock
vbe = "0.65 V"                    # optional; also vce_sat, vceo, ic_max, pd
[parts]
R1 = "4k7"
R2 = "5k6"
RE = "820"
C1 = "22u"
C2 = "220u"                       # common-emitter also RC, RE2, CE
'''


def _write(tmp_path, text, name="stage.toml"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_the_example_of_the_issue(tmp_path):
    spec = load_spec(_write(tmp_path, ISSUE_EXAMPLE))
    assert spec.kind == "analyze"
    assert (spec.topology, spec.polarity, spec.supply) == ("emitter-follower", "npn", 12.0)
    assert spec.source_resistance == 600.0 and spec.load == 10e3
    assert spec.transistor.hfe_min == spec.transistor.hfe_max == 150
    # IEC 60062 letter code: 4k7 = 4700 Ω, 5k6 = 5600 Ω; SI prefix u = 1e-6.
    assert spec.parts["R1"].value == 4700.0 and spec.parts["R2"].value == 5600.0
    assert spec.parts["C1"].value == pytest.approx(22e-6) and spec.parts["C2"].value == pytest.approx(220e-6)
    # Documented defaults: 5 % resistors; capacitors from 1 µF taken as electrolytics at 20 %.
    assert spec.parts["RE"].tolerance == 0.05
    assert spec.parts["C1"].polarized and spec.parts["C1"].tolerance == 0.20
    stage = spec.stage()
    assert stage.load == 10e3


def test_tolerances_ratings_and_tables(tmp_path):
    spec = load_spec(_write(tmp_path, '''
topology = "common-emitter"
polarity = "pnp"
supply = 15
[transistor]
hfe_min = 100
hfe_max = "300"
pd = "625 mW"
[parts]
R1 = "18k 1%"
R2 = "82k ±2 %"
RE = "270"
RE2 = { value = "1k2", tolerance = 0.01, rating = "1/4 W" }
RC = "5k6"
C1 = { value = "4n7", polarized = false }
C2 = "4.7uF"
CE = { value = "220u", rating = "16 V" }
[limits]
derating = "60 %"
cap_voltage_margin = 0.7
ambient = [-10, "45 °C"]
'''))
    assert spec.parts["R1"].tolerance == 0.01 and spec.parts["R2"].tolerance == 0.02
    assert spec.parts["RE2"].rating == 0.25 and spec.parts["CE"].rating == 16.0
    assert spec.parts["C1"].value == pytest.approx(4.7e-9) and not spec.parts["C1"].polarized
    assert spec.parts["C1"].tolerance == 0.10  # non-polar default: ceramic, as in the stock loader
    assert spec.transistor.pd == pytest.approx(0.625)
    c = spec.conditions
    assert (c.resistor_derating, c.transistor_derating, c.cap_voltage_margin) == (0.6, 0.6, 0.7)
    assert (c.ambient_min, c.ambient_max) == (-10.0, 45.0)
    assert spec.stage().bypassed


def test_design_spec_with_targets_and_pairs(tmp_path):
    spec = load_spec(_write(tmp_path, '''
topology = "emitter-follower"
supply = "9 V"
load = "100"
pairs = ["R1", "RE"]
[targets]
ie = "20 mA"
f_low = "20 Hz"
swing = "1 V"
rin_min = "2k"
rout_max = "10"
'''))
    assert spec.kind == "design" and spec.transistor is None
    t = spec.targets
    # Documented default window: ±10 % around ie.
    assert t.ie_min == pytest.approx(18e-3) and t.ie_max == pytest.approx(22e-3)
    assert (t.f_low, t.swing, t.rin_min, t.rout_max) == (20.0, 1.0, 2000.0, 10.0)
    assert spec.pairs == ("R1", "RE")
    with pytest.raises(SpecError, match="design spec"):
        spec.stage()


@pytest.mark.parametrize("text,key,quoted", [
    ('supply = "12 Q"', "supply", "12 Q"),
    ('supply = "12 A"', "supply", "12 A"),
    ('supply = "-5"', "supply", "-5"),
])
def test_bad_top_level_values_name_file_key_and_text(tmp_path, text, key, quoted):
    body = ISSUE_EXAMPLE.replace('supply = "12 V"', text)
    path = _write(tmp_path, body)
    with pytest.raises(SpecError) as err:
        load_spec(path)
    msg = str(err.value)
    assert str(path) in msg and key in msg and repr(quoted) in msg


@pytest.mark.parametrize("old,new,fragment", [
    ('R1 = "4k7"', 'R1 = "4x7"', "parts.R1 = '4x7'"),
    ('R1 = "4k7"', 'R1 = "4k7F"', "parts.R1 = '4k7F'"),
    ('C1 = "22u"', 'C1 = "22 V"', "parts.C1 = '22 V'"),
    ('R1 = "4k7"', 'R1 = "4k7"\nRC = "1k"', "parts.RC"),
    ('R1 = "4k7"', 'R3 = "4k7"', "parts.R3"),
    ('hfe = 150', 'hfe_min = 150', "transistor.hfe_min"),
    ('hfe = 150', 'hfe = 150\nhfe_max = 200', "transistor.hfe"),
    ('hfe = 150', 'label = "QN-SIG-A"', "needs --stock"),
    ('topology = "emitter-follower"', 'topology = "cascode"', "topology = 'cascode'"),
    ('load = "10k"', 'load = "10k"\nsupply_rail = 3', "supply_rail"),
])
def test_errors_quote_the_key_and_text(tmp_path, old, new, fragment):
    path = _write(tmp_path, ISSUE_EXAMPLE.replace(old, new))
    with pytest.raises(SpecError) as err:
        load_spec(path)
    assert fragment in str(err.value) and str(path) in str(err.value)


def test_missing_file_and_bad_toml(tmp_path):
    with pytest.raises(SpecError, match="no such file"):
        load_spec(tmp_path / "absent.toml")
    path = _write(tmp_path, 'supply = "12 V\n')
    with pytest.raises(SpecError, match="not valid TOML"):
        load_spec(path)


def test_missing_role_is_named(tmp_path):
    path = _write(tmp_path, ISSUE_EXAMPLE.replace('RE = "820"\n', ""))
    with pytest.raises(SpecError, match="needs RE"):
        load_spec(path).stage()


def _stock_with(label, polarity="npn"):
    src = Source(file="drawer.csv", sheet=None, row=7)
    line = StockLine(index=0, kind="transistor", value=None, qty=5, source=src, label=label,
                     polarity=polarity, hfe_min=120.0, hfe_max=360.0, vceo=45.0, ic_max=0.1, pd=0.5)
    return Stock(lines=(line,))


def test_label_resolved_from_stock(tmp_path):
    path = _write(tmp_path, ISSUE_EXAMPLE.replace("hfe = 150", 'label = "qn-sig-a"'))
    spec = load_spec(path, stock=_stock_with("QN-SIG-A"))
    t = spec.transistor
    assert (t.hfe_min, t.hfe_max, t.vceo, t.pd) == (120.0, 360.0, 45.0, 0.5)
    with pytest.raises(SpecError, match="no transistor with this label.*QN-SIG-A"):
        load_spec(_write(tmp_path, ISSUE_EXAMPLE.replace("hfe = 150", 'label = "QN-OTHER"'), "b.toml"),
                  stock=_stock_with("QN-SIG-A"))
    with pytest.raises(SpecError, match="PNP in the stock"):
        load_spec(path, stock=_stock_with("QN-SIG-A", "pnp"))


def test_a_built_stage_with_targets_keeps_both(tmp_path):
    # [parts] and [targets] together: a stage as built and what it must do (analyze checks the
    # targets; `match npn --in` judges substitutes by them); docs/spec-format.md, [targets]
    path = _write(tmp_path, ISSUE_EXAMPLE + '[targets]\nie = "4 mA"\nswing = "2 V"\nf_low = "20 Hz"\n')
    spec = load_spec(path)
    assert spec.kind == "analyze" and spec.parts["RE"].value == 820.0
    t = spec.targets
    # ie = 4 mA with the documented ±10 % window
    assert t.ie_min == pytest.approx(3.6e-3) and t.ie_max == pytest.approx(4.4e-3)
    assert (t.swing, t.f_low) == (2.0, 20.0)


def test_a_label_missing_from_the_stock_may_stand_when_the_spec_gives_its_figures(tmp_path):
    # a repair: the board's transistor is the part the drawer lacks; its hFE is in the spec
    text = ISSUE_EXAMPLE.replace("hfe = 150", 'label = "QN-DEAD"\nhfe_min = 90\nhfe_max = 270\nvceo = "30 V"')
    path = _write(tmp_path, text)
    stock = _stock_with("QN-SIG-A")
    with pytest.raises(SpecError, match="no transistor with this label"):
        load_spec(path, stock=stock)  # analyze keeps its rule: a label names a stock line
    spec = load_spec(path, stock=stock, label_may_be_absent=True)
    t = spec.transistor
    assert (t.label, t.hfe_min, t.hfe_max, t.vceo, t.pd) == ("QN-DEAD", 90.0, 270.0, 30.0, None)
    assert any("QN-DEAD" in a and "not in the stock" in a for a in spec.assumptions)
    # a label in the stock is still read from it, the spec's own keys over it
    there = _write(tmp_path, text.replace("QN-DEAD", "QN-SIG-A"), "there.toml")
    t = load_spec(there, stock=stock, label_may_be_absent=True).transistor
    assert (t.hfe_min, t.hfe_max, t.vceo, t.pd) == (90.0, 270.0, 30.0, 0.5)
    # a label alone, not in the stock: nothing describes the transistor; the message says what to add
    alone = _write(tmp_path, ISSUE_EXAMPLE.replace("hfe = 150", 'label = "QN-DEAD"'), "alone.toml")
    with pytest.raises(SpecError, match="give its hfe_min and hfe_max"):
        load_spec(alone, stock=stock, label_may_be_absent=True)


def test_pin_order_from_the_spec_or_the_stock_line(tmp_path):
    from dataclasses import replace

    stock = _stock_with("QN-SIG-A")
    stock = Stock(lines=(replace(stock.lines[0], pins="ECB"),))
    path = _write(tmp_path, ISSUE_EXAMPLE.replace("hfe = 150", 'label = "QN-SIG-A"'))
    assert load_spec(path, stock=stock).transistor.pins == "ECB"
    given_here = _write(tmp_path, ISSUE_EXAMPLE.replace("hfe = 150", 'hfe = 150\npins = "c b e"'), "p.toml")
    assert load_spec(given_here).transistor.pins == "CBE"
    assert load_spec(_write(tmp_path, ISSUE_EXAMPLE, "n.toml")).transistor.pins == ""
    bad = _write(tmp_path, ISSUE_EXAMPLE.replace("hfe = 150", 'hfe = 150\npins = "EBCE"'), "q.toml")
    with pytest.raises(SpecError, match=r"transistor.pins = 'EBCE': not a pin order"):
        load_spec(bad)


@settings(max_examples=100, deadline=None)
@given(mant=st.integers(10, 99), exp=st.integers(0, 5))
def test_any_letter_code_value_reads_back(mant, exp):
    # IEC 60062: a value written in the letter code reads back as the same number.
    value = mant * 10.0**exp / 10.0
    code = format_code(value)
    spec = parse_spec({"topology": "emitter-follower", "supply": 12, "transistor": {"hfe": 100},
                       "parts": {"R1": code, "R2": "10k", "RE": "1k", "C1": "1u", "C2": "10u"}})
    assert spec.parts["R1"].value == pytest.approx(value, rel=1e-12)


def test_examples_in_the_docs_and_samples_load():
    # The documented examples must stay valid: every complete ```toml block of
    # docs/spec-format.md and the sample specs.
    import re
    import tomllib
    from pathlib import Path

    root = Path(__file__).resolve().parents[2]
    doc = (root / "docs" / "spec-format.md").read_text(encoding="utf-8")
    # (the two-stage example is held in tests/io/test_cascade_spec.py)
    blocks = [b for b in re.findall(r"```toml\n(.*?)```", doc, flags=re.S)
              if "topology" in b and 'topology = "two-stage"' not in b]
    assert blocks
    for block in blocks:
        spec = parse_spec(tomllib.loads(block), "docs/spec-format.md")
        assert spec.kind == "design" and spec.targets.ie_min == pytest.approx(22.5e-3)
        assert spec.transistor is None and spec.transistor_label == "LabNPN-S1"
    for sample in ("follower_bench.toml", "buffer_repair.toml"):
        assert load_spec(root / "inventory_samples" / sample).stage()
    # The PNP sample names its transistor by label: without a stock it says what it needs.
    with pytest.raises(SpecError, match="needs --stock"):
        load_spec(root / "inventory_samples" / "ce_repair_pnp.toml")
