"""The report of a saved two-stage design: the page, its schematic, its response and load lines.

Expected values: the value codes written by hand from IEC 60062 (47k, 4k7, 150R, 280R, 10µ, 470µ);
the designators of the trade (R1 … C3, Q1, Q2); Kirchhoff's voltage law for the quiescent point on
each DC load line (Q1: VCC = VCE1 + IC1·RC + IE1·(RE + RE2); Q2: VCC = VCE2 + IE2·RE3, collector on
the supply); the definition of the −3 dB corner (the response is 3.01 dB below mid-band there); and
properties of the page (it parses, it fetches nothing).
"""

from __future__ import annotations

import math
import re

import numpy as np
import pytest
from click.testing import CliRunner

from drawerfit.analysis.cascade import cascade_arguments, evaluate_cascade
from drawerfit.cli import main
from drawerfit.io.saved_design import load_design
from drawerfit.io.saved_two_stage import write_two_stage_design
from drawerfit.report.report_two_stage import cascade_load_line_data, cascade_response_data
from drawerfit.stock import load_stock

from ..io.two_stage_drawer import build, direct_pnp, write_drawer
from .test_report_html import _parse

EXPECTED = {"R1": "47k", "R2": "10k", "RC": "4k7", "RE": "150R", "RE2": "1k0", "CE": "100µ", "C1": "10µ",
            "C2": "10µ", "R3": "15k", "R4": "5k6", "RE3": "280R", "C3": "470µ", "Q1": "QN-SMALL-A",
            "Q2": "QN-MEDIUM-B", "RS": "600R", "RL (load)": "600R"}


@pytest.fixture()
def saved(tmp_path):
    drawer = write_drawer(tmp_path)
    circuit, role_lines, transistor_lines, arrangements = build(load_stock(str(drawer)))
    return write_two_stage_design(tmp_path / "amp.toml", circuit, role_lines, units=2, stock_file=str(drawer),
                                  transistor_lines=transistor_lines, arrangements=arrangements)


def _report(tmp_path, design, *extra):
    out = tmp_path / "amp.html"
    r = CliRunner().invoke(main, ["report", str(design), "-o", str(out), "--quiet", *extra])
    assert r.exit_code == 0, r.output
    return out


def test_page_holds_both_stages(tmp_path, saved):
    out = _report(tmp_path, saved, "--monte-carlo", "200")
    page = _parse(out)
    assert page.errors == [] and page.stack == []
    assert set(page.svgs) == {"schematic of the two-stage amplifier", "magnitude response", "load lines of Q1",
                              "load lines of Q2"}
    texts = page.svgs["schematic of the two-stage amplifier"]
    for designator, value in EXPECTED.items():
        if designator == "RE3":
            continue  # two parts, below
        assert designator in texts, (designator, texts)
        assert value in texts or any(t.startswith(value) for t in texts), (designator, value)
    # RE3 is two 560R in parallel: each drawn under its own designator, the place labelled with what
    # they make (Ohm's law: 280R), and no one-symbol stand-in
    assert {"RE3a", "RE3b", "RE3 = 280R"} <= set(texts) and "RE3" not in texts and "560R" in texts
    text = out.read_text(encoding="utf-8")
    for heading in ("Before you build", "Schematic", "Checks", "Parts", "Pick list", "Magnitude response",
                    "Load lines", "Spread over 200 random builds"):
        assert f">{heading}<" in text, heading
    for bin_name in ("RA-1", "RB-1", "CE-1", "T-1", "T-2"):
        assert f">{bin_name}<" in text, bin_name
    assert "Electrolytic capacitors" in text
    assert not re.search(r"https?://", text)


def test_a_direct_coupled_pnp_amplifier_is_drawn_without_c2_r3_r4(tmp_path):
    design = write_two_stage_design(tmp_path / "p.toml", direct_pnp(), {}, units=1)
    texts = _parse(_report(tmp_path, design)).svgs["schematic of the two-stage amplifier"]
    assert {"R1", "R2", "RC", "RE", "C1", "RE3", "C3", "Q1", "Q2"} <= set(texts)
    assert not {"C2", "R3", "R4", "RE2", "CE"} & set(texts)


def test_a_missed_target_is_said_plainly(tmp_path, saved):
    text = saved.read_text(encoding="utf-8") + '\n[targets]\ngain_min = 100\n'
    bad = tmp_path / "bad.toml"
    bad.write_text(text, encoding="utf-8")
    html = _report(tmp_path, bad).read_text(encoding="utf-8")
    assert "Not ready to build" in html and "gain magnitude at least" in html


@pytest.mark.parametrize("index", [1, 2])
def test_the_quiescent_point_lies_on_its_dc_load_line(saved, index):
    design = load_design(saved)
    f = evaluate_cascade(**cascade_arguments(design.stage))
    data = cascade_load_line_data(design, f, index)
    vce, ic = data["q"]
    (v0, i0), (v1, _) = data["dc"]
    line_ic = i0 * (1 - vce / v1)  # the DC line from (0, i0) to (VCC, 0)
    # Kirchhoff's voltage law, written here: the DC line's current at VCE is IC (capacitor coupling)
    amp = design.stage
    if index == 1:
        kvl = amp.supply - float(f.ic1) * amp.value("RC") - float(f.ie1) * (amp.value("RE") + amp.value("RE2"))
    else:
        kvl = amp.supply - float(f.ie2) * amp.value("RE3")
    assert vce == pytest.approx(kvl, rel=1e-9)
    assert line_ic == pytest.approx(ic, rel=1e-6)
    lo, hi = data["swing"]
    assert lo < vce < hi  # the swing band straddles Q


def test_the_response_is_three_db_down_at_the_corner(saved):
    design = load_design(saved)
    f, db, mid, f_low = cascade_response_data(design, points=4000)
    # definition of the −3 dB corner: |H(f_low)| = |H_mid|/√2, i.e. 10·log10(2) dB below mid-band
    at = float(np.interp(math.log(f_low), np.log(f), db))
    assert at == pytest.approx(mid - 10 * math.log10(2), abs=0.01)
    assert db[-1] == pytest.approx(mid, abs=0.01)  # flat far above every corner (no junction capacitance)


def test_a_series_pair_is_drawn_as_its_parts(tmp_path):
    # tests/data/io/two_stage_design.toml: R1 is 10k + 10k in series = 20k (IEC 60062 codes)
    import shutil
    from pathlib import Path

    data = Path(__file__).resolve().parents[1] / "data" / "io"
    for name in ("two_stage_design.toml", "drawer_semicolon.csv"):
        shutil.copy(data / name, tmp_path / name)
    texts = _parse(_report(tmp_path, tmp_path / "two_stage_design.toml")).svgs["schematic of the two-stage amplifier"]
    assert {"R1a", "R1b", "R1 = 20k", "10k", "Q1", "Q2"} <= set(texts) and "R1" not in texts
