"""An invented drawer and the two-stage amplifier built from it, for the saved-design, export and
take tests (not a test module).  The amplifier is inventory_samples/specs/two_stage_buffered.toml
with RE3 made of two 560 Ω parts in parallel (280 Ω) and C1, C2 from one bin; and a direct-coupled
PNP amplifier (``direct_pnp``) with no stock behind it."""

from __future__ import annotations

from pathlib import Path

from drawerfit.stages import Part, TransistorModel
from drawerfit.stages.two_stage import TwoStage

HEADER = ("Kind,Value,Tolerance,Power (W),Voltage (V),Dielectric,Qty,Bin,Label,hFE min,hFE max,VCEO (V),"
          "IC max (A),Pd (W),VBE (V),VCE(sat) (V),Notes")
ROWS = [  # (role(s), csv row); row 2 is the first line after the header
    ("R1", "resistor,47k,5%,0.25,,,30,RA-1,,,,,,,,,"),
    ("R2", "resistor,10k,5%,0.25,,,30,RA-2,,,,,,,,,"),
    ("RC", "resistor,4k7,5%,0.25,,,30,RA-3,,,,,,,,,"),
    ("RE", "resistor,150,5%,0.25,,,30,RA-4,,,,,,,,,"),
    ("RE2", "resistor,1k,5%,0.25,,,30,RA-5,,,,,,,,,"),
    ("R3", "resistor,15k,5%,0.25,,,30,RA-6,,,,,,,,,"),
    ("R4", "resistor,5k6,5%,0.25,,,30,RA-7,,,,,,,,,"),
    ("RE3", "resistor,560,5%,0.5,,,30,RB-1,,,,,,,,,"),
    ("C1 C2", "capacitor,10u,20%,,25,electrolytic,30,CE-1,,,,,,,,,"),
    ("CE", "capacitor,100u,20%,,16,electrolytic,30,CE-2,,,,,,,,,"),
    ("C3", "capacitor,470u,20%,,16,electrolytic,30,CE-3,,,,,,,,,"),
    ("Q1", "npn,,,,,,10,T-1,QN-SMALL-A,110,330,40,0.1,0.4,0.65,0.2,"),
    ("Q2", "npn,,,,,,10,T-2,QN-MEDIUM-B,80,240,45,0.5,0.625,0.65,0.2,"),
]


def write_drawer(folder: Path) -> Path:
    path = folder / "drawer.csv"
    path.write_text(HEADER + "\n" + "\n".join(r for _, r in ROWS) + "\n", encoding="utf-8")
    return path


def build(stock):
    """(circuit, role_lines, transistor_lines, arrangements) from the drawer's stock lines."""
    by_row = {line.source.row: line for line in stock.lines}
    role_lines, transistor_lines = {}, {}
    for row, (roles, _) in enumerate(ROWS, start=2):
        line = by_row[row]
        for role in roles.split():
            if role.startswith("Q"):
                transistor_lines[role] = line
            else:
                role_lines[role] = [(line, 2 if role == "RE3" else 1)]
    parts = {}
    for role, [(line, n)] in role_lines.items():
        value = line.value / n  # n equal parts in parallel (Ohm's law)
        rating = (line.power * n) if role.startswith("R") else line.voltage
        parts[role] = Part(value, line.tolerance, rating, bool(line.polarized))

    def model(line):
        return TransistorModel("npn", line.hfe_min, line.hfe_max, vbe=line.vbe, vce_sat=line.vce_sat,
                               vceo=line.vceo, ic_max=line.ic_max, pd=line.pd, label=line.label)

    circuit = TwoStage("npn", 12.0, "capacitor", parts, model(transistor_lines["Q1"]), model(transistor_lines["Q2"]),
                       600.0, 600.0)
    return circuit, role_lines, transistor_lines, {"RE3": "parallel"}


def direct_pnp() -> TwoStage:
    # the PNP mirror: emitter resistors to the supply, RC and Q2's collector to ground; R1 on the
    # supply side (docs/spec-format.md, "Two-stage amplifier")
    parts = {"R1": Part(10e3, 0.05), "R2": Part(47e3, 0.05), "RC": Part(3.3e3, 0.05), "RE": Part(1.2e3, 0.05),
             "C1": Part(10e-6, 0.2, 25.0, True), "RE3": Part(1e3, 0.05, 0.5), "C3": Part(220e-6, 0.2, 16.0, True)}
    q = TransistorModel("pnp", 100, 300, vbe=0.66, vceo=40.0, label="QP-GEN")
    return TwoStage("pnp", 15.0, "direct", parts, q, q, 1e3, 2.2e3)
