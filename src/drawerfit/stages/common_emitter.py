"""The common-emitter stage with divider bias and an optionally bypassed second emitter resistor.

NPN: R1 supply→base, R2 base→ground, RC supply→collector, RE emitter→n, RE2 n→ground (absent:
RE goes straight to ground), CE across RE2, C1 into the base, C2 out of the collector.  PNP
mirror: RC collector→ground, RE2 and CE return to the supply.

Everything particular to the stage lives here (the interface: ``stages/topologies.INTERFACE``,
DEVELOPERS.md "Adding a circuit").  Kernels import numpy inside, so importing this stays light.
"""

from __future__ import annotations

import math
from typing import Mapping

from .kernels import parallel

NAME = "common-emitter"
TITLE = "common-emitter stage"  # in page titles
SHORT_NAME = "common emitter"  # in reasons
REQUIRED = ("R1", "R2", "RE", "RC", "C1", "C2")
OPTIONAL = ("RE2", "CE")
ROLES = ("R1", "R2", "RE", "RC", "RE2", "C1", "C2", "CE")  # every role, in the order specs and reports list them
TRANSISTORS = ("Q1",)
OUTPUT_NODE = "c"
OUTPUT_END = "the collector"  # the stage-side end of C2, in words
HAS_BYPASS = True  # a spec may ask for a bypassed RE2
HAS_GAIN_TARGET = True  # gain_min/gain_max apply
BASE_LOAD_WORDS = "RE"  # what the base sees beyond re (RE2 bypassed), in the reasons' words
# The search: the roles it chooses, and those a bypass adds.
DESIGN_RESISTORS = ("R1", "R2", "RE", "RC")
DESIGN_CAPACITORS = ("C1", "C2")
BYPASS_ROLES = (("RE2",), ("CE",))
# The figure of each role: the power a resistor dissipates, the DC voltage across a capacitor.
POWER_FIGURE = {"R1": "p_r1", "R2": "p_r2", "RE": "p_re", "RC": "p_rc", "RE2": "p_re2"}
CAP_FIGURE = {"C1": "v_c1", "C2": "v_c2", "CE": "v_ce"}


def validate_roles(parts: Mapping[str, object]) -> None:
    from .base import StageError, check_roles

    check_roles(parts, REQUIRED, OPTIONAL, "a common-emitter stage")
    if "CE" in parts and "RE2" not in parts:
        raise StageError("CE bypasses RE2, but there is no RE2")


def elements(polarity: str, parts: Mapping[str, object]) -> list[tuple[str, str, str, str]]:
    """Circuit elements (designator, node +, node −, role) between named nodes; 'vcc' and '0' rails."""
    rail_e, rail_c = ("0", "vcc") if polarity == "npn" else ("vcc", "0")
    has_re2 = "RE2" in parts
    out = [
        ("R1", "vcc", "b", "R1"),
        ("R2", "b", "0", "R2"),
        ("RC", rail_c, "c", "RC"),
        ("RE", "e", "n" if has_re2 else rail_e, "RE"),
        ("C1", "in", "b", "C1"),
        ("C2", "c", "out", "C2"),
        ("Q1", "c", "b", "e"),
    ]
    if has_re2:
        out.append(("RE2", "n", rail_e, "RE2"))
        if "CE" in parts:
            out.append(("CE", "n", rail_e, "CE"))
    return out


def design_roles(bypass: bool) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """(resistor roles, capacitor roles) the search chooses; ``bypass`` adds RE2 and CE."""
    if bypass:
        return DESIGN_RESISTORS + BYPASS_ROLES[0], DESIGN_CAPACITORS + BYPASS_ROLES[1]
    return DESIGN_RESISTORS, DESIGN_CAPACITORS


# --- the vectorised DC kernel (analysis/dc.py calls these) ---

def dc_inputs(rc, re2, byp):
    """RC, RE2 and the bypass flag as given."""
    return rc, re2, byp


def small_signal(q: Mapping[str, object]):
    """(AC emitter resistance, base impedance, base-to-load gain, output resistance)."""
    import numpy as np

    re, re2, beta, re_s = q["re"], q["re2"], q["beta"], q["re_s"]
    re_ac = np.where(q["byp"], re, re + re2)
    rload_c = parallel(q["rc"], q["rl"])
    zb = (beta + 1.0) * (re_s + re_ac)
    gain_base = -q["alpha"] * rload_c / (re_s + re_ac)
    return re_ac, zb, gain_base, q["rc"].copy()


def swing(q: Mapping[str, object]):
    """(room away from the emitter rail, room toward it, True where saturation binds), mirrored."""
    rload_c = parallel(q["rc"], q["rl"])
    up = q["ic"] * rload_c  # collector current falls to zero (cut-off)
    down = (q["vce"] - q["vces"]) * rload_c / (rload_c + q["re_ac"] / q["alpha"])  # VCE falls to VCE(sat)
    return up, down, down < up


def dc_nodes(q: Mapping[str, object]):
    """(collector voltage, CE voltage, C2 voltage) to ground."""
    return q["vc"], q["v_ce"], q["vc"].copy()


# --- the low-frequency response (analysis/response.py calls these) ---

def kernel_constants(inp: Mapping[str, object], ce) -> dict:
    """Constants beyond the shared ones the complex transfer needs: RE, RE2, CE and 1/RC."""
    import numpy as np

    return dict(re=inp["re"], re2=inp["re2"], ce=np.asarray(ce, float), grc=1.0 / inp["rc"])


def stage_transfer(k, s, y_out):
    """(base impedance, collector voltage over base voltage) at complex frequency ``s``."""
    ze = k.re + k.re2 / (1.0 + s * k.ce * k.re2)
    zb = k.rpi + k.bp1 * ze
    to_out = -k.beta / (zb * (k.grc + y_out))  # vc / vb
    return zb, to_out


def bypass_corner(inp: Mapping[str, object], dc, ce):
    """CE's own corner with the resistance it sees, Hz (0 without a bypass)."""
    import numpy as np

    rs_b = parallel(inp["rs"], inp["rbias"])
    r_seen = parallel(inp["re2"], inp["re"] + dc.re_small + rs_b / (inp["beta"] + 1.0))
    return np.where((ce > 0) & (inp["re2"] > 0), 1.0 / (2.0 * np.pi * ce * r_seen), 0.0)


def magnitude_constants(z: Mapping[str, object], arr, inp: Mapping[str, object], ce) -> dict:
    """|H|² from H = −β·C1·C2·s²·(1 + s·CE·RE2) / ((p0 + p1·s + p2·s²)·(o0 + o1·s))."""
    beta, rs, c1, c2, rpi, gb, gl, re = (z[n] for n in ("beta", "rs", "c1", "c2", "rpi", "gb", "gl", "re"))
    re2, grc, ce = arr(inp["re2"]), 1.0 / arr(inp["rc"]), arr(ce)
    tau = ce * re2  # CE·RE2 (0 without bypass)
    b0 = rpi + (beta + 1.0) * (re + re2)
    b1 = tau * (rpi + (beta + 1.0) * re)
    u0, u1 = gb * b0 + 1.0, gb * b1 + tau
    return dict(q0=u0, q1=c1 * b0 + u1 + c1 * rs * u0, q2=c1 * b1 + c1 * rs * u1,
                o0=grc * gl, o1=c2 * (grc + gl), tau2=tau**2, k=(beta * c1 * c2) ** 2)


def magnitude(m, x, den):
    """|H|² at x = ω² from the shared denominator ``den``."""
    return m.k * x * x * (1.0 + m.tau2 * x) / (den * (m.o0**2 + m.o1**2 * x))


# --- the search (judge, bounds, reasons) ---

def nominal_extras(v, ie, rth, beta, temp, problem) -> dict:
    """The nominal gain (source to load) of resistor sets ``v``, for the search's distance."""
    import numpy as np

    from ..constants import thermal_voltage

    p = problem
    re_ac = np.asarray(v["RE"], float) + (0.0 if p.bypass or "RE2" not in v else np.asarray(v["RE2"], float))
    with np.errstate(divide="ignore", invalid="ignore"):
        re_s = np.where(ie > 0, thermal_voltage(temp) / np.where(ie > 0, ie, 1.0), np.inf)
        zb = (beta + 1.0) * (re_s + re_ac)
        rin = rth * zb / (rth + zb)
        rin = np.where(np.isinf(zb), rth, rin)
        load = np.asarray(v["RC"], float)
        if np.isfinite(p.rl):
            load = load * p.rl / (load + p.rl)
        g = beta / (beta + 1.0) * load / (re_s + re_ac) * rin / (p.source_resistance + rin)
    return {"gain": np.where(ie > 0, g, 0.0)}


def swing_ceiling(room: float, ie_max: float, rl: float) -> float:
    """The largest symmetric peak at IE <= ie_max with ``room`` = VCC − VCE(sat)."""
    if room <= 0:
        return 0.0
    return min(room / 2.0, ie_max * rl)


def emitter_bounds(supply: float, vce_sat: float, targets, rl: float, b_lo: float, slack: float) -> dict:
    """The search's bounds for the headroom (``search/bounds.py`` proves them): the most RET low +
    α_lo·RC high may be, α_lo, the least RC‖RL the upward swing needs, the gain floor."""
    from .kernels import par_floor

    s = targets.swing or 0.0
    return {"headroom": (supply - vce_sat - s) / targets.ie_min * (1 + slack),
            "alpha_lo": b_lo / (b_lo + 1.0),
            "rc_swing": float(par_floor(s * (1 - slack) / targets.ie_max, rl)),
            "gain_min": None if targets.gain_min is None else targets.gain_min * (1 - slack)}


def base_load_floor(q, rl: float):
    """The least RE whose load on the base beyond re (RE, RE2 bypassed) reaches ``q`` (an array)."""
    import numpy as np

    return np.maximum(q, 0.0)


def base_ceiling(problem, model, vt: float) -> float | None:
    """(hFE_min + 1)·(re_max + RL/gain_min): the most the base can show, None when unbounded."""
    t = problem.targets
    rl = problem.rl
    if t.gain_min is None or not math.isfinite(rl):
        return None
    re_max = vt / t.ie_min
    b1 = model.hfe_min + 1.0
    return b1 * (re_max + rl / t.gain_min)


# --- the report ---

def schematic_heights(parts: Mapping[str, object], span: Mapping[str, float], lead: float) -> tuple[float, float]:
    """(emitter side, collector side) heights of the drawing: RE (and RE2) to the rail; a lead to the
    output tap, then RC."""
    return span["RE"] + (span["RE2"] if "RE2" in parts else 0.0), lead + span["RC"]


def draw_sides(sk) -> tuple:
    """Draw the emitter side (RE, RE2 with CE across it) and the collector side (a lead to the output
    tap, RC to its rail) on ``sk`` (``report.schematic.Sketch``); (tap y, C2's x, C2's label side,
    reach to the right of the transistor, whether the emitter rail needs a junction under it)."""
    parts, xq, right = sk.stage.parts, sk.xq, (1.0, 0.0)
    reach = sk.width["RE"]
    n_y = sk.e_y + sk.e_dir * sk.span["RE"]
    end_re = (xq, n_y if "RE2" in parts else sk.rail_e)
    sk.place("RE", (xq, sk.e_y), end_re, right, single_loc="bottom")
    if "RE2" in parts:
        sk.dot((xq, n_y))
        sk.place("RE2", (xq, n_y), (xq, sk.rail_e), right, single_loc="top")
        reach = max(reach, sk.width["RE2"])
        if sk.stage.bypassed:
            xce = xq + max(2.2, sk.width["RE2"] + 0.6 + (sk.role_room if "CE" in sk.members else 0.0))
            sk.line((xq, n_y), (xce, n_y))
            ce_plus_at_n = float(sk.nominal.v_ce) >= 0
            sk.place("CE", (xce, n_y), (xce, sk.rail_e), right,
                     single_loc="bottom" if (ce_plus_at_n == sk.npn) else "top", plus_at_start=ce_plus_at_n,
                     polar=parts["CE"].polarized)
            sk.dot((xce, sk.rail_e))
            reach = max(reach, xce - xq + sk.width["CE"] + 1.2)
    tap_y = sk.c_y - sk.e_dir * sk.lead
    sk.line((xq, sk.c_y), (xq, tap_y))
    sk.place("RC", (xq, tap_y), (xq, sk.rail_c), right, single_loc="top" if sk.npn else "bottom")
    x_c2 = xq + max(1.2, sk.width["RC"] + 0.2)
    if sk.stage.bypassed:
        x_c2 = max(x_c2, xq + 4.6)
    # C2's label toward the collector's rail, clear of the transistor's label
    return tap_y, x_c2, (0.0, -sk.e_dir), reach, "RE2" not in parts


def load_line(stage) -> tuple[float, float, float]:
    """(DC load-line resistance, AC one, output volts per volt of VCE) of the output circuit."""
    beta = stage.transistor.hfe
    alpha = beta / (beta + 1.0)
    re, re2, rc = stage.value("RE"), stage.value("RE2"), stage.value("RC")
    rl = math.inf if stage.load is None else stage.load
    re_ac = re if stage.bypassed else re + re2
    rload = rc if math.isinf(rl) else rl if math.isinf(rc) else rc * rl / (rc + rl)
    r_ac = rload + re_ac / alpha
    return rc + (re + re2) / alpha, r_ac, rload / r_ac
