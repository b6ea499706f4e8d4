"""Figures of the two-stage amplifier (common emitter driving an emitter follower), vectorised.

Every numeric keyword argument is a float or a numpy array, broadcast together, as in
``analysis.dc``.  Conventions are dc.py's: SI units, node voltages to ground, currents and VCE as
magnitudes, the PNP amplifier solved as the NPN one in voltages measured down from the supply
(R1↔R2 and R3↔R4 swapped), signed capacitor voltages (stage-side end minus the other: C1 base1
minus source, C2 collector1 minus base2, C3 emitter2 minus load, CE the RE/RE2 junction minus its
rail), states ACTIVE/SATURATED/CUTOFF per transistor.  VBE is fixed (``vbe`` at 25 °C plus
``vbe_tempco`` per °C); the diode-law VBE of dc.py is not offered here yet.

Capacitor-coupled, each stage has its own divider and its DC point is dc.py's ``evaluate_dc``
of the single stage.  Direct-coupled, Q2's base current loads Q1's collector: the two stages are
solved together (linear for fixed VBE, in each combination of states).  Small signal, the
transfer function and the swing are docs/method.md's "Two-stage amplifier".
"""

from __future__ import annotations

from dataclasses import dataclass, fields, replace
from typing import Mapping

import numpy as np

from ..constants import NOMINAL_TEMP_C, VBE_DEFAULT, VBE_TEMPCO, VCE_SAT_DEFAULT, thermal_voltage
from ..stages import common_emitter, follower
from .dc import ACTIVE, CUTOFF, LIMIT_CUTOFF, LIMIT_NONE, LIMIT_SATURATION, SATURATED, evaluate_dc, parallel
from .response import TWO_PI, _illinois

__all__ = ["CascadeFigures", "evaluate_cascade_dc", "evaluate_cascade", "cascade_transfer",
           "cascade_low_corner", "cascade_worst_case", "cascade_monte_carlo", "cascade_arguments",
           "cascade_netlist", "cascade_vertices", "CASCADE_TOLERANCE_KEYS", "CASCADE_CAP_KEYS", "POWER_FIGURE", "CAP_FIGURE"]

CASCADE_TOLERANCE_KEYS = ("r1", "r2", "rc", "re", "re2", "r3", "r4", "re3", "c1", "c2", "c3", "ce")
CASCADE_CAP_KEYS = ("c1", "c2", "c3", "ce")
POWER_FIGURE = {"R1": "p_r1", "R2": "p_r2", "RC": "p_rc", "RE": "p_re", "RE2": "p_re2", "R3": "p_r3",
                "R4": "p_r4", "RE3": "p_re3", "Q1": "p_q1", "Q2": "p_q2"}
CAP_FIGURE = {"C1": "v_c1", "C2": "v_c2", "C3": "v_c3", "CE": "v_ce"}


@dataclass(frozen=True)
class CascadeFigures:
    """Both operating points, mid-band figures, swing, power, capacitor voltages and corners.

    Fields are numpy arrays of the broadcast shape.  ``active``: both transistors active (the
    small-signal figures are 0, and the corners NaN, elsewhere).  ``swing_stage`` (1 or 2, 0 when
    not active) and ``swing_limit`` (dc.py's LIMIT_CUTOFF/LIMIT_SATURATION) name the limit that
    binds the symmetric peak into the load.  Corners are None until ``evaluate_cascade``.
    """

    vb1: np.ndarray
    ve1: np.ndarray
    vc1: np.ndarray
    ie1: np.ndarray
    ic1: np.ndarray
    ib1: np.ndarray
    vce1: np.ndarray
    state1: np.ndarray
    re1_small: np.ndarray
    vb2: np.ndarray
    ve2: np.ndarray
    ie2: np.ndarray
    ic2: np.ndarray
    ib2: np.ndarray
    vce2: np.ndarray
    state2: np.ndarray
    re2_small: np.ndarray
    active: np.ndarray
    rin: np.ndarray  # seen by the source at base 1 (C1 short), ohm
    rin2: np.ndarray  # the follower's input, bias included, loading collector 1
    rout: np.ndarray  # seen by the load, ohm
    gain: np.ndarray  # source EMF to load, signed
    gain1: np.ndarray  # base 1 to collector 1, loaded by the follower
    gain2: np.ndarray  # base 2 to the load
    swing_peak: np.ndarray
    swing_up: np.ndarray  # room at the load away from Q2's emitter rail, V
    swing_down: np.ndarray
    swing_stage: np.ndarray
    swing_limit: np.ndarray
    p_r1: np.ndarray
    p_r2: np.ndarray
    p_rc: np.ndarray
    p_re: np.ndarray
    p_re2: np.ndarray
    p_r3: np.ndarray
    p_r4: np.ndarray
    p_re3: np.ndarray
    p_q1: np.ndarray
    p_q2: np.ndarray
    v_c1: np.ndarray
    v_c2: np.ndarray
    v_c3: np.ndarray
    v_ce: np.ndarray
    inputs: Mapping[str, object]
    f_low: np.ndarray | None = None
    f_c1: np.ndarray | None = None
    f_c2: np.ndarray | None = None
    f_c3: np.ndarray | None = None
    f_ce: np.ndarray | None = None

    @property
    def shape(self) -> tuple[int, ...]:
        return self.ie1.shape


NUMERIC_FIELDS = tuple(f.name for f in fields(CascadeFigures)
                       if f.name not in ("inputs", "state1", "state2", "active", "swing_stage", "swing_limit"))


def _direct(vcc, ra, rb, rc, ret, re3, b1, b2, vbe1, vbe2, vces1, g2):
    """Q1's point with the follower's input conductance ``g2`` on its collector (mirrored volts).

    Returns (ib1, ic1, vc1, state1).  Q1 active: IB1 from its base loop, VC1 from the collector
    node (VCC − VC1)/RC = IC1 + g2·(VC1 − VBE2).  Q1 saturated: VCE1 = VCE(sat) and the base loop,
    the collector node and the follower give two linear equations in IB1, IC1.
    """
    vth = vcc * rb / (ra + rb)
    rth = parallel(ra, rb)
    ib = np.maximum(vth - vbe1, 0.0) / (rth + (b1 + 1.0) * ret)
    ic = b1 * ib
    vc = (vcc / rc - ic + vbe2 * g2) / (1.0 / rc + g2)
    cut = ib <= 0.0
    sat = ~cut & (vc - (ib + ic) * ret < vces1)
    k = 1.0 + rc * g2
    p = vcc - vces1 + rc * g2 * (vbe2 - vces1)
    q = vth - vbe1
    det = (rth + ret) * (rc + k * ret) - k * ret * ret
    with np.errstate(divide="ignore", invalid="ignore"):
        ib_s = (q * (rc + k * ret) - ret * p) / det
        ic_s = ((rth + ret) * p - k * ret * q) / det
    ib = np.where(sat, ib_s, ib)
    ic = np.where(sat, ic_s, ic)
    vc = np.where(sat, (ib + ic) * ret + vces1, vc)
    state = np.where(cut, CUTOFF, np.where(sat, SATURATED, ACTIVE)).astype(np.int8)
    return ib, ic, vc, state


def evaluate_cascade_dc(*, coupling: str, polarity: str = "npn", supply, r1, r2, rc, re, re2=0.0,
                        bypassed=False, r3=np.inf, r4=np.inf, re3, rs=0.0, rl=np.inf, hfe1, hfe2,
                        vbe1=VBE_DEFAULT, vbe2=VBE_DEFAULT, vce_sat1=VCE_SAT_DEFAULT,
                        vce_sat2=VCE_SAT_DEFAULT, temp_c=NOMINAL_TEMP_C, vbe_tempco1=VBE_TEMPCO,
                        vbe_tempco2=VBE_TEMPCO) -> CascadeFigures:
    """Operating points, mid-band gain and impedances, swing, power and capacitor voltages.

    ``r3``/``r4`` are ignored when ``coupling`` is 'direct'; ``bypassed``: CE shorts RE2 in the
    mid-band.  See the module docstring for conventions.
    """
    if coupling not in ("capacitor", "direct"):
        raise ValueError(f"coupling must be 'capacitor' or 'direct', not {coupling!r}")
    if polarity not in ("npn", "pnp"):
        raise ValueError(f"polarity must be 'npn' or 'pnp', not {polarity!r}")
    direct = coupling == "direct"
    arrs = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (
        supply, r1, r2, rc, re, re2, r3, r4, re3, rs, rl, hfe1, hfe2, vbe1, vbe2, vce_sat1, vce_sat2,
        temp_c, vbe_tempco1, vbe_tempco2)), np.asarray(bypassed, dtype=bool))
    (vcc, r1, r2, rc, re, re2, r3, r4, re3, rs, rl, b1, b2, vbe1, vbe2, vces1, vces2, temp, tc1, tc2,
     byp) = arrs
    vt = thermal_voltage(temp)
    ret = re + re2
    if not direct:
        common = dict(polarity=polarity, supply=vcc, temp_c=temp, rs=rs)
        s1 = evaluate_dc(topology=common_emitter.NAME, r1=r1, r2=r2, re=re, rc=rc, re2=re2, bypassed=byp,
                         hfe=b1, vbe=vbe1, vce_sat=vces1, vbe_tempco=tc1, **common)
        s2 = evaluate_dc(topology=follower.NAME, r1=r3, r2=r4, re=re3, rl=rl, hfe=b2, vbe=vbe2,
                         vce_sat=vces2, vbe_tempco=tc2, **common)
        vb1, ve1, vc1, ie1, ic1, ib1, vce1, state1 = (s1.vb, s1.ve, s1.vc, s1.ie, s1.ic, s1.ib, s1.vce, s1.state)
        vb2, ve2, ie2, ic2, ib2, vce2, state2 = (s2.vb, s2.ve, s2.ie, s2.ic, s2.ib, s2.vce, s2.state)
        rbias2 = parallel(r3, r4)
    else:
        ra, rb = (r1, r2) if polarity == "npn" else (r2, r1)
        vbe1_t = vbe1 + tc1 * (temp - NOMINAL_TEMP_C)
        vbe2_t = vbe2 + tc2 * (temp - NOMINAL_TEMP_C)
        g2 = 1.0 / ((b2 + 1.0) * re3)
        on = _direct(vcc, ra, rb, rc, ret, re3, b1, b2, vbe1_t, vbe2_t, vces1, g2)
        off = _direct(vcc, ra, rb, rc, ret, re3, b1, b2, vbe1_t, vbe2_t, vces1, 0.0 * g2)
        q2_on = on[2] > vbe2_t  # the follower conducts only with its base above one VBE
        ib1, ic1, vcm, state1 = (np.where(q2_on, a, b) for a, b in zip(on, off))
        state1 = state1.astype(np.int8)
        ie1 = ib1 + ic1
        vem1 = ie1 * ret
        vbm1 = np.where(state1 == CUTOFF, vcc * rb / (ra + rb), vcc * rb / (ra + rb) - ib1 * parallel(ra, rb))
        vce1 = vcm - vem1
        ie2 = np.where(q2_on, (vcm - vbe2_t) / re3, 0.0)
        ib2 = ie2 / (b2 + 1.0)
        ic2 = ie2 - ib2
        vem2 = np.where(q2_on, vcm - vbe2_t, 0.0)
        vce2 = vcc - vem2
        # VCE2 = VCC − VC1 + VBE2 ≥ VBE2: the follower saturates only if VBE2 < VCE(sat)
        state2 = np.where(~q2_on, CUTOFF, np.where(vce2 < vces2, SATURATED, ACTIVE)).astype(np.int8)
        if polarity == "npn":
            vb1, ve1, vc1, vb2, ve2 = vbm1, vem1, vcm, vcm, vem2
        else:
            vb1, ve1, vc1, vb2, ve2 = vcc - vbm1, vcc - vem1, vcc - vcm, vcc - vcm, vcc - vem2
        rbias2 = np.full(vcc.shape, np.inf)
    active = (state1 == ACTIVE) & (state2 == ACTIVE)

    # Mid-band small signal: Q1's collector is an ideal current source into RC ∥ rin2.
    with np.errstate(divide="ignore", invalid="ignore"):
        re1_s = np.where(ie1 > 0, vt / np.where(ie1 > 0, ie1, 1.0), np.inf)
        re2_s = np.where(ie2 > 0, vt / np.where(ie2 > 0, ie2, 1.0), np.inf)
    rbias1 = parallel(r1, r2)
    re_ac = np.where(byp, re, ret)
    rload_e2 = parallel(re3, rl)
    rin2 = parallel(rbias2, (b2 + 1.0) * (re2_s + rload_e2))
    zl1 = parallel(rc, rin2)
    rin_act = parallel(rbias1, (b1 + 1.0) * (re1_s + re_ac))
    rin = np.where(active, rin_act, rbias1)
    gain1 = np.where(active, -b1 / (b1 + 1.0) * zl1 / (re1_s + re_ac), 0.0)
    gain2 = np.where(active, rload_e2 / (re2_s + rload_e2), 0.0)
    gain = gain1 * gain2 * rin / (rs + rin)
    rout = np.where(active, parallel(re3, re2_s + parallel(rc, rbias2) / (b2 + 1.0)), re3)

    # Swing into the load (mirrored: "up" away from Q2's emitter rail).  A clipping level is a
    # large-signal figure: as in the single stages it takes VBE fixed, so the follower passes
    # collector 1's excursion one to one and loads it with (β2+1)·(RE3∥RL) (∥ R3∥R4), not
    # through re2 (which would understate the level by the follower's small-signal gain).
    zl1_ls = parallel(rc, parallel(rbias2, (b2 + 1.0) * rload_e2))
    up2 = vce2 - vces2  # Q2's emitter rises until VCE2 = VCE(sat)
    down2 = ie2 * rload_e2  # Q2's emitter current falls to zero
    # Q1's collector current falls to zero: with VBE fixed the output rises by IC1·Z, Z = RC ∥
    # R3∥R4 ∥ (β2+1)·(RE3∥RL).  At that peak Q2 carries IE2·(1 + x/down2) for an output rise x,
    # so its VBE has risen by VT·ln of that ratio (diode law), of which the share Z/Rsrc (Rsrc =
    # RC ∥ R3∥R4, the base's source) is taken off the output: x = IC1·Z − (Z/Rsrc)·VT·ln(1 +
    # x/down2), tens of mV into a heavy load.  Newton on [0, IC1·Z] (residual increasing, concave).
    rise = ic1 * zl1_ls
    share = zl1_ls / parallel(rc, rbias2)
    with np.errstate(divide="ignore", invalid="ignore"):
        d2 = np.where(down2 > 0, down2, np.inf)
        up1 = rise.copy()
        for _ in range(30):
            resid = up1 - rise + share * vt * np.log1p(up1 / d2)
            up1 = np.clip(up1 - resid / (1.0 + share * vt / (d2 + up1)), 0.0, rise)
    down1 = (vce1 - vces1) * zl1_ls / (zl1_ls + re_ac * (b1 + 1.0) / b1)  # VCE1 falls to VCE(sat)
    limits = np.stack(np.broadcast_arrays(down1, up1, down2, up2))  # stage 1 sat, cut; stage 2 cut, sat
    which = np.argmin(limits, axis=0)
    up = np.minimum(up1, up2)
    down = np.minimum(down1, down2)
    peak = np.where(active, np.maximum(np.minimum(up, down), 0.0), 0.0)
    swing_stage = np.where(active, np.where(which < 2, 1, 2), 0).astype(np.int8)
    limit_of = np.array([LIMIT_SATURATION, LIMIT_CUTOFF, LIMIT_CUTOFF, LIMIT_SATURATION], dtype=np.int8)
    swing_limit = np.where(active, limit_of[which], LIMIT_NONE).astype(np.int8)

    if polarity == "npn":
        vn = ie1 * re2
        v_ce = vn
    else:
        v_ce = -ie1 * re2
    r3_live = np.isfinite(r3) & (not direct)
    with np.errstate(invalid="ignore"):
        p_r3 = np.where(r3_live, (vcc - vb2) ** 2 / np.where(r3_live, r3, 1.0), 0.0)
        p_r4 = np.where(r3_live, vb2**2 / np.where(r3_live, r4, 1.0), 0.0)
    return CascadeFigures(
        vb1=vb1, ve1=ve1, vc1=vc1, ie1=ie1, ic1=ic1, ib1=ib1, vce1=vce1, state1=state1, re1_small=re1_s,
        vb2=vb2, ve2=ve2, ie2=ie2, ic2=ic2, ib2=ib2, vce2=vce2, state2=state2, re2_small=re2_s,
        active=active, rin=rin, rin2=rin2, rout=rout, gain=gain, gain1=gain1, gain2=gain2,
        swing_peak=peak, swing_up=up, swing_down=down, swing_stage=swing_stage, swing_limit=swing_limit,
        p_r1=(vcc - vb1) ** 2 / r1, p_r2=vb1**2 / r2, p_rc=(ic1 + (ib2 if direct else 0.0)) ** 2 * rc,
        p_re=ie1**2 * re, p_re2=ie1**2 * re2, p_r3=p_r3, p_r4=p_r4, p_re3=ie2**2 * re3,
        p_q1=vce1 * ic1 + np.abs(vb1 - ve1) * ib1, p_q2=vce2 * ic2 + np.abs(vb2 - ve2) * ib2,
        v_c1=vb1.copy(), v_c2=(vc1 - vb2) if not direct else np.zeros_like(vc1), v_c3=ve2.copy(), v_ce=v_ce,
        inputs=dict(coupling=coupling, polarity=polarity, rs=rs, rbias1=rbias1, rbias2=rbias2, re=re,
                    re2=re2, rc=rc, re3=re3, rl=rl, beta1=b1, beta2=b2, bypassed=byp),
    )


def _kernel_params(dc: CascadeFigures, c1, c2, c3, ce, take=None, shape=None) -> dict:
    """The constants of the transfer function, flat on ``take`` of ``shape`` when given."""
    inp = dc.inputs

    def arr(x):
        x = np.asarray(x, float)
        if take is None or x.ndim == 0:
            return x
        return np.broadcast_to(x, shape).reshape(-1)[take]

    b1, b2, rl = arr(inp["beta1"]), arr(inp["beta2"]), arr(inp["rl"])
    return dict(
        direct=inp["coupling"] == "direct", b1=b1, b2=b2,
        rpi1=(b1 + 1.0) * np.where(np.isfinite(arr(dc.re1_small)), arr(dc.re1_small), 1.0),
        rpi2=(b2 + 1.0) * np.where(np.isfinite(arr(dc.re2_small)), arr(dc.re2_small), 1.0),
        rs=arr(inp["rs"]), gb1=1.0 / arr(inp["rbias1"]), gb2=1.0 / arr(inp["rbias2"]),
        gl=np.where(np.isfinite(rl), 1.0 / np.where(np.isfinite(rl), rl, 1.0), 0.0),
        re=arr(inp["re"]), re2=arr(inp["re2"]), grc=1.0 / arr(inp["rc"]), gre3=1.0 / arr(inp["re3"]),
        c1=arr(c1), c2=arr(c2), c3=arr(c3), ce=arr(ce),
    )


def _h(k: dict, s):
    """Source-EMF-to-load transfer at complex frequency ``s`` (rad/s), impedance by impedance.

    Q2's emitter sees RE3 ∥ (C3 + RL); its base rπ2 + (β2+1)·Ze2, in parallel with R3 ∥ R4 when
    capacitor-coupled.  Q1's collector current β1·ib1 flows into RC ∥ (Z_C2 + Z_in2); C2 and
    Z_in2 divide the collector voltage onto base 2.  Q1's emitter sees RE + RE2 ∥ Z_CE; C1 and RS
    feed R1 ∥ R2 ∥ Zb1.
    """
    sc3 = s * k["c3"]
    y_out = sc3 * k["gl"] / (k["gl"] + sc3)
    div_out = sc3 / (k["gl"] + sc3)
    ye2 = k["gre3"] + y_out
    bp2 = k["b2"] + 1.0
    zb2 = k["rpi2"] + bp2 / ye2
    zin2 = 1.0 / (k["gb2"] + 1.0 / zb2)
    to_out2 = bp2 / (ye2 * k["rpi2"] + bp2)
    if k["direct"]:
        zbranch, onto_b2 = zin2, 1.0
    else:
        zbranch = 1.0 / (s * k["c2"]) + zin2
        onto_b2 = zin2 / zbranch
    zl1 = 1.0 / (k["grc"] + 1.0 / zbranch)
    ze1 = k["re"] + k["re2"] / (1.0 + s * k["ce"] * k["re2"])
    zb1 = k["rpi1"] + (k["b1"] + 1.0) * ze1
    zin1 = 1.0 / (k["gb1"] + 1.0 / zb1)
    front = zin1 / (k["rs"] + 1.0 / (s * k["c1"]) + zin1)
    return front * (-k["b1"] * zl1 / zb1) * onto_b2 * to_out2 * div_out


def cascade_transfer(dc: CascadeFigures, *, c1, c2=0.0, c3, ce=0.0, f) -> np.ndarray:
    """Complex source-to-load voltage transfer at frequencies ``f`` (Hz); 0 where not active."""
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        h = _h(_kernel_params(dc, c1, c2, c3, ce), 1j * TWO_PI * np.asarray(f, float))
        return np.where(dc.active, h, 0j)


class _Mag:
    """|H|² at x = ω², the form ``response._illinois`` asks for."""

    def __init__(self, k: dict):
        self.k = k

    def __call__(self, x):
        return np.abs(_h(self.k, 1j * np.sqrt(x))) ** 2


def _own_corners(dc: CascadeFigures, c1, c2, c3, ce):
    """Each capacitor's corner with the others short: C1 sees RS + rin, C2 RC + rin2, C3 rout + RL,
    CE RE2 ∥ (RE + re1 + (RS ∥ R1 ∥ R2)/(β1+1))."""
    inp = dc.inputs
    with np.errstate(divide="ignore", invalid="ignore"):
        f_c1 = 1.0 / (TWO_PI * c1 * (inp["rs"] + dc.rin))
        if inp["coupling"] == "direct":
            f_c2 = np.zeros(dc.shape)
        else:
            f_c2 = 1.0 / (TWO_PI * c2 * (inp["rc"] + dc.rin2))
        f_c3 = np.where(np.isfinite(inp["rl"]), 1.0 / (TWO_PI * c3 * (dc.rout + inp["rl"])), 0.0)
        rs_b = parallel(inp["rs"], inp["rbias1"])
        r_seen = parallel(inp["re2"], inp["re"] + dc.re1_small + rs_b / (inp["beta1"] + 1.0))
        f_ce = np.where((np.asarray(ce) > 0) & (inp["re2"] > 0), 1.0 / (TWO_PI * ce * r_seen), 0.0)
    shape = np.broadcast_shapes(*(np.shape(x) for x in (c1, c2, c3, ce)), dc.shape)
    return tuple(np.broadcast_to(x, shape) for x in (f_c1, f_c2, f_c3, f_ce))


def cascade_low_corner(dc: CascadeFigures, *, c1, c2=0.0, c3, ce=0.0, rtol: float = 1e-7) -> dict:
    """The whole-amplifier −3 dB low corner (Hz) and each capacitor's own, as a dict.

    The root of ln|H(f)|² = ln(|H_mid|²/2) in ln f, H the full transfer with every capacitor,
    bracketed as ``response.low_corner`` does (half the largest to twice the sum of the own
    corners, widened a thousandfold where that fails) and found by the same regula falsi.  NaN
    where not both transistors are active or the root is not bracketed.
    """
    c1, c2, c3, ce = (np.asarray(x, float) for x in (c1, c2, c3, ce))
    f_c1, f_c2, f_c3, f_ce = _own_corners(dc, c1, c2, c3, ce)
    shape = f_c1.shape
    own = np.stack([f_c1, f_c2, f_c3, f_ce])
    f_max = own.max(axis=0)
    f_sum = np.maximum(own.sum(axis=0), f_max)
    good = np.broadcast_to(dc.active, shape) & (f_max > 0) & np.isfinite(f_sum)
    take = np.flatnonzero(good)
    f_low = np.full(shape, np.nan)
    if take.size:
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            mag = _Mag(_kernel_params(dc, c1, c2, c3, ce, take, shape))
            gain = np.broadcast_to(dc.gain, shape).reshape(-1)[take]
            target = np.log(0.5) + 2.0 * np.log(np.abs(gain))
            fmax, fsum = f_max.reshape(-1)[take], f_sum.reshape(-1)[take]
            roots = _illinois(mag, target, np.log(0.5 * fmax), np.log(2.0 * fsum), rtol)
            missed = np.flatnonzero(np.isnan(roots))
            if missed.size:
                sub = _Mag(_kernel_params(dc, c1, c2, c3, ce, take[missed], shape))
                flat = own.reshape(4, -1)[:, take[missed]]
                fmin = np.min(np.where(flat > 0, flat, np.inf), axis=0)
                lo = np.minimum(1e-3 * fmax[missed], 1e-3 * fmin)
                roots[missed] = _illinois(sub, target[missed], np.log(lo), np.log(1e3 * fsum[missed]), rtol)
        f_low.reshape(-1)[take] = np.exp(roots)
    return dict(f_low=f_low, f_c1=f_c1, f_c2=f_c2, f_c3=f_c3, f_ce=f_ce)


def evaluate_cascade(*, c1, c2=0.0, c3, ce=0.0, bypassed=None, **kwargs) -> CascadeFigures:
    """``evaluate_cascade_dc`` and ``cascade_low_corner`` together; ``bypassed`` defaults to ce > 0."""
    if bypassed is None:
        bypassed = np.asarray(ce, float) > 0
    dc = evaluate_cascade_dc(bypassed=bypassed, **kwargs)
    corners = cascade_low_corner(dc, c1=c1, c2=c2, c3=c3, ce=ce)
    shape = corners["f_low"].shape
    if shape != dc.shape:
        dc = replace(dc, **{f.name: np.broadcast_to(getattr(dc, f.name), shape)
                            for f in fields(CascadeFigures) if f.name != "inputs" and getattr(dc, f.name) is not None})
    return replace(dc, **corners)


def cascade_arguments(circuit) -> dict:
    """Keyword arguments for ``evaluate_cascade`` at the nominal values of a ``TwoStage``."""
    q1, q2 = circuit.q1, circuit.q2
    direct = circuit.coupling == "direct"
    return dict(
        coupling=circuit.coupling, polarity=circuit.polarity, supply=circuit.supply,
        r1=circuit.value("R1"), r2=circuit.value("R2"), rc=circuit.value("RC"), re=circuit.value("RE"),
        re2=circuit.value("RE2"), r3=np.inf if direct else circuit.value("R3"),
        r4=np.inf if direct else circuit.value("R4"), re3=circuit.value("RE3"),
        c1=circuit.value("C1"), c2=0.0 if direct else circuit.value("C2"), c3=circuit.value("C3"),
        ce=circuit.value("CE") if circuit.bypassed else 0.0,
        rs=circuit.source_resistance, rl=np.inf if circuit.load is None else circuit.load,
        hfe1=q1.hfe, hfe2=q2.hfe, vbe1=q1.vbe, vbe2=q2.vbe, vce_sat1=q1.vce_sat, vce_sat2=q2.vce_sat,
        vbe_tempco1=q1.vbe_tempco, vbe_tempco2=q2.vbe_tempco,
    )


def cascade_netlist(circuit, *, temp_c: float = NOMINAL_TEMP_C, control: str | None = None,
                    title: str | None = None) -> str:
    """``stages.two_stage.netlist`` with the transistors tuned to this module's operating point."""
    from ..stages.two_stage import netlist

    kw = cascade_arguments(circuit)
    for key in CASCADE_CAP_KEYS:
        kw.pop(key)
    dc = evaluate_cascade_dc(bypassed=circuit.bypassed, temp_c=temp_c, **kw)
    operating = {"Q1": (float(dc.ic1), float(abs(dc.vb1 - dc.ve1))),
                 "Q2": (float(dc.ic2), float(abs(dc.vb2 - dc.ve2)))}
    caps = {role: float(getattr(dc, fig)) for role, fig in CAP_FIGURE.items()}
    return netlist(circuit, operating=operating, cap_voltages=caps, temp_c=temp_c, control=control,
                   title=title)


def _split(kw: dict):
    kw = dict(kw)
    caps = {k: kw.pop(k) for k in CASCADE_CAP_KEYS if k in kw}
    bypassed = kw.pop("bypassed", None)
    if bypassed is None:
        bypassed = np.asarray(caps.get("ce", 0.0), float) > 0
    return kw, caps, bypassed


def cascade_vertices(*, tolerances: Mapping[str, object], hfe1_min, hfe1_max, hfe2_min, hfe2_max,
                     temp_min=NOMINAL_TEMP_C, temp_max=NOMINAL_TEMP_C, **nominal):
    """(DC figures at every vertex of the tolerance box, with the vertices as a leading axis; the
    capacitors and ``bypassed`` split off the arguments): the box ``cascade_worst_case`` spans."""
    bad = set(tolerances) - set(CASCADE_TOLERANCE_KEYS)
    if bad:
        raise ValueError(f"no tolerance for {sorted(bad)}; use {CASCADE_TOLERANCE_KEYS}")
    base, caps, bypassed = _split(nominal)
    for key in ("hfe1", "hfe2", "temp_c"):
        base.pop(key, None)
    axes = []
    for key in CASCADE_TOLERANCE_KEYS:
        if key in CASCADE_CAP_KEYS or key not in base or key not in tolerances:
            continue
        tol, val = np.asarray(tolerances[key], float), np.asarray(base[key], float)
        if np.all(tol == 0) or not np.all(np.isfinite(val)):
            continue
        axes.append((key, val * (1.0 - tol), val * (1.0 + tol)))
    axes += [("hfe1", np.asarray(hfe1_min, float), np.asarray(hfe1_max, float)),
             ("hfe2", np.asarray(hfe2_min, float), np.asarray(hfe2_max, float))]
    if np.any(np.asarray(temp_min) != np.asarray(temp_max)):
        axes.append(("temp_c", np.asarray(temp_min, float), np.asarray(temp_max, float)))
    else:
        base["temp_c"] = temp_min
    n_vert = 2 ** len(axes)
    ndim = max([np.ndim(v) for v in base.values() if not isinstance(v, str)]
               + [np.ndim(lo) for _, lo, _ in axes] + [np.ndim(bypassed)] + [np.ndim(c) for c in caps.values()])
    bits = np.arange(n_vert).reshape((n_vert,) + (1,) * ndim)
    for i, (key, lo, hi) in enumerate(axes):
        base[key] = np.where((bits >> i) & 1, hi, lo)
    return evaluate_cascade_dc(bypassed=bypassed, **base), caps


def cascade_worst_case(*, tolerances: Mapping[str, object], hfe1_min, hfe1_max, hfe2_min, hfe2_max,
                       temp_min=NOMINAL_TEMP_C, temp_max=NOMINAL_TEMP_C, corner: bool = True, **nominal):
    """Lowest and highest figures over the tolerance box, as ``analysis.spread.WorstCase``.

    The approach of ``spread.worst_case``: every resistor with a tolerance at both ends of its
    band, both transistors' hFE at both ends of their ranges, the ambient at both ends, every
    combination; the vertices are one extra leading axis of a single vectorised call
    (``cascade_vertices``).  The capacitors are held at their low ends for the highest corners
    and at their high ends for the lowest (every corner falls as capacitance grows).  Exact for
    figures monotone in each parameter; for the others, the extremes over the vertices (see
    docs/method.md, Spread).
    """
    from .spread import WorstCase

    fig, caps = cascade_vertices(tolerances=tolerances, hfe1_min=hfe1_min, hfe1_max=hfe1_max, hfe2_min=hfe2_min,
                                 hfe2_max=hfe2_max, temp_min=temp_min, temp_max=temp_max, **nominal)
    n_vert = fig.ie1.shape[0]
    values = {name: getattr(fig, name) for name in NUMERIC_FIELDS if getattr(fig, name) is not None}
    if corner:
        c_low = {k: np.asarray(c, float) * (1.0 - np.asarray(tolerances.get(k, 0.0), float)) for k, c in caps.items()}
        c_high = {k: np.asarray(c, float) * (1.0 + np.asarray(tolerances.get(k, 0.0), float)) for k, c in caps.items()}
        hi_c = cascade_low_corner(fig, **c_low)
        lo_c = cascade_low_corner(fig, **c_high)
    low, high = {}, {}
    import warnings

    # a figure that is NaN at every vertex (no corner anywhere: not active) stays NaN, quietly
    with np.errstate(invalid="ignore"), warnings.catch_warnings():
        warnings.filterwarnings("ignore", "All-NaN slice encountered", RuntimeWarning)
        for name, val in values.items():
            val = np.broadcast_to(val, (n_vert,) + np.shape(val)[1:]) if np.ndim(val) else val
            low[name], high[name] = np.nanmin(val, axis=0), np.nanmax(val, axis=0)
        if corner:
            for name in hi_c:
                high[name] = np.nanmax(hi_c[name], axis=0)
                low[name] = np.nanmin(lo_c[name], axis=0)
    all_active = np.all(np.broadcast_to(fig.active, np.shape(fig.ie1)), axis=0)
    return WorstCase(low=low, high=high, all_active=all_active, vertices=n_vert)


def cascade_monte_carlo(n: int, *, seed: int, tolerances: Mapping[str, float], hfe1_min: float,
                        hfe1_max: float, hfe2_min: float, hfe2_max: float, temp_min: float = NOMINAL_TEMP_C,
                        temp_max: float = NOMINAL_TEMP_C, **nominal) -> CascadeFigures:
    """``n`` random builds of one nominal amplifier in one call, reproducible by ``seed``.

    As ``spread.monte_carlo``: parts uniform within ±their tolerance, each transistor's hFE
    log-uniform over its own range (independently), the ambient uniform over its range.
    """
    rng = np.random.default_rng(seed)
    kw = dict(nominal)
    for key in CASCADE_TOLERANCE_KEYS:
        if key in kw and key in tolerances and float(tolerances[key]) > 0 and np.isfinite(kw[key]):
            tol = float(tolerances[key])
            kw[key] = float(kw[key]) * (1.0 + rng.uniform(-tol, tol, n))
    for name, lo, hi in (("hfe1", hfe1_min, hfe1_max), ("hfe2", hfe2_min, hfe2_max)):
        lo, hi = float(lo), float(hi)
        kw[name] = np.exp(rng.uniform(np.log(lo), np.log(hi), n)) if hi > lo else np.full(n, lo)
    kw["temp_c"] = rng.uniform(temp_min, temp_max, n) if temp_max > temp_min else np.full(n, float(temp_min))
    return evaluate_cascade(**kw)
