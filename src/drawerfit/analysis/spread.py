"""The spread of a stage's figures: worst case over the tolerance box, and Monte Carlo builds.

The box spans part tolerances, the transistor's hFE range and the ambient range (``analysis.core``
documents the engine as a whole).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

import numpy as np

from ..constants import NOMINAL_TEMP_C
from .dc import ACTIVE, evaluate_dc
from .response import CAP_KEYS, NUMERIC_FIELDS, Figures, _Magnitude, _with_corners, evaluate, low_corner, meets_corner

__all__ = ["TOLERANCE_KEYS", "WorstCase", "worst_case", "worst_case_by_signs", "monte_carlo"]

from .response import TWO_PI as _TWO_PI

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
    for key in CAP_KEYS:
        if key in nominal and key in tolerances:
            nominal[key] = np.asarray(nominal[key], float) * (1.0 - np.asarray(tolerances[key], float))
    axes: list[tuple[str, tuple]] = []
    for key in TOLERANCE_KEYS:
        if key in CAP_KEYS or key not in tolerances or key not in nominal:
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
    caps = {k: kw.pop(k) for k in CAP_KEYS if k in kw}
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

    Measured against ``worst_case`` (tests/analysis/test_core.py): IE and VCE agree exactly for
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
                for k in CAP_KEYS if k in tolerances and k in nominal}
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
