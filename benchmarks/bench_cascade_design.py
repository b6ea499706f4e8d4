"""The two-stage amplifier's joint design search, end to end (run on demand, not by the tests).

    python3 benchmarks/bench_cascade_design.py

Each line runs `drawerfit design` on a two-stage spec in a fresh process (start-up and reading
included) and prints wall-clock seconds, the child's peak resident memory, the answer's status and
how many resistor sets were tried.  Drawers: an invented 8-value drawer (E12 values 220 Ω–47 kΩ,
five capacitors, one NPN line) and the bundled 202-line teaching-lab drawer.  Specs: a bypassed
capacitor-coupled amplifier with gain at least 12 into 150 Ω, and a direct-coupled one with gain at
least 2 into 1 kΩ.
"""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "benchmarks"))

from bench_scale import run  # noqa: E402

DRAWER = ["Kind,Value,Tolerance,Power (W),Voltage (V),Dielectric,Qty,Bin,Label,hFE min,hFE max,VCEO (V),"
          "IC max (A),Pd (W),VBE (V),VCE(sat) (V)"]
DRAWER += [f"resistor,{v},5%,0.25,,,4,R-{v},,,,,,,," for v in ("220", "470", "1k", "2k2", "4k7", "10k", "22k", "47k")]
DRAWER += [f"capacitor,{v},20%,,25,{d},4,C-{v},,,,,,,," for v, d in
           (("1u", "film"), ("10u", "electrolytic"), ("47u", "electrolytic"), ("220u", "electrolytic"),
            ("1000u", "electrolytic"))]
DRAWER += ["NPN,,,,,,10,T1,QT-GEN,120,360,40,0.2,0.5,0.65,0.2"]

SPECS = {
    "capacitor, bypassed, gain >= 12 into 150 ohm": """topology = "two-stage"
coupling = "capacitor"
bypass = true
polarity = "npn"
supply = "12 V"
source_resistance = "600"
load = "150"
[targets]
gain_min = 12
f_low = "40 Hz"
ie1_min = "0.5 mA"
ie1_max = "2.5 mA"
ie2_min = "5 mA"
ie2_max = "30 mA"
""",
    "direct, gain >= 2 into 1 kohm": """topology = "two-stage"
coupling = "direct"
polarity = "npn"
supply = "12 V"
source_resistance = "600"
load = "1k"
[targets]
gain_min = 2
f_low = "40 Hz"
ie1_min = "0.5 mA"
ie1_max = "2.5 mA"
""",
}


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        small = folder / "eight_values.csv"
        small.write_text("\n".join(DRAWER) + "\n", encoding="utf-8")
        drawers = {"8 values": small, "teaching lab (202 lines)": ROOT / "inventory_samples" / "teaching_lab.csv"}
        print(f"{'drawer':>26} {'spec':>46} {'seconds':>8} {'peak MB':>8}  status (sets tried)")
        for dname, dpath in drawers.items():
            for sname, text in SPECS.items():
                spec = folder / "spec.toml"
                spec.write_text(text, encoding="utf-8")
                r = run(["design", str(spec), "--stock", str(dpath), "--max-parts", "1", "--json", "--quiet"],
                        timeout=600)
                d = r["out"] or {}
                secs = "timeout" if r["seconds"] is None else f"{r['seconds']:8.2f}"
                print(f"{dname:>26} {sname:>46} {secs:>8} {r['rss_mb'] or 0:8.0f}  "
                      f"{d.get('status', 'no answer')} ({d.get('tried', '?')}), exit {r.get('code')}", flush=True)


if __name__ == "__main__":
    main()
