"""Write the invented sample drawers in this folder.  Run: python inventory_samples/generate.py

The scenario is our own: a school electronics lab ("Room 4 drawer"), a repair bench box, a drawer
typed by hand over the years, and a full-size lab drawer of 1 % resistors (``full_lab``; larger
variants are written on demand by benchmarks/bench_scale.py).  Transistor labels are invented; they name no real product.
Quantities come from a seeded random generator so the files are the same on every run.
"""

from __future__ import annotations

import csv
import random
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "src"))

from drawerfit.eseries import decade_values  # noqa: E402
from drawerfit.values import format_code  # noqa: E402

TRANSISTORS_LAB = [
    # label, polarity, hFE min, hFE max, VCEO V, IC max A, Pd W, VBE V, VCE(sat) V, qty, bin, note
    ("LabNPN-S1", "NPN", 110, 260, 40, 0.2, 0.5, 0.65, 0.2, 40, "T1", "general small-signal"),
    ("LabNPN-S2", "NPN", 200, 450, 45, 0.1, 0.5, 0.66, 0.25, 25, "T2", "high gain, low noise"),
    ("LabPNP-S1", "PNP", 100, 300, 40, 0.2, 0.6, 0.65, 0.25, 30, "T3", "general small-signal"),
    ("LabNPN-M1", "NPN", 40, 160, 60, 3.0, 1.25, 0.70, 0.5, 10, "T4", "medium power; Pd without heatsink"),
    ("LabPNP-M1", "PNP", 40, 160, 60, 3.0, 1.25, 0.70, 0.5, 8, "T5", "medium power; Pd without heatsink"),
    ("LabNPN-H1", "NPN", 60, 240, 300, 0.5, 0.6, 0.68, 0.3, 6, "T6", "high voltage"),
]


def teaching_lab(rng: random.Random) -> list[list[str]]:
    rows = [["Kind", "Value", "Tolerance", "Power (W)", "Voltage (V)", "Dielectric", "Qty", "Bin", "Label",
             "hFE min", "hFE max", "VCEO (V)", "IC max (A)", "Pd (W)", "VBE (V)", "VCE(sat) (V)", "Notes"]]
    blank = [""] * 10
    # E12 carbon film, 1/4 W, 5 %, 1 ohm .. 1 Mohm
    for i, v in enumerate(decade_values("E12", 1.0, 1e6)):
        rows.append(["resistor", format_code(v, "ohm"), "5%", "0.25", "", "", str(rng.randint(4, 60)),
                     f"R{i // 12 + 1}-{i % 12 + 1:02d}", *blank[:9], ""])
    # E24 in-between values, metal film 1 %, 1/4 W, 10 ohm .. 100 kohm
    e12 = set(decade_values("E12", 1.0, 1e6))
    for v in decade_values("E24", 10.0, 1e5):
        if v not in e12:
            rows.append(["resistor", format_code(v, "ohm"), "1%", "0.25", "", "", str(rng.randint(0, 25)),
                         "MF-" + format_code(v, "ohm"), *blank[:9], "metal film"])
    # 1/2 W and 1 W lines
    for v in (10, 22, 47, 100, 220, 470, 1000, 2200, 4700, 10000):
        rows.append(["resistor", format_code(v, "ohm"), "5%", "0.5", "", "", str(rng.randint(3, 15)), "P-HALF",
                     *blank[:9], ""])
    for v in (1, 2.2, 4.7, 10, 22, 47, 100, 220):
        rows.append(["resistor", format_code(v, "ohm"), "5%", "1", "", "", str(rng.randint(2, 10)), "P-ONE",
                     *blank[:9], "runs hot at full rating"])
    # ceramic 10 pF .. 100 nF, 50 V, 10 %
    for v in decade_values("E6", 10e-12, 100e-9):
        rows.append(["capacitor", format_code(v, "F"), "10%", "", "50", "ceramic", str(rng.randint(5, 40)),
                     "C-CER", *blank[:9], ""])
    # film 10 nF .. 1 uF, 5 %, 63 V / 100 V
    for v in decade_values("E6", 10e-9, 1e-6):
        rows.append(["capacitor", format_code(v, "F"), "5%", "", "100" if v < 220e-9 else "63", "film",
                     str(rng.randint(2, 20)), "C-FILM", *blank[:9], ""])
    # aluminium electrolytics 1 uF .. 2.2 mF at several voltages, 20 %
    for v, volts in [(1e-6, 50), (2.2e-6, 50), (4.7e-6, 50), (10e-6, 25), (10e-6, 50), (22e-6, 25), (22e-6, 63),
                     (47e-6, 16), (47e-6, 35), (100e-6, 16), (100e-6, 25), (100e-6, 63), (220e-6, 16), (220e-6, 35),
                     (470e-6, 10), (470e-6, 25), (1000e-6, 16), (1000e-6, 35), (2200e-6, 16)]:
        rows.append(["capacitor", format_code(v, "F"), "20%", "", str(volts), "electrolytic",
                     str(rng.randint(2, 25)), f"C-EL{volts}", *blank[:9], "polarized"])
    for (label, pol, hmin, hmax, vceo, icmax, pd, vbe, vsat, qty, bin_, note) in TRANSISTORS_LAB:
        rows.append([pol, "", "", "", "", "", str(qty), bin_, label, str(hmin), str(hmax), str(vceo), str(icmax),
                     str(pd), str(vbe), str(vsat), note])
    return rows


def repair_bench(rng: random.Random) -> list[list[str]]:
    rows = [["Type", "Value", "Tol", "Watts", "Volts", "Qty", "Box", "Name", "hFE min", "hFE max", "VCEO",
             "Ic max", "Pd"]]
    for v, w in [(100, 0.5), (330, 0.5), (680, 0.5), (1000, 0.5), (1500, 0.25), (2200, 0.25), (3300, 0.25),
                 (4700, 0.25), (6800, 0.25), (10000, 0.25), (15000, 0.25), (22000, 0.5), (47000, 0.25),
                 (100000, 0.25), (470, 2.0), (1000, 2.0), (150, 1.0)]:
        rows.append(["R", format_code(v, "ohm"), "5%", str(w), "", str(rng.randint(1, 8)), "tin A", "", "", "",
                     "", "", ""])
    for v, volts, t in [(100e-9, 63, "10%"), (470e-9, 63, "10%"), (1e-6, 63, "5%"), (10e-6, 35, "20%"),
                        (47e-6, 25, "20%"), (100e-6, 25, "20%"), (220e-6, 16, "20%"), (470e-6, 35, "20%"),
                        (47e-6, 400, "20%"), (22e-6, 250, "20%")]:
        kind = "electrolytic" if v >= 10e-6 else "film"
        rows.append([kind, format_code(v, "F"), t, "", str(volts), str(rng.randint(1, 6)), "tin B", "", "", "",
                     "", "", ""])
    rows.append(["NPN", "", "", "", "", "6", "tin C", "BenchNPN-7", "120", "300", "45", "0.15", "0.5"])
    rows.append(["PNP", "", "", "", "", "4", "tin C", "BenchPNP-7", "120", "300", "45", "0.15", "0.5"])
    rows.append(["NPN", "", "", "", "", "2", "tin C", "BenchNPN-P3", "25", "100", "100", "4", "1.5"])
    return rows


MESSY = """\ufeffPart;Val.;Tol;Watts;On hand;Drawer;Comment
# typed in over several terms; some rows are odd on purpose
res;4k7;5 %;1/4 W;25;A-1;
res;4.7 kΩ;5%;0.25;10;A-2;second bag of 4k7
resistor;4700;5;;7;A-3;
R;10K;1%;;12;A-4;
R;2R2;;1W;6;B-1;
R;R47;;;4;B-2;
;1M0;;;9;A-9;no kind given
Resistor;2,2k;5%;0.25;15;A-5;decimal comma
r;330 ohm;;;20;A-6;

C;100nF;10%;;30;C-1;
cap;0.1µF;;;5;C-2;same value written another way
C;4µ7;20%;;8;C-3;electrolytic?
capacitor;22 uF;20%;;6;C-4;
C;470p;;;12;C-5;
R;4k7k;;;3;A-7;bad value
R;1k;;;lots;A-8;bad quantity
R;680;;;-2;A-8;negative quantity
R;1k5;;;2.5;A-8;fractional quantity
gizmo;1k;;;1;Z-9;unknown kind
R;15k;2%;0.5W;11;A-10;
"""


TRANSISTORS_FULL = [
    # label, polarity, hFE min, hFE max, VCEO V, IC max A, Pd W, VBE V, VCE(sat) V, qty, bin
    ("Kit-N110", "NPN", 110, 260, 40, 0.2, 0.5, 0.65, 0.2, 60, "Q-A"),
    ("Kit-N200", "NPN", 200, 450, 45, 0.1, 0.5, 0.66, 0.25, 60, "Q-B"),
    ("Kit-N40P", "NPN", 40, 160, 60, 3.0, 1.25, 0.70, 0.5, 20, "Q-C"),
    ("Kit-P100", "PNP", 100, 300, 40, 0.2, 0.6, 0.65, 0.25, 60, "Q-D"),
    ("Kit-P40P", "PNP", 40, 160, 60, 3.0, 1.25, 0.70, 0.5, 20, "Q-E"),
]


def full_lab(rng: random.Random, series: str = "E96", decades: tuple[float, float] = (10.0, 9.99e6),
             extra_5pct: bool = False) -> list[list[str]]:
    """A full-size lab drawer: 1 % resistors of one E series over six decades (one line a value),
    ceramic, film and electrolytic capacitors over nine decades, five transistor lines.

    ``extra_5pct`` adds E24 5 % carbon film at 0.25 W and 0.5 W over the same decades (a drawer that
    also keeps an assortment kit), which brings an E192 drawer to about two thousand lines."""
    rows = [["Kind", "Value", "Tolerance", "Power (W)", "Voltage (V)", "Dielectric", "Qty", "Bin", "Label",
             "hFE min", "hFE max", "VCEO (V)", "IC max (A)", "Pd (W)", "VBE (V)", "VCE(sat) (V)"]]
    blank = [""] * 7
    for i, v in enumerate(decade_values(series, *decades)):
        rows.append(["resistor", format_code(v, "ohm"), "1%", "0.25", "", "", str(rng.randint(5, 100)),
                     f"MF-{i // 48 + 1:02d}", "", *blank])
    if extra_5pct:
        for w in ("0.25", "0.5"):
            for i, v in enumerate(decade_values("E24", *decades)):
                rows.append(["resistor", format_code(v, "ohm"), "5%", w, "", "", str(rng.randint(5, 100)),
                             f"CF{w[2:]}-{i // 24 + 1:02d}", "", *blank])
    for volts in ("50", "100"):  # ceramic 1 pF .. 100 nF
        for v in decade_values("E12", 1e-12, 100e-9):
            rows.append(["capacitor", format_code(v, "F"), "10%", "", volts, "ceramic", str(rng.randint(5, 100)),
                         f"CC-{volts}", "", *blank])
    for v in decade_values("E6", 1e-9, 1e-6):  # film 1 nF .. 680 nF
        rows.append(["capacitor", format_code(v, "F"), "5%", "", "100", "film", str(rng.randint(5, 50)), "CF",
                     "", *blank])
    for volts in ("16", "35", "63"):  # electrolytic 1 µF .. 1 mF
        for v in decade_values("E6", 1e-6, 1e-3):
            rows.append(["capacitor", format_code(v, "F"), "20%", "", volts, "electrolytic",
                         str(rng.randint(5, 60)), f"CE-{volts}", "", *blank])
    for (label, pol, hmin, hmax, vceo, icmax, pd, vbe, vsat, qty, bin_) in TRANSISTORS_FULL:
        rows.append([pol, "", "", "", "", "", str(qty), bin_, label, str(hmin), str(hmax), str(vceo), str(icmax),
                     str(pd), str(vbe), str(vsat)])
    return rows


def write_csv(path: Path, rows: list[list[str]], delimiter: str = ",") -> None:
    with open(path, "w", newline="", encoding="utf-8") as fh:
        csv.writer(fh, delimiter=delimiter, lineterminator="\n").writerows(rows)


def write_lab_xlsx(path: Path, rows: list[list[str]]) -> None:
    """The lab drawer again, one sheet per kind (no kind column: the sheet says it), bold headers."""
    import openpyxl
    from openpyxl.styles import Font, PatternFill

    wb = openpyxl.Workbook()
    wb.remove(wb.active)
    header = rows[0]
    for title, kinds in (("Resistors", ("resistor",)), ("Capacitors", ("capacitor",)),
                         ("Transistors", ("NPN", "PNP"))):
        ws = wb.create_sheet(title)
        keep = [i for i, h in enumerate(header) if h != "Kind"]
        if title != "Transistors":
            keep = [i for i in keep if i < 8 or header[i] == "Notes"]
        else:
            keep = [i for i in keep if header[i] not in ("Value", "Tolerance", "Power (W)", "Voltage (V)",
                                                         "Dielectric")]
            keep.insert(0, 0)
        ws.append([header[i] if header[i] != "Kind" else "Polarity" for i in keep])
        for cell in ws[1]:
            cell.font = Font(bold=True)
            cell.fill = PatternFill("solid", fgColor="DDEEFF")
        for row in rows[1:]:
            if row[0] in kinds:
                out = []
                for i in keep:
                    text = row[i]
                    if header[i] in ("Qty",) and text:
                        out.append(int(text))
                    else:
                        out.append(text)
                ws.append(out)
        ws.column_dimensions["A"].width = 14
    wb.create_sheet("Read me").append(["Room 4 drawer, kept by the lab technician. One sheet per kind."])
    wb.save(path)


def main() -> None:
    rng = random.Random(20261202)
    lab = teaching_lab(rng)
    write_csv(HERE / "teaching_lab.csv", lab)
    write_lab_xlsx(HERE / "teaching_lab.xlsx", lab)
    write_csv(HERE / "repair_bench.csv", repair_bench(rng))
    (HERE / "messy_drawer.csv").write_text(MESSY, encoding="utf-8")
    write_csv(HERE / "full_lab_e96.csv", full_lab(random.Random(20261203)))


if __name__ == "__main__":
    main()
