"""The emitter follower (common collector) with divider bias: everything particular to it.

NPN: R1 supply→base, R2 base→ground, RE emitter→ground, collector on the supply, C1 into the
base, C2 out of the emitter.  PNP mirror: RE supply→emitter, collector to ground.

The interface every circuit module provides is listed in ``stages/topologies.INTERFACE`` and
described in DEVELOPERS.md, "Adding a circuit".  Kernels take numpy arrays and import numpy
inside, so that importing this module stays light.
"""

from __future__ import annotations

import math
from typing import Mapping

from .kernels import parallel

NAME = "emitter-follower"
TITLE = "emitter follower"  # in page titles
SHORT_NAME = "follower"  # in reasons
REQUIRED = ("R1", "R2", "RE", "C1", "C2")
OPTIONAL: tuple[str, ...] = ()
ROLES = ("R1", "R2", "RE", "C1", "C2")  # every role, in the order specs and reports list them
TRANSISTORS = ("Q1",)
OUTPUT_NODE = "e"
OUTPUT_END = "the emitter"  # the stage-side end of C2, in words
HAS_BYPASS = False  # a spec may ask for a bypassed RE2
HAS_GAIN_TARGET = False  # gain_min/gain_max apply
BASE_LOAD_WORDS = "RE‖RL"  # what the base sees beyond re, in the reasons' words
# The search: the roles it chooses, and those a bypass adds.
DESIGN_RESISTORS = ("R1", "R2", "RE")
DESIGN_CAPACITORS = ("C1", "C2")
BYPASS_ROLES: tuple[tuple[str, ...], tuple[str, ...]] = ((), ())
# The figure of each role: the power a resistor dissipates, the DC voltage across a capacitor.
POWER_FIGURE = {"R1": "p_r1", "R2": "p_r2", "RE": "p_re"}
CAP_FIGURE = {"C1": "v_c1", "C2": "v_c2"}


def validate_roles(parts: Mapping[str, object]) -> None:
    from .base import check_roles

    check_roles(parts, REQUIRED, OPTIONAL, "an emitter follower")


def elements(polarity: str, parts: Mapping[str, object]) -> list[tuple[str, str, str, str]]:
    """Circuit elements (designator, node +, node −, role) between named nodes; 'vcc' and '0' rails."""
    rail_e, rail_c = ("0", "vcc") if polarity == "npn" else ("vcc", "0")
    return [
        ("R1", "vcc", "b", "R1"),
        ("R2", "b", "0", "R2"),
        ("RE", "e", rail_e, "RE"),
        ("C1", "in", "b", "C1"),
        ("C2", "e", "out", "C2"),
        ("Q1", rail_c, "b", "e"),  # collector, base, emitter
    ]


def design_roles(bypass: bool) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """(resistor roles, capacitor roles) the search chooses; the follower has no bypass."""
    return DESIGN_RESISTORS, DESIGN_CAPACITORS


# --- the vectorised DC kernel (analysis/dc.py calls these) ---

def dc_inputs(rc, re2, byp):
    """The follower has no RC, RE2 or bypass: zeros of the broadcast shape."""
    import numpy as np

    return np.zeros_like(rc), np.zeros_like(re2), np.zeros_like(byp)


def small_signal(q: Mapping[str, object]):
    """(AC emitter resistance, base impedance, base-to-load gain, output resistance)."""
    re, rl, beta, re_s = q["re"], q["rl"], q["beta"], q["re_s"]
    rload_e = parallel(re, rl)
    zb = (beta + 1.0) * (re_s + rload_e)
    gain_base = rload_e / (re_s + rload_e)
    rs_b = parallel(q["rs"], q["rbias"])
    rout = parallel(re, re_s + rs_b / (beta + 1.0))
    return re, zb, gain_base, rout


def swing(q: Mapping[str, object]):
    """(room away from the emitter rail, room toward it, True where saturation binds), mirrored."""
    up = q["vcc"] - q["vces"] - q["vem"]  # emitter rises until VCE = VCE(sat)
    down = q["ie"] * parallel(q["re"], q["rl"])  # emitter current falls to zero (cut-off)
    return up, down, up < down


def dc_nodes(q: Mapping[str, object]):
    """(collector voltage, CE voltage, C2 voltage) to ground: the collector sits on a rail."""
    import numpy as np

    vcc = q["vcc"]
    vc = vcc.copy() if q["polarity"] == "npn" else np.zeros_like(vcc)
    return vc, np.zeros_like(q["v_ce"]), q["ve"].copy()


# --- the low-frequency response (analysis/response.py calls these) ---

def kernel_constants(inp: Mapping[str, object], ce) -> dict:
    """Constants beyond the shared ones the complex transfer needs: none."""
    return {}


def stage_transfer(k, s, y_out):
    """(base impedance, emitter voltage over base voltage) at complex frequency ``s``."""
    ye = k.gre + y_out
    zb = k.rpi + k.bp1 / ye
    to_out = k.bp1 / (ye * k.rpi + k.bp1)  # ve / vb
    return zb, to_out


def bypass_corner(inp: Mapping[str, object], dc, ce):
    """The bypass capacitor's own corner: the follower has none (None)."""
    return None


def magnitude_constants(z: Mapping[str, object], arr, inp: Mapping[str, object], ce) -> dict:
    """|H|² = k·x²/((q0 − q2·x)² + q1²·x) with H = (β+1)·C1·C2·s² / (q0 + q1·s + q2·s²)."""
    beta, rs, c1, c2, rpi, gb, gl = (z[n] for n in ("beta", "rs", "c1", "c2", "rpi", "gb", "gl"))
    gre = 1.0 / z["re"]
    a0, a1 = gre * gl, c2 * (gre + gl)  # (emitter admittance)·(gl + s·C2)
    d0, d1 = rpi * a0 + (beta + 1.0) * gl, rpi * a1 + (beta + 1.0) * c2
    e0, e1 = gb * d0 + a0, gb * d1 + a1
    return dict(q0=e0, q1=c1 * d0 + e1 + c1 * rs * e0, q2=c1 * d1 + c1 * rs * e1,
                k=((beta + 1.0) * c1 * c2) ** 2)


def magnitude(m, x, den):
    """|H|² at x = ω² from the shared denominator ``den``."""
    return m.k * x * x / den


# --- the search (judge, bounds, reasons) ---

def nominal_extras(v, ie, rth, beta, temp, problem) -> dict:
    """Nominal figures beyond IE that the search's distance uses: none (no gain target)."""
    return {}


def swing_ceiling(room: float, ie_max: float, rl: float) -> float:
    """The largest symmetric peak a follower at IE <= ie_max can give with ``room`` = VCC − VCE(sat)."""
    if room <= 0:
        return 0.0
    if not math.isfinite(rl):
        return room / 2.0
    # up = room − VE falls and down = VE/(1 + VE/K) rises with VE (K = ie_max·RL): the best is where
    # they meet, x² − (room − 2K)·x − room·K = 0
    k = ie_max * rl
    x = 0.5 * ((room - 2.0 * k) + math.sqrt((room - 2.0 * k) ** 2 + 4.0 * room * k))
    return room - x


def emitter_bounds(supply: float, vce_sat: float, targets, rl: float, b_lo: float, slack: float) -> dict:
    """The search's bounds on RE alone (``search/bounds.py`` proves them): with a swing target, RE's
    low-end floor and high-end ceiling and the least VE; ``base_load_max`` the most RE‖RL can be."""
    import numpy as np

    from .kernels import par_floor

    re_lo_min, re_hi_max, ve_min = 0.0, np.inf, 0.0
    s = targets.swing or 0.0
    if s > 0:
        # down = IE·(RE‖RL) >= s with IE <= ie_max, at the vertex of RE low
        re_lo_min = float(par_floor(s * (1 - slack) / targets.ie_max, rl))
        # up = VCC − VCE(sat) − IE·RE >= s and down >= s at one vertex: IE·RE cancels
        room = supply - vce_sat - 2.0 * s + slack * supply
        if np.isfinite(rl):
            re_hi_max = rl * room / s
        elif room < 0:
            re_hi_max = -np.inf
        # VE = IE·RE >= s·(RE + RL)/RL >= s·(1 + RE low/RL)
        ve_min = s * (1.0 + (re_lo_min / rl if np.isfinite(rl) else 0.0))
    # RE‖RL is below RL and below RE high‖RL
    x = rl
    if np.isfinite(re_hi_max):
        h = max(re_hi_max, 0.0)
        x = h if not np.isfinite(rl) else h * rl / (h + rl) if h > 0 else 0.0
    return {"re_lo_min": re_lo_min, "re_hi_max": re_hi_max, "ve_min": ve_min, "base_load_max": x}


def base_load_floor(q, rl: float):
    """The least RE whose load on the base beyond re (RE‖RL) reaches ``q`` (an array)."""
    from .kernels import par_floor

    return par_floor(q, rl)


def base_ceiling(problem, model, vt: float) -> float | None:
    """(hFE_min + 1)·(re_max + X_max), X = RE‖RL: the most the base can show, None when unbounded."""
    t = problem.targets
    rl = problem.rl
    if not math.isfinite(rl):
        return None
    re_max = vt / t.ie_min
    b1 = model.hfe_min + 1.0
    x = rl
    s = t.swing or 0.0
    if s > 0:
        h = rl * (problem.supply - model.vce_sat - 2.0 * s) / s
        x = 0.0 if h <= 0 else h * rl / (h + rl)
    return b1 * (re_max + x)


# --- the report ---

def schematic_heights(parts: Mapping[str, object], span: Mapping[str, float], lead: float) -> tuple[float, float]:
    """(emitter side, collector side) heights of the drawing: a lead to the output tap, then RE; the
    collector straight to its rail."""
    return lead + span["RE"], 1.5


def draw_sides(sk) -> tuple:
    """Draw the emitter side (a lead to the output tap, RE to its rail) and the collector wire on
    ``sk`` (``report.schematic.Sketch``); (tap y, C2's x, C2's label side, reach to the right of the
    transistor, whether the emitter rail needs a junction under the transistor)."""
    tap_y = sk.e_y + sk.e_dir * sk.lead
    sk.line((sk.xq, sk.e_y), (sk.xq, tap_y))
    sk.place("RE", (sk.xq, tap_y), (sk.xq, sk.rail_e), (1.0, 0.0), single_loc="bottom" if sk.npn else "top")
    sk.line((sk.xq, sk.c_y), (sk.xq, sk.rail_c))
    x_c2 = sk.xq + max(1.2, sk.width["RE"] + 0.2)
    return tap_y, x_c2, (0.0, sk.e_dir), sk.width["RE"], True


def load_line(stage) -> tuple[float, float, float]:
    """(DC load-line resistance, AC one, output volts per volt of VCE) of the output circuit."""
    beta = stage.transistor.hfe
    alpha = beta / (beta + 1.0)
    re = stage.value("RE")
    rl = math.inf if stage.load is None else stage.load
    r_ac = re if math.isinf(rl) else rl if math.isinf(re) else re * rl / (re + rl)
    return re / alpha, r_ac / alpha, 1.0  # the emitter moves as much as VCE does
