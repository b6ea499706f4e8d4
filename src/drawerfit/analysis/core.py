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

# The engine lives in three modules, by idea: ``dc`` (operating point, mid-band small signal,
# swing, power), ``response`` (transfer function and corners), ``spread`` (worst case and Monte
# Carlo).  This module is its one import: every name callers use stays reachable from here,
# the underscored helpers the design search shares (``_Magnitude``, ``_own_corners``) too.

from .dc import (  # noqa: F401
    ACTIVE, CUTOFF, LIMIT_CUTOFF, LIMIT_NAMES, LIMIT_NONE, LIMIT_SATURATION, POLARITIES,
    SATURATED, STATE_NAMES, TOPOLOGIES, DCFigures, evaluate_dc, parallel as _par)
from .response import (  # noqa: F401
    CAP_KEYS as _CAP_KEYS, NUMERIC_FIELDS, Corners, Figures, _Kernel, _Magnitude,
    _own_corners, _with_corners, evaluate, low_corner, meets_corner, transfer)
from .spread import TOLERANCE_KEYS, WorstCase, monte_carlo, worst_case, worst_case_by_signs

__all__ = [
    "ACTIVE", "SATURATED", "CUTOFF", "STATE_NAMES",
    "LIMIT_NONE", "LIMIT_CUTOFF", "LIMIT_SATURATION", "LIMIT_NAMES",
    "TOPOLOGIES", "POLARITIES",
    "DCFigures", "Corners", "Figures", "WorstCase",
    "evaluate_dc", "low_corner", "meets_corner", "evaluate", "transfer", "worst_case",
    "worst_case_by_signs", "monte_carlo",
    "TOLERANCE_KEYS", "NUMERIC_FIELDS",
]
