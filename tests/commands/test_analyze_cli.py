"""`drawerfit analyze` through click's CliRunner (and one subprocess for import weight)."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

from click.testing import CliRunner

from drawerfit.cli import main

SPEC = '''
topology = "common-emitter"
polarity = "npn"
supply = "12 V"
source_resistance = "600"
load = "10k"
[transistor]
hfe_min = 100
hfe_max = 300
pd = "0.5 W"
[parts]
R1 = "47k"
R2 = "10k"
RE = "220"
RE2 = "1k"
RC = "4k7"
C1 = "10u"
C2 = "10u"
CE = { value = "100u", rating = "6.3 V" }
[targets]
f_low = "5 Hz"
'''


def _spec(tmp_path, text=SPEC):
    p = tmp_path / "ce.toml"
    p.write_text(text, encoding="utf-8")
    return str(p)


def test_summary_puts_warnings_first_and_cautions_last(tmp_path):
    r = CliRunner().invoke(main, ["analyze", _spec(tmp_path)])
    assert r.exit_code == 0, r.output
    out = r.output
    # f_low of this stage is about 8.6 Hz (checked against ngspice in tests/reference), so a
    # 5 Hz target is missed and shows up first.
    assert out.index("WARNINGS") < out.index("Operating point") < out.index("Cautions")
    assert "target f_low" in out
    assert "Electrolytic capacitors" in out and "remain responsible" in out


def test_json_output(tmp_path):
    r = CliRunner().invoke(main, ["analyze", _spec(tmp_path), "--json", "--monte-carlo", "500", "--seed", "4"])
    assert r.exit_code == 0, r.output
    start = r.output.index("{")
    end = r.output.rindex("}") + 1
    d = json.loads(r.output[start:end])
    assert d["dc"]["state"] == "active"
    assert d["ac"]["gain"] < 0 and set(d["ac"]["corners"]) == {"C1", "C2", "CE"}
    assert d["spread"]["monte_carlo"]["samples"] == 500
    assert 0.0 <= d["spread"]["monte_carlo"]["meets"]["f_low"] <= 1.0


def test_bad_spec_exit_2_without_traceback(tmp_path):
    path = _spec(tmp_path, SPEC.replace('RC = "4k7"', 'RC = "4k7k"'))
    r = CliRunner().invoke(main, ["analyze", path])
    assert r.exit_code == 2
    assert "parts.RC = '4k7k'" in r.output and path in r.output
    assert "Traceback" not in r.output


def test_design_spec_is_refused_by_analyze(tmp_path):
    text = SPEC.split("[parts]")[0] + '[targets]\nie = "1 mA"\n'
    r = CliRunner().invoke(main, ["analyze", _spec(tmp_path, text)])
    assert r.exit_code == 2 and "design spec" in r.output


def test_analyze_help_does_not_load_heavy_libraries():
    src = str(Path(__file__).resolve().parents[2] / "src")
    code = ("import sys; from drawerfit.cli import main\n"
            "try:\n    main(['analyze', '--help'])\nexcept SystemExit:\n    pass\n"
            "heavy = [m for m in ('numpy', 'scipy', 'pandas', 'ortools', 'matplotlib', 'openpyxl') if m in sys.modules]\n"
            "print('HEAVY', heavy)")
    env = {**os.environ, "PYTHONPATH": src}
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, check=True)
    assert "HEAVY []" in out.stdout


STOCK_CSV = """Type,Value,Tol,Watts,Volts,Qty,Box,Name,hFE min,hFE max,VCEO,Ic max,Pd
R,4k7,5%,0.25,,10,A1,,,,,,
PNP,,,,,4,T9,QP-TEST-9,120,300,45,0.15,0.5
"""


def test_transistor_label_from_stock(tmp_path):
    stock = tmp_path / "drawer.csv"
    stock.write_text(STOCK_CSV, encoding="utf-8")
    text = (SPEC.replace('polarity = "npn"', 'polarity = "pnp"')
            .replace('R1 = "47k"', 'R1 = "10k"').replace('R2 = "10k"', 'R2 = "47k"')
            .replace("hfe_min = 100\nhfe_max = 300\n", 'label = "QP-TEST-9"\n'))
    path = _spec(tmp_path, text)
    r = CliRunner().invoke(main, ["analyze", path, "--stock", str(stock), "--json"])
    assert r.exit_code == 0, r.output
    d = json.loads(r.output[r.output.index("{"):r.output.rindex("}") + 1])
    assert d["spread"]["worst_case"]["hfe"] == [120.0, 300.0]
    r = CliRunner().invoke(main, ["analyze", path])
    assert r.exit_code == 2 and "needs --stock" in r.output


# --- analyze --must-pass: an exit status a script can test ---------------------------------------

def test_must_pass_exits_4_when_a_target_is_missed_and_0_when_all_hold(tmp_path):
    # this stage's corner is about 8.6 Hz (ngspice, tests/reference): a 5 Hz target is missed,
    # a 20 Hz one met; 0.5 W PD against the stage's few mW holds either way
    missed = CliRunner().invoke(main, ["analyze", _spec(tmp_path), "--must-pass"])
    assert missed.exit_code == 4
    assert "Operating point" in missed.stdout  # the analysis is printed first, as without the flag
    assert "1 check not met: target f_low" in missed.stderr and "Traceback" not in missed.output
    met = CliRunner().invoke(main, ["analyze", _spec(tmp_path, SPEC.replace('"5 Hz"', '"20 Hz"')), "--must-pass"])
    assert met.exit_code == 0, met.output
    # without the flag a missed target still exits 0, as before
    assert CliRunner().invoke(main, ["analyze", _spec(tmp_path)]).exit_code == 0


def test_must_pass_counts_ratings_and_leaves_advice_and_unknown_ratings_alone(tmp_path):
    # R1 = R2 = 10k put VTH at 6 V, so IE ≈ (6 − 0.65) V / (1k + 5k/(β + 1)) ≈ 5.2 mA (hand
    # calculation, VBE 0.65 V common practice) and the 1k RE dissipates about 27 mW: over 50 %
    # (common-practice derating) of a 50 mW rating
    spec = ('topology = "emitter-follower"\nsupply = "12 V"\nload = "10k"\n[transistor]\nhfe_min = 100\n'
            'hfe_max = 300\n[parts]\nR1 = "10k"\nR2 = "10k"\nRE = { value = "1k", rating = "50 mW" }\n'
            'C1 = "10u"\nC2 = "10u"\n')
    r = CliRunner().invoke(main, ["analyze", _spec(tmp_path, spec), "--must-pass"])
    assert r.exit_code == 4 and "RE power" in r.stderr
    # the same stage with RE rated 1/4 W: nothing fails; the other ratings are not given (not
    # checked, so not failed) and the divider advice is not a check
    r = CliRunner().invoke(main, ["analyze", _spec(tmp_path, spec.replace('"50 mW"', '"1/4 W"')), "--must-pass"])
    assert r.exit_code == 0, r.output
    assert "not checked" in r.output or "no rating given" in r.output


def test_must_pass_with_json_keeps_stdout_json_and_bad_input_stays_2(tmp_path):
    r = CliRunner().invoke(main, ["analyze", _spec(tmp_path), "--must-pass", "--json"])
    assert r.exit_code == 4
    data = json.loads(r.stdout)
    assert [c["name"] for c in data["checks"] if c["ok"] is False] == ["target f_low"]
    bad = CliRunner().invoke(main, ["analyze", _spec(tmp_path, "topology = 3\n"), "--must-pass"])
    assert bad.exit_code == 2
