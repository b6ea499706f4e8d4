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

Units are SI base units (ohm, farad, volt, ampere, watt, hertz; °C for temperatures); the
conventions (node voltages to ground, signed capacitor voltages, states and swing limits) and the
transistor model are documented in ``analysis.dc``, where the figures are computed.
"""

from __future__ import annotations

# The engine lives in three modules, by idea: ``dc`` (operating point, mid-band small signal,
# swing, power), ``response`` (transfer function and corners), ``spread`` (worst case and Monte
# Carlo).  This module is its one import: every name callers use stays reachable from here,
# the underscored helpers the design search shares (``_Magnitude``, ``_own_corners``) too.

from .dc import (  # noqa: F401
    ACTIVE, CUTOFF, LIMIT_CUTOFF, LIMIT_NAMES, LIMIT_NONE, LIMIT_SATURATION, POLARITIES,
    SATURATED, STATE_NAMES, TOPOLOGIES, CAP_FIGURE, POWER_FIGURE, DCFigures, evaluate_dc, parallel as _par)
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
    "TOLERANCE_KEYS", "NUMERIC_FIELDS", "POWER_FIGURE", "CAP_FIGURE",
]
