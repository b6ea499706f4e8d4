"""Vectorised figures of one-transistor stages: DC point, mid-band small signal, swing, corners.

Every numeric keyword argument is a float or a numpy array; they are broadcast together, so one
call scores one stage or a million candidates.  There is no Python loop over candidates (the
only loops are fixed-length iterations of the root finders and, in ``worst_case``, over the
vertices of the tolerance box).  ``topology`` and ``polarity`` are plain strings, the same for
the whole batch.

API (stable; callers such as the optimizer build on it)
-------------------------------------------------------
``evaluate_dc(*, topology, polarity="npn", supply, r1, r2, re, rc=0, re2=0, bypassed=False,
rs=0, rl=inf, hfe, vbe=0.65, vce_sat=0.2, temp_c=25, vbe_tempco=-2e-3, i_sat=None) -> DCFigures``
    Operating point, mid-band small signal, swing, power, capacitor DC voltages; no capacitances
    needed.  ``bypassed`` says whether RE2 is shorted by CE in the mid-band.
``low_corner(dc, *, c1, c2, ce=0) -> Corners``
    The whole-stage -3 dB low corner from the full small-signal transfer function (every
    capacitor in it) and each capacitor's own corner.
``meets_corner(dc, *, c1, c2, ce=0, f_target) -> bool array``
    Whether the whole-stage corner is at or below ``f_target``: one transfer evaluation, no
    root search (|H| rises monotonically with f), for filtering large batches.
``evaluate(*, ..., c1, c2, ce=0, bypassed=None) -> Figures``
    Both of the above; ``bypassed`` defaults to ``ce > 0``.
``transfer(dc, *, c1, c2, ce=0, f) -> complex array``
    Source-to-load voltage transfer at frequencies ``f`` (Hz), broadcast against the stage.
``worst_case(*, tolerances, hfe_min, hfe_max, temp_min, temp_max, corner=True, f_target=None,
names=None, **nominal) -> WorstCase``
    Lowest and highest of every figure over the corners of the tolerance box (``f_target``:
    also whether the corner meets it at every vertex).
``worst_case_by_signs(*, tolerances, ..., names, corner=False, f_target=None, **nominal)``
    The same from (k + 1) + 2·figures evaluations, choosing each figure's extreme vertex from
    the signs of its changes at the centre of the box: for searches over many candidates.
``monte_carlo(n, *, seed, tolerances, hfe_min, hfe_max, temp_min, temp_max, **nominal) -> Figures``
    ``n`` seeded random builds of one nominal stage, evaluated in one vectorised call.

Units are SI base units: ohm, farad, volt, ampere, watt, hertz, and °C for temperatures.
Conventions:

* ``rl = np.inf`` means no load; ``rs = 0`` an ideal source; ``re2 = 0`` no second emitter
  resistor; ``ce = 0`` no bypass capacitor.  ``rc`` and ``re2`` are ignored by the follower.
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

from dataclasses import dataclass, fields
from typing import Mapping

import numpy as np

from ..constants import NOMINAL_TEMP_C, VBE_DEFAULT, VBE_TEMPCO, VCE_SAT_DEFAULT, thermal_voltage

__all__ = [
    "ACTIVE", "SATURATED", "CUTOFF", "STATE_NAMES",
    "LIMIT_NONE", "LIMIT_CUTOFF", "LIMIT_SATURATION", "LIMIT_NAMES",
    "TOPOLOGIES", "POLARITIES",
    "DCFigures", "Corners", "Figures", "WorstCase",
    "evaluate_dc", "low_corner", "meets_corner", "evaluate", "transfer", "worst_case",
    "worst_case_by_signs", "monte_carlo",
    "TOLERANCE_KEYS",
]

ACTIVE, SATURATED, CUTOFF = 0, 1, 2
STATE_NAMES = {ACTIVE: "active", SATURATED: "saturated", CUTOFF: "cut-off"}
LIMIT_NONE, LIMIT_CUTOFF, LIMIT_SATURATION = -1, 0, 1
LIMIT_NAMES = {LIMIT_NONE: "none", LIMIT_CUTOFF: "cut-off", LIMIT_SATURATION: "saturation"}
TOPOLOGIES = ("emitter-follower", "common-emitter")
POLARITIES = ("npn", "pnp")

_TWO_PI = 2.0 * np.pi


def _par(a, b):
    """a ∥ b for positive resistances, with inf meaning open and 0 meaning short."""
    with np.errstate(divide="ignore", invalid="ignore"):
        out = 1.0 / (1.0 / a + 1.0 / b)
    return np.where(np.isinf(a), b, np.where(np.isinf(b), a, out))


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


@dataclass(frozen=True)
class Corners:
    """Low-frequency corners, Hz: the whole stage and each capacitor on its own (0 if absent)."""

    f_low: np.ndarray
    f_c1: np.ndarray
    f_c2: np.ndarray
    f_ce: np.ndarray


@dataclass(frozen=True)
class Figures(DCFigures):
    """``DCFigures`` plus the low-frequency corners."""

    f_low: np.ndarray = None  # type: ignore[assignment]
    f_c1: np.ndarray = None  # type: ignore[assignment]
    f_c2: np.ndarray = None  # type: ignore[assignment]
    f_ce: np.ndarray = None  # type: ignore[assignment]

    @property
    def ok_active(self) -> np.ndarray:
        return self.state == ACTIVE


# Figures that are numbers one may take the lowest and highest of.
NUMERIC_FIELDS = tuple(
    f.name for f in fields(Figures) if f.name not in ("inputs", "state", "swing_limit")
)


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
    follower = topology == "emitter-follower"
    arrs = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (
            supply, r1, r2, re, rc, re2, rs, rl, hfe, vbe, vce_sat, temp_c, vbe_tempco,
            np.nan if i_sat is None else i_sat,
        )),
        np.asarray(bypassed, dtype=bool),
    )
    vcc, r1, r2, re, rc, re2, rs, rl, beta, vbe0, vces, temp, tempco, isat, byp = arrs
    if follower:
        rc = np.zeros_like(rc)
        re2 = np.zeros_like(re2)
        byp = np.zeros_like(byp)
    # PNP: the NPN stage in voltages measured down from the supply; the divider's roles swap.
    ra, rb = (r1, r2) if polarity == "npn" else (r2, r1)

    vt = thermal_voltage(temp)
    vt25 = thermal_voltage(NOMINAL_TEMP_C)
    drift = tempco * (temp - NOMINAL_TEMP_C)
    rth = _par(ra, rb)
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
    rbias = _par(ra, rb)
    re_ac = np.where(byp, re, re + re2) if not follower else re
    if follower:
        rload_e = _par(re, rl)
        zb = (beta + 1.0) * (re_s + rload_e)
        gain_base = rload_e / (re_s + rload_e)
        rs_b = _par(rs, rbias)
        rout = _par(re, re_s + rs_b / (beta + 1.0))
    else:
        rload_c = _par(rc, rl)
        zb = (beta + 1.0) * (re_s + re_ac)
        gain_base = -alpha * rload_c / (re_s + re_ac)
        rout = rc.copy()
    rin_act = _par(rbias, zb)
    rin = np.where(active, rin_act, rbias)
    gain = np.where(active, gain_base * rin / (rs + rin), 0.0)
    gain_base = np.where(active, gain_base, 0.0)

    # Swing, in mirrored coordinates: "up" is away from the emitter rail.
    if follower:
        up = vcc - vces - vem  # emitter rises until VCE = VCE(sat)
        down = ie * _par(re, rl)  # emitter current falls to zero (cut-off)
        limit = np.where(up < down, LIMIT_SATURATION, LIMIT_CUTOFF)
    else:
        rload_c = _par(rc, rl)
        up = ic * rload_c  # collector current falls to zero (cut-off)
        down = (vce - vces) * rload_c / (rload_c + re_ac / alpha)  # VCE falls to VCE(sat)
        limit = np.where(down < up, LIMIT_SATURATION, LIMIT_CUTOFF)
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
    if follower:
        vc = vcc.copy() if polarity == "npn" else np.zeros_like(vcc)
        v_ce = np.zeros_like(v_ce)
    p_r1 = (vcc - vb) ** 2 / r1
    p_r2 = vb**2 / r2
    p_q = vce * ic + np.abs(vb - ve) * ib
    dc = DCFigures(
        vb=vb, ve=ve, vc=vc, ie=ie, ic=ic, ib=ib, vce=vce, vbe=np.abs(vb - ve), state=state,
        re_small=re_s, rin=rin, rout=rout, gain=gain, gain_base=gain_base,
        swing_peak=peak, swing_up=up, swing_down=down, swing_limit=limit,
        p_r1=p_r1, p_r2=p_r2, p_re=ie**2 * re, p_rc=ic**2 * rc, p_re2=ie**2 * re2, p_q=p_q,
        v_c1=vb.copy(), v_c2=(ve if follower else vc).copy(), v_ce=v_ce,
        inputs=dict(
            topology=topology, polarity=polarity, rs=rs, rbias=rbias, re=re, re2=re2, rc=rc,
            rl=rl, beta=beta, bypassed=byp,
        ),
    )
    return dc


class _Kernel:
    """Per-stage constants of the low-frequency transfer function, computed once per batch.

    The transfer is found by impedance reduction, exact for the small-signal model (hybrid-π
    without Early effect: the collector is an ideal current source β·ib).  The load enters as a
    conductance (0 for no load) so that no infinities reach the complex arithmetic.
    """

    def __init__(self, dc: DCFigures, c1, c2, ce):
        inp = dc.inputs
        self.follower = inp["topology"] == "emitter-follower"
        self.active = dc.state == ACTIVE
        beta = inp["beta"]
        self.bp1 = beta + 1.0
        self.beta = beta
        self.rpi = np.where(self.active, (beta + 1.0) * dc.re_small, 1.0)
        self.rs = inp["rs"]
        self.gb = 1.0 / inp["rbias"]
        rl = inp["rl"]
        self.gl = np.where(np.isfinite(rl), 1.0 / np.where(np.isfinite(rl), rl, 1.0), 0.0)
        self.c1 = np.asarray(c1, float)
        self.c2 = np.asarray(c2, float)
        self.gre = 1.0 / inp["re"]
        if not self.follower:
            self.re = inp["re"]
            self.re2 = inp["re2"]
            self.ce = np.asarray(ce, float)
            self.grc = 1.0 / inp["rc"]

    def subset(self, shape, take) -> "_Kernel":
        """The same kernel on the flat indices ``take`` of the broadcast ``shape`` only."""
        out = object.__new__(_Kernel)
        for name, val in vars(self).items():
            if isinstance(val, np.ndarray) and val.ndim > 0:
                val = np.broadcast_to(val, shape).reshape(-1)[take]
            setattr(out, name, val)
        return out

    def __call__(self, f):
        s = 1j * _TWO_PI * f
        sc2 = s * self.c2
        y_out = sc2 * self.gl / (self.gl + sc2)  # admittance of C2 in series with the load
        div_out = sc2 / (self.gl + sc2)  # load voltage over stage-node voltage
        if self.follower:
            ye = self.gre + y_out
            zb = self.rpi + self.bp1 / ye
            to_out = self.bp1 / (ye * self.rpi + self.bp1)  # ve / vb
        else:
            ze = self.re + self.re2 / (1.0 + s * self.ce * self.re2)
            zb = self.rpi + self.bp1 * ze
            to_out = -self.beta / (zb * (self.grc + y_out))  # vc / vb
        zin_b = 1.0 / (self.gb + 1.0 / zb)
        h = zin_b / (self.rs + 1.0 / (s * self.c1) + zin_b) * to_out * div_out
        return np.where(self.active, h, 0j)


def transfer(dc: DCFigures, *, c1, c2, ce=0.0, f) -> np.ndarray:
    """Complex source-to-load voltage transfer of the stages at frequencies ``f`` (Hz)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return _Kernel(dc, c1, c2, ce)(np.asarray(f, float))


def _own_corners(dc: DCFigures, c1, c2, ce):
    inp = dc.inputs
    with np.errstate(divide="ignore", invalid="ignore"):
        f_c1 = 1.0 / (_TWO_PI * c1 * (inp["rs"] + dc.rin))
        f_c2 = np.where(np.isfinite(inp["rl"]), 1.0 / (_TWO_PI * c2 * (dc.rout + inp["rl"])), 0.0)
        if inp["topology"] == "common-emitter":
            rs_b = _par(inp["rs"], inp["rbias"])
            r_seen = _par(inp["re2"], inp["re"] + dc.re_small + rs_b / (inp["beta"] + 1.0))
            f_ce = np.where((ce > 0) & (inp["re2"] > 0), 1.0 / (_TWO_PI * ce * r_seen), 0.0)
        else:
            f_ce = np.zeros(np.broadcast_shapes(np.shape(c1), dc.shape))
    shape = np.broadcast_shapes(np.shape(c1), np.shape(c2), np.shape(ce), dc.shape)
    return (np.broadcast_to(f_c1, shape), np.broadcast_to(f_c2, shape),
            np.broadcast_to(f_ce, shape))


class _Magnitude:
    """|H(f)|² of the stage as a ratio of real polynomials in x = ω², factored, per candidate.

    From the same circuit as ``_Kernel``, multiplied through by the capacitor admittances:

    follower:        H = (β+1)·C1·C2·s² / (q0 + q1·s + q2·s²)
    common emitter:  H = −β·C1·C2·s²·(1 + s·CE·RE2) / ((p0 + p1·s + p2·s²)·(o0 + o1·s))

    so |H|² = N(x)/D(x) with N, D products of small real factors (no complex arithmetic, and
    no expanded polynomial whose terms could cancel).  Used by the corner search, which
    evaluates it many times; ``transfer`` keeps the complex form.
    """

    def __init__(self, dc: DCFigures, c1, c2, ce, take=None, shape=None):
        inp = dc.inputs
        self.follower = inp["topology"] == "emitter-follower"

        def arr(x):
            x = np.asarray(x, float)
            if take is None or x.ndim == 0:
                return x
            return np.broadcast_to(x, shape).reshape(-1)[take]

        beta, rs, rbias, re, rl = (arr(inp[k]) for k in ("beta", "rs", "rbias", "re", "rl"))
        c1, c2 = arr(c1), arr(c2)
        rpi = (beta + 1.0) * arr(dc.re_small)
        gb = 1.0 / rbias
        gl = np.where(np.isfinite(rl), 1.0 / np.where(np.isfinite(rl), rl, 1.0), 0.0)
        if self.follower:
            gre = 1.0 / re
            a0, a1 = gre * gl, c2 * (gre + gl)  # (emitter admittance)·(gl + s·C2)
            d0, d1 = rpi * a0 + (beta + 1.0) * gl, rpi * a1 + (beta + 1.0) * c2
            e0, e1 = gb * d0 + a0, gb * d1 + a1
            self.q0 = e0
            self.q1 = c1 * d0 + e1 + c1 * rs * e0
            self.q2 = c1 * d1 + c1 * rs * e1
            self.k = ((beta + 1.0) * c1 * c2) ** 2
        else:
            re2, grc, ce = arr(inp["re2"]), 1.0 / arr(inp["rc"]), arr(ce)
            tau = ce * re2  # CE·RE2 (0 without bypass)
            b0 = rpi + (beta + 1.0) * (re + re2)
            b1 = tau * (rpi + (beta + 1.0) * re)
            u0, u1 = gb * b0 + 1.0, gb * b1 + tau
            self.q0 = u0
            self.q1 = c1 * b0 + u1 + c1 * rs * u0
            self.q2 = c1 * b1 + c1 * rs * u1
            self.o0, self.o1 = grc * gl, c2 * (grc + gl)
            self.tau2 = tau**2
            self.k = (beta * c1 * c2) ** 2

    def __call__(self, x):
        """|H|² at x = ω² (rad²/s²)."""
        den = (self.q0 - self.q2 * x) ** 2 + self.q1**2 * x
        if self.follower:
            return self.k * x * x / den
        return self.k * x * x * (1.0 + self.tau2 * x) / (den * (self.o0**2 + self.o1**2 * x))


def low_corner(dc: DCFigures, *, c1, c2, ce=0.0, rtol: float = 1e-7) -> Corners:
    """Whole-stage −3 dB low corner and each capacitor's own corner, Hz.

    The corner is where |H(f)|² falls to half its mid-band value, H the full transfer function
    with every capacitor (not a sum of poles).  |H| rises monotonically with f for these
    high-pass networks, so the root of g(t) = ln|H(e^t)|² − ln(|H_mid|²/2) is bracketed in
    t = ln f and found by the Illinois variant of regula falsi, all candidates at once, to a
    relative error of about ``rtol`` in f; |H|² is evaluated as a ratio of real polynomial
    factors (``_Magnitude``).  The bracket is [max/2, 2·sum] of the capacitors' own corners
    (where the stage corner lies in practice), widened to [min(max, smallest)/1e3, 1e3·sum] for
    any candidate it does not bracket (a small bypass capacitor only shelves the gain, and the
    stage corner then lies far below its own).  Only active candidates are computed.  Stages outside the active
    region, or whose root is not in the wide bracket, get NaN.
    """
    c1 = np.asarray(c1, float)
    c2 = np.asarray(c2, float)
    ce = np.asarray(ce, float)
    f_c1, f_c2, f_ce = _own_corners(dc, c1, c2, ce)
    shape = f_c1.shape
    active = np.broadcast_to(dc.state == ACTIVE, shape)
    f_max = np.maximum(np.maximum(f_c1, f_c2), f_ce)
    f_sum = np.maximum(f_c1 + f_c2 + f_ce, f_max)
    good = active & (f_max > 0) & np.isfinite(f_sum)
    take = np.flatnonzero(good)
    f_low = np.full(shape, np.nan)
    if take.size:
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            mag = _Magnitude(dc, c1, c2, ce, take, shape)
            gain = np.broadcast_to(dc.gain, shape).reshape(-1)[take]
            log_target = np.log(0.5) + 2.0 * np.log(np.abs(gain))
            fmax = f_max.reshape(-1)[take]
            fsum = f_sum.reshape(-1)[take]
            roots = _illinois(mag, log_target, np.log(0.5 * fmax), np.log(2.0 * fsum), rtol)
            missed = np.flatnonzero(np.isnan(roots))
            if missed.size:
                sub = _Magnitude(dc, c1, c2, ce, take[missed], shape)
                # a capacitor that only shelves the gain (a small bypass capacitor: its own
                # corner far above the stage's) leaves the root below max/1e3: start from the
                # smallest own corner instead
                own = np.stack([np.broadcast_to(x, shape).reshape(-1)[take[missed]] for x in (f_c1, f_c2, f_ce)])
                fmin = np.min(np.where(own > 0, own, np.inf), axis=0)
                lo = np.minimum(1e-3 * fmax[missed], 1e-3 * fmin)
                roots[missed] = _illinois(sub, log_target[missed], np.log(lo), np.log(1e3 * fsum[missed]), rtol)
        f_low.reshape(-1)[take] = np.exp(roots)
    return Corners(f_low=f_low, f_c1=f_c1, f_c2=f_c2, f_ce=f_ce)


def _illinois(mag: "_Magnitude", log_target, a, b, rtol: float, max_iter: int = 100):
    """Root in t = ln f of ln|H|² − log_target on [a, b] (flat arrays); NaN where not bracketed."""
    w2 = _TWO_PI**2

    def g(t):
        return np.log(mag(w2 * np.exp(2.0 * t))) - log_target

    ga, gb = g(a), g(b)
    ok = (ga < 0) & (gb > 0)
    ga = np.where(ok, ga, -1.0)
    gb = np.where(ok, gb, 1.0)
    side = np.zeros(a.shape, dtype=np.int8)
    for _ in range(max_iter):
        t = (a * gb - b * ga) / (gb - ga)
        gt = g(t)
        left = gt < 0  # root lies in [t, b]
        # Illinois: halve the stale end's value when the same end is kept twice.
        gb = np.where(left & (side == 1), 0.5 * gb, gb)
        ga = np.where(~left & (side == -1), 0.5 * ga, ga)
        a, ga = np.where(left, t, a), np.where(left, gt, ga)
        b, gb = np.where(left, b, t), np.where(left, gb, gt)
        side = np.where(left, 1, -1).astype(np.int8)
        if np.all(~ok | (b - a < rtol) | (np.abs(gt) < 2 * rtol)):
            break
    t = (a * gb - b * ga) / (gb - ga)
    return np.where(ok, t, np.nan)


def meets_corner(dc: DCFigures, *, c1, c2, ce=0.0, f_target) -> np.ndarray:
    """True where the whole-stage −3 dB corner is at or below ``f_target`` (Hz).

    One evaluation of the transfer function instead of a root search: |H| rises with f, so
    f_low ≤ f_target exactly when |H(f_target)|² ≥ |H_mid|²/2.  For filtering many candidates.
    """
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        mag2 = _Magnitude(dc, c1, c2, ce)((_TWO_PI * np.asarray(f_target, float)) ** 2)
        return (dc.state == ACTIVE) & (mag2 >= 0.5 * dc.gain**2)


_CAP_KEYS = ("c1", "c2", "ce")


def evaluate(*, c1, c2, ce=0.0, bypassed=None, **kwargs) -> Figures:
    """``evaluate_dc`` and ``low_corner`` together; ``bypassed`` defaults to ``ce > 0``."""
    if bypassed is None:
        bypassed = np.asarray(ce, float) > 0
    dc = evaluate_dc(bypassed=bypassed, **kwargs)
    return _with_corners(dc, low_corner(dc, c1=c1, c2=c2, ce=ce))


def _with_corners(dc: DCFigures, corners: Corners) -> Figures:
    shape = corners.f_low.shape
    values = {f.name: getattr(dc, f.name) for f in fields(DCFigures)}
    if shape != dc.shape:
        values = {k: (v if k == "inputs" else np.broadcast_to(v, shape)) for k, v in values.items()}
    return Figures(**values, f_low=corners.f_low, f_c1=corners.f_c1, f_c2=corners.f_c2,
                   f_ce=corners.f_ce)


# Parameters that may carry a tolerance: resistors and capacitors (fractions, ±).
TOLERANCE_KEYS = ("r1", "r2", "re", "rc", "re2", "c1", "c2", "ce")


@dataclass(frozen=True)
class WorstCase:
    """The lowest and highest value of each numeric figure over the tolerance box.

    ``low[name]`` and ``high[name]`` are arrays of the candidates' shape.  ``all_active`` is
    True where the transistor is in the active region at every vertex.  With the capacitors
    held at their low ends, ``high["f_low"]`` (and the corners') is the true worst case and
    ``low["f_low"]`` is not a bound; ``low["swing_peak"]`` is exact, ``high["swing_peak"]``
    may be exceeded inside the box.
    """

    low: Mapping[str, np.ndarray]
    high: Mapping[str, np.ndarray]
    all_active: np.ndarray
    vertices: int
    meets_f_target: np.ndarray | None = None  # corner ≤ f_target at every vertex (if asked)


def _box(tolerances, nominal, hfe_min, hfe_max, temp_min, temp_max):
    """(nominal with capacitors at their low ends, [(parameter, (low end, high end)), ...])."""
    bad = set(tolerances) - set(TOLERANCE_KEYS)
    if bad:
        raise ValueError(f"no tolerance for {sorted(bad)}; use {TOLERANCE_KEYS}")
    nominal = dict(nominal)
    nominal.pop("hfe", None)
    nominal.pop("temp_c", None)
    for key in _CAP_KEYS:
        if key in nominal and key in tolerances:
            nominal[key] = np.asarray(nominal[key], float) * (1.0 - np.asarray(tolerances[key], float))
    axes: list[tuple[str, tuple]] = []
    for key in TOLERANCE_KEYS:
        if key in _CAP_KEYS or key not in tolerances or key not in nominal:
            continue
        tol = np.asarray(tolerances[key], float)
        if np.all(tol == 0):
            continue
        base = np.asarray(nominal[key], float)
        axes.append((key, (base * (1.0 - tol), base * (1.0 + tol))))
    axes.append(("hfe", (np.asarray(hfe_min, float), np.asarray(hfe_max, float))))
    if np.any(np.asarray(temp_min) != np.asarray(temp_max)):
        axes.append(("temp_c", (np.asarray(temp_min, float), np.asarray(temp_max, float))))
    else:
        nominal["temp_c"] = temp_min
    return nominal, axes


def _split_caps(kw):
    kw = dict(kw)
    caps = {k: kw.pop(k) for k in _CAP_KEYS if k in kw}
    bypassed = kw.pop("bypassed", None)
    if bypassed is None:
        bypassed = np.asarray(caps.get("ce", 0.0), float) > 0
    return kw, caps, bypassed


def worst_case_by_signs(
    *,
    tolerances: Mapping[str, object],
    hfe_min,
    hfe_max,
    temp_min=NOMINAL_TEMP_C,
    temp_max=NOMINAL_TEMP_C,
    names=("ie", "vce", "gain", "rin", "rout", "swing_peak"),
    corner: bool = False,
    f_target=None,
    **nominal,
) -> WorstCase:
    """The worst case of ``names`` from a few evaluations instead of every vertex: for searches.

    The sign of each figure's change along each parameter is taken at the centre of the box
    (one extra evaluation per parameter), and each figure is then evaluated at its own lowest
    and highest vertex (chosen per candidate).  Equal to ``worst_case`` when every figure is
    monotone in each parameter over the box (tests compare the two).  ``all_active`` is judged
    at the vertices of lowest IE (cut-off comes first there) and lowest VCE (saturation).
    ``swing_peak``'s low end is the lower of the two swing limits' low ends; its high end is
    an upper bound.  ``corner``/``f_target``: the vertex that minimises |H(f)|/|H_mid| (at
    ``f_target``, else at the centre's corner) gives ``high["f_low"]`` and ``meets_f_target``.
    ``all_active`` is False also where the centre of the box is not active.
    Costs (k + 1) + 2·(figures) DC evaluations for k parameters, against 2**k.

    Measured against ``worst_case`` (tests/test_stages_core.py): IE and VCE agree exactly for
    both stages; the other figures are not monotone in every parameter (R2 raises IE, so re
    falls, but lowers the divider's impedance; VCE falls as RC grows while RC∥RL rises) and
    differ by up to a few percent.  A search that uses this to prune should confirm its final
    answer with ``worst_case``.
    """
    nominal, axes = _box(tolerances, nominal, hfe_min, hfe_max, temp_min, temp_max)
    base, caps, bypassed = _split_caps(nominal)
    centre = {key: 0.5 * (lo + hi) for key, (lo, hi) in axes}
    dc_names = set(names) | {"ie", "vce"}
    if "swing_peak" in dc_names:
        dc_names |= {"swing_up", "swing_down"}
    dc_names.discard("swing_peak")
    dc_names = sorted(dc_names - {"f_low", "f_c1", "f_c2", "f_ce"})
    want_corner = corner or f_target is not None

    def run(kw):
        return evaluate_dc(bypassed=bypassed, **{**base, **kw})

    f0 = run(centre)
    f_probe = None
    if want_corner:
        f_probe = (np.asarray(f_target, float) if f_target is not None
                   else low_corner(f0, **caps).f_low)

    def ratio(dc):
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            mag = _Magnitude(dc, caps.get("c1"), caps.get("c2"), caps.get("ce", 0.0))
            return mag((_TWO_PI * f_probe) ** 2) / dc.gain**2

    r0 = ratio(f0) if want_corner else None
    signs: dict[tuple[str, str], np.ndarray] = {}
    for key, (lo, hi) in axes:
        f1 = run({**centre, key: centre[key] + 1e-4 * (hi - lo)})
        for name in dc_names:
            signs[key, name] = np.sign(getattr(f1, name) - getattr(f0, name))
        if want_corner:
            with np.errstate(invalid="ignore"):  # inactive candidates: NaN, judged by all_active
                signs[key, "ratio"] = np.sign(ratio(f1) - r0)

    def vertex(name, toward):  # toward = -1 for the low vertex, +1 for the high
        return {key: np.where(toward * signs[key, name] > 0, hi, lo) for key, (lo, hi) in axes}

    low: dict[str, np.ndarray] = {}
    high: dict[str, np.ndarray] = {}
    states = []
    for name in dc_names:
        f_lo = run(vertex(name, -1))
        f_hi = run(vertex(name, +1))
        low[name] = getattr(f_lo, name)
        high[name] = getattr(f_hi, name)
        if name in ("ie", "vce"):
            states.append(f_lo.state == ACTIVE)
    # Signs taken where the centre is not active say nothing; such a candidate fails anyway.
    all_active = states[0] & states[1] & (f0.state == ACTIVE)
    if "swing_peak" in names:
        low["swing_peak"] = np.maximum(np.minimum(low["swing_up"], low["swing_down"]), 0.0)
        high["swing_peak"] = np.maximum(np.minimum(high["swing_up"], high["swing_down"]), 0.0)
    meets = None
    if want_corner:
        worst_dc = run(vertex("ratio", -1))
        if f_target is not None:
            meets = meets_corner(worst_dc, f_target=f_target, **caps)
        if corner:
            cor = low_corner(worst_dc, **caps)
            high["f_low"] = cor.f_low
    n_eval = 1 + len(axes) + 2 * len(dc_names) + (1 if want_corner else 0)
    return WorstCase(low=low, high=high, all_active=all_active, vertices=n_eval,
                     meets_f_target=meets)


def worst_case(
    *,
    tolerances: Mapping[str, object],
    hfe_min,
    hfe_max,
    temp_min=NOMINAL_TEMP_C,
    temp_max=NOMINAL_TEMP_C,
    corner: bool = True,
    f_target=None,
    names=None,
    **nominal,
) -> WorstCase:
    """Lowest and highest figures over part tolerances, the hFE range and the ambient range.

    Vertex enumeration: every resistor with a non-zero tolerance at its two ends, hFE at
    ``hfe_min`` and ``hfe_max``, temperature at both ends.  Every corner falls as capacitance
    grows, so the highest corners come from the capacitors at their low ends (value·(1 − tol)) and
    the lowest from the same vertices with them at their high ends.  Exact for
    figures monotone in each parameter on the box: currents, node voltages, VCE and powers.
    Gain, impedances, swing and corner are not monotone in every parameter everywhere (R2 raises
    IE but lowers the divider's impedance); over tolerance-sized boxes their extremes sat at
    vertices in every case tested against a dense grid, which is evidence, not a proof.  The
    loop is over the at most 2**7 vertices, each a vectorised call over all candidates.
    ``tolerances`` maps parameter names (``TOLERANCE_KEYS``) to fractions (floats or arrays).

    ``corner=False`` skips the corner search (DC and mid-band figures only, several times
    faster); ``f_target`` (Hz) adds ``meets_f_target``, True where the whole-stage corner is at or
    below it at every vertex, from one transfer evaluation per vertex (``meets_corner``), which
    is how a search should test a corner target.  ``names`` limits the low/high reduction to
    those figures (a search needs a handful, not all).  A vertex where the stage is not active yields
    NaN corners, which the low/high reduction skips: check ``all_active``.
    """
    nominal, axes = _box(tolerances, nominal, hfe_min, hfe_max, temp_min, temp_max)
    # _box holds the capacitors at their low ends (the highest corners); the lowest corners come
    # from the same vertices with the capacitors at their high ends
    cap_span = {k: (1.0 + np.asarray(tolerances[k], float)) / (1.0 - np.asarray(tolerances[k], float))
                for k in _CAP_KEYS if k in tolerances and k in nominal}
    corner_names = ("f_low", "f_c1", "f_c2", "f_ce")
    n_vert = 2 ** len(axes)
    low: dict[str, np.ndarray] = {}
    high: dict[str, np.ndarray] = {}
    all_active = None
    meets = None
    for v in range(n_vert):
        kw = dict(nominal)
        for bit, (key, ends) in enumerate(axes):
            kw[key] = ends[(v >> bit) & 1]
        kw, caps, bypassed = _split_caps(kw)
        fig = evaluate_dc(bypassed=bypassed, **kw)
        if corner:
            cor = low_corner(fig, **caps)
            fig = _with_corners(fig, cor)
            if cap_span:
                big = low_corner(fig, **{k: c * cap_span.get(k, 1.0) for k, c in caps.items()})
                for name in corner_names:
                    val = getattr(big, name)
                    if val is None or (names is not None and name not in names):
                        continue
                    low[name] = np.fmin(low[name], val) if name in low else np.array(val, copy=True)
                    high.setdefault(name, np.array(getattr(cor, name), copy=True))
        if f_target is not None:
            m = meets_corner(fig, f_target=f_target, **caps)
            meets = m if meets is None else (meets & m)
        act = fig.state == ACTIVE
        all_active = act if all_active is None else (all_active & act)
        for name in (NUMERIC_FIELDS if names is None else names):
            if not hasattr(fig, name) or getattr(fig, name) is None:
                continue
            val = getattr(fig, name)
            if corner and cap_span and name in corner_names:
                high[name] = np.fmax(high[name], val)  # lows came from the high-end capacitors
            elif name in low:
                low[name] = np.fmin(low[name], val)
                high[name] = np.fmax(high[name], val)
            else:
                low[name] = np.array(val, copy=True)
                high[name] = np.array(val, copy=True)
    return WorstCase(low=low, high=high, all_active=all_active, vertices=n_vert,
                     meets_f_target=meets)


def monte_carlo(
    n: int,
    *,
    seed: int,
    tolerances: Mapping[str, float],
    hfe_min: float,
    hfe_max: float,
    temp_min: float = NOMINAL_TEMP_C,
    temp_max: float = NOMINAL_TEMP_C,
    **nominal,
) -> Figures:
    """``n`` random builds of one nominal stage, evaluated in one call; reproducible by ``seed``.

    Each resistor and capacitor is uniform within ±its tolerance (the band a part is sold in;
    no assumption about the maker's distribution inside it), hFE log-uniform over
    [``hfe_min``, ``hfe_max``], the ambient uniform over [``temp_min``, ``temp_max``].
    """
    rng = np.random.default_rng(seed)
    kw = dict(nominal)
    kw.pop("hfe", None)
    for key in TOLERANCE_KEYS:
        if key in kw and key in tolerances and float(tolerances[key]) > 0:
            tol = float(tolerances[key])
            kw[key] = float(kw[key]) * (1.0 + rng.uniform(-tol, tol, n))
    lo, hi = float(hfe_min), float(hfe_max)
    kw["hfe"] = np.exp(rng.uniform(np.log(lo), np.log(hi), n)) if hi > lo else np.full(n, lo)
    kw["temp_c"] = rng.uniform(temp_min, temp_max, n) if temp_max > temp_min else np.full(n, float(temp_min))
    return evaluate(**kw)
