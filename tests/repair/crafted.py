"""A crafted repair (invented data): a follower whose bias follows hFE, its board transistor dead,
and a drawer with one type that keeps the emitter current in its window and one that moves it out.

Worked by hand (Thevenin divider, common practice VBE about 0.65 V): VTH = 6 V, RTH = 23.5 kΩ,
IE ≈ (VTH − VBE)/(RE + RTH/(β+1)): about 4.6 mA at β 150 and 5.05 mA at β 400 (the board's
type), 4.7-5.1 mA for BenchNPN-5 (hFE 180-450), but only 3.4 mA at β 40 for BenchNPN-P2
(hFE 40-120): below the 4.2 mA the spec asks by almost a fifth.
"""

from __future__ import annotations

from pathlib import Path

SPEC = '''# a follower on a bench amplifier board under repair (invented example)
title = "bench amplifier, input buffer"
topology = "emitter-follower"
polarity = "npn"
supply = "12 V"
source_resistance = "600"
load = "2k2"

[transistor]
label = "BenchNPN-3"          # the dead one: not in the drawer
hfe_min = 150
hfe_max = 400
vbe = "0.65 V"
vceo = "40 V"
ic_max = "100 mA"
pd = "500 mW"

[parts]
R1 = "47k 1%"
R2 = "47k 1%"
RE = { value = "1k", tolerance = "1%", rating = "0.25 W" }
C1 = { value = "10u", rating = "25 V" }
C2 = { value = "100u", rating = "16 V" }

[targets]
ie_min = "4.2 mA"
ie_max = "5.5 mA"

[limits]
ambient = [20, 30]
'''

HEADER = "Kind,Qty,Bin,Label,hFE min,hFE max,VCEO (V),IC max (A),Pd (W),VBE (V),VCE(sat) (V)"
DRAWER = [
    # kind, qty, bin, label, hFE min, hFE max, VCEO, IC max, Pd, VBE, VCE(sat)
    ("NPN", 12, "tray 2", "BenchNPN-5", 180, 450, 45, 0.1, 0.5, 0.65, 0.2),    # keeps IE in its window
    ("NPN", 3, "tray 4", "BenchNPN-P2", 40, 120, 60, 1.0, 1.0, 0.66, 0.3),     # moves IE out of it
    ("NPN", 5, "tray 2", "BenchNPN-8", 160, 420, "", 0.1, 0.5, 0.65, 0.2),     # no VCEO in the file
    ("NPN", 7, "tray 3", "BenchNPN-9", 200, 500, 40, 0.1, "", 0.66, 0.2),      # no PD in the file
    ("NPN", 2, "tray 1", "BenchNPN-1", 100, 300, 20, 0.05, 0.3, 0.65, 0.2),    # ratings too low
    ("PNP", 9, "tray 5", "BenchPNP-3", 150, 400, 40, 0.1, 0.5, 0.65, 0.2),     # the other polarity
]
KEEPER, BREAKER, NO_VCEO, NO_PD, LOW_RATINGS, OTHER = (row[3] for row in DRAWER)


def write_case(where: Path, spec_text: str = SPEC) -> tuple[Path, Path]:
    """The spec and the drawer (CSV) written into ``where``: (spec path, stock path)."""
    spec = where / "board.toml"
    spec.write_text(spec_text, encoding="utf-8")
    stock = where / "drawer.csv"
    rows = [HEADER] + [",".join(str(x) for x in row) for row in DRAWER]
    stock.write_text("\n".join(rows) + "\n", encoding="utf-8")
    return spec, stock
