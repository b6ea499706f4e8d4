"""The low-frequency response of one-transistor stages: the transfer function and its corners.

The whole-stage −3 dB corner comes from the full small-signal transfer function with every
capacitor in it (not a sum of poles), for a batch of stages at once (``analysis.core``
documents the engine as a whole).
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

from ..stages.kernels import load_conductance
from ..stages.topologies import topology_module
from .dc import ACTIVE, DCFigures, evaluate_dc

__all__ = ["Corners", "Figures", "NUMERIC_FIELDS", "low_corner", "meets_corner", "evaluate", "transfer",
           "CAP_KEYS"]

TWO_PI = _TWO_PI = 2.0 * np.pi


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



class _Kernel:
    """Per-stage constants of the low-frequency transfer function, computed once per batch.

    The transfer is found by impedance reduction, exact for the small-signal model (hybrid-π
    without Early effect: the collector is an ideal current source β·ib).  The load enters as a
    conductance (0 for no load) so that no infinities reach the complex arithmetic.  The circuit's
    module adds its own constants (``kernel_constants``) and its part of the network
    (``stage_transfer``); the source, divider, C1, C2 and load are shared.
    """

    def __init__(self, dc: DCFigures, c1, c2, ce):
        inp = dc.inputs
        self.circuit = topology_module(inp["topology"])
        self.active = dc.state == ACTIVE
        beta = inp["beta"]
        self.bp1 = beta + 1.0
        self.beta = beta
        self.rpi = np.where(self.active, (beta + 1.0) * dc.re_small, 1.0)
        self.rs = inp["rs"]
        self.gb = 1.0 / inp["rbias"]
        self.gl = load_conductance(inp["rl"])
        self.c1 = np.asarray(c1, float)
        self.c2 = np.asarray(c2, float)
        self.gre = 1.0 / inp["re"]
        for name, val in self.circuit.kernel_constants(inp, ce).items():
            setattr(self, name, val)

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
        zb, to_out = self.circuit.stage_transfer(self, s, y_out)  # base impedance, output / vb
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
        f_ce = topology_module(inp["topology"]).bypass_corner(inp, dc, ce)
        if f_ce is None:
            f_ce = np.zeros(np.broadcast_shapes(np.shape(c1), dc.shape))
    shape = np.broadcast_shapes(np.shape(c1), np.shape(c2), np.shape(ce), dc.shape)
    return (np.broadcast_to(f_c1, shape), np.broadcast_to(f_c2, shape),
            np.broadcast_to(f_ce, shape))


class _Magnitude:
    """|H(f)|² of the stage as a ratio of real polynomials in x = ω², factored, per candidate.

    From the same circuit as ``_Kernel``, multiplied through by the capacitor admittances; the
    circuit's module gives its factors (``magnitude_constants``, ``magnitude``), e.g.

    output at the emitter:    H = (β+1)·C1·C2·s² / (q0 + q1·s + q2·s²)
    output at the collector:  H = −β·C1·C2·s²·(1 + s·CE·RE2) / ((p0 + p1·s + p2·s²)·(o0 + o1·s))

    so |H|² = N(x)/D(x) with N, D products of small real factors (no complex arithmetic, and
    no expanded polynomial whose terms could cancel).  Used by the corner search, which
    evaluates it many times; ``transfer`` keeps the complex form.
    """

    def __init__(self, dc: DCFigures, c1, c2, ce, take=None, shape=None):
        inp = dc.inputs
        self.circuit = topology_module(inp["topology"])

        def arr(x):
            x = np.asarray(x, float)
            if take is None or x.ndim == 0:
                return x
            return np.broadcast_to(x, shape).reshape(-1)[take]

        beta, rs, rbias, re, rl = (arr(inp[k]) for k in ("beta", "rs", "rbias", "re", "rl"))
        c1, c2 = arr(c1), arr(c2)
        rpi = (beta + 1.0) * arr(dc.re_small)
        gb = 1.0 / rbias
        gl = load_conductance(rl)
        shared = dict(beta=beta, rs=rs, re=re, c1=c1, c2=c2, rpi=rpi, gb=gb, gl=gl)
        for name, val in self.circuit.magnitude_constants(shared, arr, inp, ce).items():
            setattr(self, name, val)

    def __call__(self, x):
        """|H|² at x = ω² (rad²/s²)."""
        den = (self.q0 - self.q2 * x) ** 2 + self.q1**2 * x
        return self.circuit.magnitude(self, x, den)


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


CAP_KEYS = ("c1", "c2", "ce")


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
