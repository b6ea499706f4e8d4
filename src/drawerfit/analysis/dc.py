"""The DC operating point of one-transistor stages, with mid-band small signal, swing and power.

``evaluate_dc`` scores a batch of stages at once: every numeric keyword argument is a float or a
numpy array, broadcast together.  ``analysis.core`` documents the engine as a whole.

Units are SI base units: ohm, farad, volt, ampere, watt, hertz, and °C for temperatures.
Conventions:

* ``rl = np.inf`` means no load; ``rs = 0`` an ideal source; ``re2 = 0`` no second emitter
  resistor; ``ce = 0`` no bypass capacitor.  A circuit without them (its module's ``dc_inputs``)
  ignores ``rc`` and ``re2``.  The circuit's module supplies the parts of the kernel particular
  to it (small signal, swing, the collector node); this module the divider and the DC solution.
* Node voltages (``vb``, ``ve``, ``vc``) are to ground for both polarities.  Currents (``ie``,
  ``ic``, ``ib``) and ``vce`` are magnitudes (``vce`` is VEC for a PNP stage), positive when the
  transistor conducts.  The PNP stage is the mirror image on the same positive supply: it is
  solved as the NPN stage in voltages measured down from the supply, with R1 and R2 swapped.
* Capacitor DC voltages (``v_c1``, ``v_c2``, ``v_ce``) are signed: the voltage of the stage-side
  end minus the other end (C1: base minus source; C2: emitter or collector minus load; CE: the
  RE/RE2 junction minus the rail RE2 returns to).  Positive means a polarized capacitor's + end
  goes to the stage side.  Source and load are taken as ground-referenced at DC.
* ``state``: ``ACTIVE`` (0), ``SATURATED`` (1), ``CUTOFF`` (2).  Outside the active region the
  small-signal figures have no meaning; ``gain`` and ``swing_peak`` are 0 there and ``rin`` is
  the divider alone.
* ``swing_limit``: ``LIMIT_CUTOFF`` (0) or ``LIMIT_SATURATION`` (1), whichever bounds the
  symmetric peak; ``LIMIT_NONE`` (-1) outside the active region.  ``swing_up`` is the room at
  the output away from the emitter's rail (upward for NPN, downward for PNP), ``swing_down``
  toward it; ``swing_peak`` = max(0, min of the two) when active.
* Powers ``p_r1``, ``p_r2``, ``p_re``, ``p_rc``, ``p_re2``, ``p_q`` are quiescent, in W.

Model: Ebers-Moll transistor without Early effect, base resistance or junction capacitance;
IC = hFE·IB; VBE fixed (``vbe`` at 25 °C) or, when ``i_sat`` is given, from the diode law
IC = IS·(exp(VBE/VT) − 1) at 25 °C; either way VBE drifts by ``vbe_tempco`` per °C away from
25 °C.  Small signal: re = VT/IE at ``temp_c``, rπ = (β+1)·re, gm = IC/VT.  The high-frequency
end is out of scope.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

import numpy as np

from ..constants import NOMINAL_TEMP_C, VBE_DEFAULT, VBE_TEMPCO, VCE_SAT_DEFAULT, thermal_voltage
from ..stages.kernels import parallel
from ..stages.topologies import CIRCUITS, TOPOLOGIES, topology_module

__all__ = ["ACTIVE", "SATURATED", "CUTOFF", "STATE_NAMES", "LIMIT_NONE", "LIMIT_CUTOFF", "LIMIT_SATURATION",
           "LIMIT_NAMES", "TOPOLOGIES", "POLARITIES", "DCFigures", "evaluate_dc", "parallel", "POWER_FIGURE",
           "CAP_FIGURE"]

ACTIVE, SATURATED, CUTOFF = 0, 1, 2
STATE_NAMES = {ACTIVE: "active", SATURATED: "saturated", CUTOFF: "cut-off"}
LIMIT_NONE, LIMIT_CUTOFF, LIMIT_SATURATION = -1, 0, 1
LIMIT_NAMES = {LIMIT_NONE: "none", LIMIT_CUTOFF: "cut-off", LIMIT_SATURATION: "saturation"}
POLARITIES = ("npn", "pnp")
# The figure of each role over every circuit (each circuit module holds its own): the power a
# resistor dissipates, the DC voltage across a capacitor.
POWER_FIGURE = {r: a for m in CIRCUITS for r, a in m.POWER_FIGURE.items()}
CAP_FIGURE = {r: a for m in CIRCUITS for r, a in m.CAP_FIGURE.items()}


@dataclass(frozen=True)
class DCFigures:
    """Operating point, mid-band small signal, swing and power of a batch of stages.

    Every field is a numpy array of the broadcast shape of the inputs.  ``inputs`` keeps the
    broadcast parameters (mirrored for PNP) that ``low_corner`` needs.
    """

    vb: np.ndarray
    ve: np.ndarray
    vc: np.ndarray
    ie: np.ndarray
    ic: np.ndarray
    ib: np.ndarray
    vce: np.ndarray
    vbe: np.ndarray
    state: np.ndarray
    re_small: np.ndarray  # re = VT/IE, ohm
    rin: np.ndarray  # seen by the source, ohm
    rout: np.ndarray  # seen by the load, ohm
    gain: np.ndarray  # source EMF to load, signed
    gain_base: np.ndarray  # base to load, signed
    swing_peak: np.ndarray  # largest symmetric undistorted peak into the load, V
    swing_up: np.ndarray  # room before the limit on the side away from the emitter rail, V
    swing_down: np.ndarray
    swing_limit: np.ndarray
    p_r1: np.ndarray
    p_r2: np.ndarray
    p_re: np.ndarray
    p_rc: np.ndarray
    p_re2: np.ndarray
    p_q: np.ndarray
    v_c1: np.ndarray
    v_c2: np.ndarray
    v_ce: np.ndarray
    inputs: Mapping[str, object]

    @property
    def shape(self) -> tuple[int, ...]:
        return self.ie.shape




def _check_names(topology: str, polarity: str) -> None:
    if topology not in TOPOLOGIES:
        raise ValueError(f"topology must be one of {TOPOLOGIES}, not {topology!r}")
    if polarity not in POLARITIES:
        raise ValueError(f"polarity must be one of {POLARITIES}, not {polarity!r}")


def _solve_vbe_diode(vth, rden, alpha, i_sat, vt25, drift):
    """VBE with IC = IS·(exp((VBE−drift)/VT25) − 1) on the divider's load line.

    Newton on u = VTH − VBE (so IE = u/rden), h(u) = VTH − u − drift − VT·ln(α·u/(rden·IS) + 1),
    which is convex and decreasing in u; a fixed number of steps, clipped to u > 0.
    """
    u = np.maximum(vth - drift - VBE_DEFAULT, 1e-3 * np.maximum(vth, 1e-9))
    k = rden * i_sat / alpha
    for _ in range(40):
        h = vth - u - drift - vt25 * np.log1p(u / k)
        dh = -1.0 - vt25 / (u + k)
        u_new = u - h / dh
        u = np.where(u_new > 0, u_new, 0.5 * u)
    return vth - u


def evaluate_dc(
    *,
    topology: str,
    polarity: str = "npn",
    supply,
    r1,
    r2,
    re,
    rc=0.0,
    re2=0.0,
    bypassed=False,
    rs=0.0,
    rl=np.inf,
    hfe,
    vbe=VBE_DEFAULT,
    vce_sat=VCE_SAT_DEFAULT,
    temp_c=NOMINAL_TEMP_C,
    vbe_tempco=VBE_TEMPCO,
    i_sat=None,
) -> DCFigures:
    """DC point, mid-band small-signal figures, swing and power for a batch of stages.

    ``vbe`` is VBE at 25 °C (ignored when ``i_sat``, the transistor's saturation current in A,
    is given); ``temp_c`` the ambient in °C.  See the module docstring for conventions.
    """
    _check_names(topology, polarity)
    circuit = topology_module(topology)
    arrs = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (
            supply, r1, r2, re, rc, re2, rs, rl, hfe, vbe, vce_sat, temp_c, vbe_tempco,
            np.nan if i_sat is None else i_sat,
        )),
        np.asarray(bypassed, dtype=bool),
    )
    vcc, r1, r2, re, rc, re2, rs, rl, beta, vbe0, vces, temp, tempco, isat, byp = arrs
    rc, re2, byp = circuit.dc_inputs(rc, re2, byp)
    # PNP: the NPN stage in voltages measured down from the supply; the divider's roles swap.
    ra, rb = (r1, r2) if polarity == "npn" else (r2, r1)

    vt = thermal_voltage(temp)
    vt25 = thermal_voltage(NOMINAL_TEMP_C)
    drift = tempco * (temp - NOMINAL_TEMP_C)
    rth = parallel(ra, rb)
    vth = vcc * rb / (ra + rb)
    ret = re + re2  # DC emitter resistance
    alpha = beta / (beta + 1.0)
    rden = rth / (beta + 1.0) + ret
    if i_sat is None:
        vbe_t = vbe0 + drift
    else:
        vbe_t = np.where(
            vth - drift > 0, _solve_vbe_diode(vth, rden, alpha, isat, vt25, drift), vbe0 + drift
        )

    # Active region.
    ib = np.maximum(vth - vbe_t, 0.0) / (rth + (beta + 1.0) * ret)
    ic = beta * ib
    ie = ib + ic
    vem = ie * ret
    vcm = vcc - ic * rc
    cutoff = ib <= 0.0
    saturated = (~cutoff) & (vcm - vem < vces)
    # Saturated: VCE = VCE(sat), VBE = vbe; two loop equations in IB and IC.
    det = (rc + ret) * (rth + ret) - ret * ret
    with np.errstate(divide="ignore", invalid="ignore"):
        ic_s = ((vcc - vces) * (rth + ret) - ret * (vth - vbe_t)) / det
        ib_s = ((vth - vbe_t) * (rc + ret) - ret * (vcc - vces)) / det
    ib = np.where(saturated, ib_s, ib)
    ic = np.where(saturated, ic_s, ic)
    ie = ib + ic
    vem = ie * ret
    vcm = np.where(saturated, vem + vces, vcc - ic * rc)
    vbm = np.where(cutoff, vth, vth - ib * rth)
    vce = vcm - vem
    state = np.where(cutoff, CUTOFF, np.where(saturated, SATURATED, ACTIVE)).astype(np.int8)
    active = state == ACTIVE

    # Mid-band small signal (the same for both polarities).
    with np.errstate(divide="ignore"):
        re_s = np.where(ie > 0, vt / np.where(ie > 0, ie, 1.0), np.inf)
    rbias = parallel(ra, rb)
    q = dict(vcc=vcc, re=re, re2=re2, rc=rc, rs=rs, rl=rl, rbias=rbias, byp=byp, beta=beta,
             alpha=alpha, re_s=re_s, ie=ie, ic=ic, vce=vce, vces=vces, vem=vem, polarity=polarity)
    re_ac, zb, gain_base, rout = circuit.small_signal(q)
    rin_act = parallel(rbias, zb)
    rin = np.where(active, rin_act, rbias)
    gain = np.where(active, gain_base * rin / (rs + rin), 0.0)
    gain_base = np.where(active, gain_base, 0.0)

    # Swing, in mirrored coordinates: "up" is away from the emitter rail.
    q["re_ac"] = re_ac
    up, down, saturation_binds = circuit.swing(q)
    limit = np.where(saturation_binds, LIMIT_SATURATION, LIMIT_CUTOFF)
    peak = np.where(active, np.maximum(np.minimum(up, down), 0.0), 0.0)
    limit = np.where(active, limit, LIMIT_NONE).astype(np.int8)

    # Back to voltages to ground.
    if polarity == "npn":
        vb, ve, vc = vbm, vem, vcm
        vn = ie * re2  # RE/RE2 junction
        v_ce = vn
    else:
        vb, ve, vc = vcc - vbm, vcc - vem, vcc - vcm
        vn = vcc - ie * re2
        v_ce = vn - vcc
    vc, v_ce, v_c2 = circuit.dc_nodes(dict(q, vc=vc, ve=ve, v_ce=v_ce))
    p_r1 = (vcc - vb) ** 2 / r1
    p_r2 = vb**2 / r2
    p_q = vce * ic + np.abs(vb - ve) * ib
    dc = DCFigures(
        vb=vb, ve=ve, vc=vc, ie=ie, ic=ic, ib=ib, vce=vce, vbe=np.abs(vb - ve), state=state,
        re_small=re_s, rin=rin, rout=rout, gain=gain, gain_base=gain_base,
        swing_peak=peak, swing_up=up, swing_down=down, swing_limit=limit,
        p_r1=p_r1, p_r2=p_r2, p_re=ie**2 * re, p_rc=ic**2 * rc, p_re2=ie**2 * re2, p_q=p_q,
        v_c1=vb.copy(), v_c2=v_c2, v_ce=v_ce,
        inputs=dict(
            topology=topology, polarity=polarity, rs=rs, rbias=rbias, re=re, re2=re2, rc=rc,
            rl=rl, beta=beta, bypassed=byp,
        ),
    )
    return dc
