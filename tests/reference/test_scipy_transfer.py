"""The low-frequency transfer function held against scipy.signal.

Independent route: the stage's small-signal circuit (hybrid-π: rπ = (β+1)·VT/IE, gm = IC/VT,
no Early effect) is written as a nodal admittance matrix Y(s) = G + s·C; the numerator and
denominator of v_out/v_s are the determinants of Cramer's rule, polynomials in s that are
recovered exactly by interpolation at real points.  scipy.signal.freqs evaluates that rational
function; scipy.optimize.brentq finds its -3 dB point.  Expected values: scipy.signal (and
scipy.optimize) on this independent polynomial, compared with analysis.core.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import optimize, signal

from drawerfit.analysis.core import evaluate, evaluate_dc, transfer
from drawerfit.constants import thermal_voltage


def _polynomials(topology, fig, p):
    """(num, den) in descending powers of s for v_out / v_s, from nodal analysis."""
    vt = thermal_voltage(25.0)
    ic, ie = float(fig.ic), float(fig.ie)
    gm = ic / vt
    gpi = ie / (vt * (p["hfe"] + 1.0))  # 1/rπ with rπ = (β+1)·re
    nodes = ["in", "b", "e", "out"] + (["c", "n"] if topology == "common-emitter" else [])
    idx = {n: i for i, n in enumerate(nodes)}
    k = len(nodes)
    G = np.zeros((k, k))
    C = np.zeros((k, k))

    def stamp(mat, a, b, y):
        for x in (a, b):
            if x != "0":
                mat[idx[x], idx[x]] += y
        if a != "0" and b != "0":
            mat[idx[a], idx[b]] -= y
            mat[idx[b], idx[a]] -= y

    def vccs(out_p, out_m, ctl_p, ctl_m, g):  # current g·(v_ctl_p − v_ctl_m) from out_p to out_m
        for o, so in ((out_p, 1), (out_m, -1)):
            for c, sc in ((ctl_p, 1), (ctl_m, -1)):
                if o != "0" and c != "0":
                    G[idx[o], idx[c]] += so * sc * g

    stamp(G, "in", "0", 1 / p["rs"])
    stamp(C, "in", "b", p["c1"])
    stamp(G, "b", "0", 1 / p["r1"] + 1 / p["r2"])  # both divider ends are AC ground
    stamp(G, "b", "e", gpi)
    if topology == "emitter-follower":
        stamp(G, "e", "0", 1 / p["re"])
        stamp(C, "e", "out", p["c2"])
        vccs("e", "0", "b", "e", -gm)  # gm·vbe flows into the emitter from the AC-grounded collector
    else:
        stamp(G, "e", "n", 1 / p["re"])
        stamp(G, "n", "0", 1 / p["re2"])
        if p.get("ce"):
            stamp(C, "n", "0", p["ce"])
        stamp(G, "c", "0", 1 / p["rc"])
        stamp(C, "c", "out", p["c2"])
        vccs("c", "e", "b", "e", gm)
    stamp(G, "out", "0", 1 / p["rl"])
    rhs = np.zeros(k)
    rhs[idx["in"]] = 1 / p["rs"]  # v_s = 1 behind rs, as a Norton source

    deg = int(np.count_nonzero(np.diag(C)) and np.linalg.matrix_rank(C))  # one power of s per capacitor
    pts = np.linspace(-1.0, 1.0, 4 * deg + 1) * 3.0  # real s, scaled below
    scale = 1.0 / (p["c1"] * p["rs"])

    def dets(s):
        Y = G + s * C
        Yo = Y.copy()
        Yo[:, idx["out"]] = rhs
        return np.linalg.det(Yo), np.linalg.det(Y)

    vals = np.array([dets(x * scale) for x in pts])
    # Fit in the scaled variable x = s/scale (well conditioned), then rescale to s.
    num_x = np.polyfit(pts, vals[:, 0], deg)
    den_x = np.polyfit(pts, vals[:, 1], deg)
    powers = np.arange(deg, -1, -1)
    num = num_x / scale**powers
    den = den_x / scale**powers
    return num, den


CASES = [
    ("emitter-follower", dict(supply=12, r1=4.7e3, r2=5.6e3, re=820, rs=600, rl=1e3, hfe=150,
                              c1=2.2e-6, c2=47e-6)),
    ("emitter-follower", dict(supply=9, r1=22e3, r2=33e3, re=2.2e3, rs=5e3, rl=220, hfe=90,
                              c1=1e-6, c2=220e-6)),
    ("common-emitter", dict(supply=12, r1=47e3, r2=10e3, re=220, re2=1e3, rc=4.7e3, rs=600,
                            rl=10e3, hfe=150, c1=10e-6, c2=10e-6, ce=100e-6)),
    ("common-emitter", dict(supply=15, r1=68e3, r2=12e3, re=47, re2=1.8e3, rc=6.8e3, rs=50,
                            rl=2.2e3, hfe=300, c1=1e-6, c2=4.7e-6, ce=47e-6)),
]


@pytest.mark.parametrize("topology,p", CASES)
def test_transfer_matches_scipy_signal(topology, p):
    fig = evaluate(topology=topology, **p)
    num, den = _polynomials(topology, fig, p)
    f = np.logspace(-2, 5, 300)
    _, h_ref = signal.freqs(num, den, worN=2 * np.pi * f)
    dc = evaluate_dc(topology=topology, bypassed=p.get("ce", 0) > 0,
                     **{k: v for k, v in p.items() if k not in ("c1", "c2", "ce")})
    h = transfer(dc, c1=p["c1"], c2=p["c2"], ce=p.get("ce", 0.0), f=f)
    # atol: the interpolated polynomials carry rounding of about 1e-7 of the mid-band gain in
    # their low-order coefficients, visible only far below the corner.
    np.testing.assert_allclose(h, h_ref, rtol=1e-6, atol=1e-6 * abs(float(fig.gain)))


@pytest.mark.parametrize("topology,p", CASES)
def test_low_corner_matches_scipy_root(topology, p):
    fig = evaluate(topology=topology, **p)
    num, den = _polynomials(topology, fig, p)
    mid = abs(num[0] / den[0])  # s → ∞: every capacitor a short

    def excess(logf):
        _, h = signal.freqs(num, den, worN=[2 * np.pi * math.exp(logf)])
        return abs(h[0]) ** 2 - 0.5 * mid**2

    f_ref = math.exp(optimize.brentq(excess, math.log(1e-3), math.log(1e4), xtol=1e-12))
    assert float(fig.f_low) == pytest.approx(f_ref, rel=1e-5)
    assert float(fig.gain) == pytest.approx(num[0] / den[0], rel=1e-6)


def test_two_equal_sections_give_1_55_times_the_corner():
    """Two equal first-order high-pass sections: corner f0/√(√2 − 1) ≈ 1.554·f0 (mathematics of
    the sections, and the rule quoted in the design notes).  In the unbypassed common-emitter
    stage without Early effect, the input and output sections are exactly independent."""
    p = dict(supply=12, r1=47e3, r2=10e3, re=1e3, rc=4.7e3, rs=600, rl=10e3, hfe=150)
    dc = evaluate_dc(topology="common-emitter", **p)
    c1 = 10e-6
    f0 = 1 / (2 * math.pi * c1 * (600 + float(dc.rin)))
    c2 = 1 / (2 * math.pi * f0 * (4.7e3 + 10e3))
    fig = evaluate(topology="common-emitter", c1=c1, c2=c2, **p)
    assert float(fig.f_c1) == pytest.approx(float(fig.f_c2), rel=1e-12)
    assert float(fig.f_low) == pytest.approx(f0 / math.sqrt(math.sqrt(2) - 1), rel=1e-6)
