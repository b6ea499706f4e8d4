"""The data behind the plots agrees with the analysis it illustrates.

Expected values: properties. The response curve must cross 3 dB below its mid-band level at
the corner that analysis.core reports (that corner is held against ngspice and scipy.signal in
tests/reference); the AC load line must end where the swing limit says the stage stops
(VCE(sat) on the saturation side, IC = 0 on the cut-off side); the DC load line must pass
through the quiescent point (Kirchhoff's voltage law around the collector-emitter loop).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from drawerfit.analysis.core import LIMIT_CUTOFF, LIMIT_SATURATION, evaluate
from drawerfit.io.saved_design import load_design
from drawerfit.report.plots import load_line_data, response_data

from .helpers import CE_PNP, FOLLOWER, PLAIN, VARIANTS, write_spec


def _designs(tmp_path):
    return [load_design(p) for p in (FOLLOWER, CE_PNP, PLAIN)] + [
        load_design(write_spec(tmp_path, n)) for n in VARIANTS]


def test_response_crosses_minus_3_db_at_the_reported_corner(tmp_path):
    for d in _designs(tmp_path):
        f, db, mid, f_low = response_data(d, points=4000)
        level = mid - 10 * math.log10(2)
        i = int(np.nonzero(db >= level)[0][0])
        # interpolate on log f between the two samples around the crossing
        t = (level - db[i - 1]) / (db[i] - db[i - 1])
        crossing = math.exp(math.log(f[i - 1]) + t * (math.log(f[i]) - math.log(f[i - 1])))
        assert crossing == pytest.approx(f_low, rel=2e-3), d.path
        assert db[-1] == pytest.approx(mid, abs=0.05)  # flat mid-band at the top end


def test_load_lines_end_where_the_swing_limit_says(tmp_path):
    for d in _designs(tmp_path):
        fig = evaluate(**d.stage.core_arguments())
        data = load_line_data(d, fig)
        vq, iq = data["q"]
        s_lo, s_hi = data["swing"]
        assert (s_lo + s_hi) / 2 == pytest.approx(vq)  # symmetric about Q
        if int(fig.swing_limit) == LIMIT_SATURATION:
            assert s_lo == pytest.approx(data["vce_sat"], rel=1e-6), d.path
        else:
            assert int(fig.swing_limit) == LIMIT_CUTOFF
            assert s_hi == pytest.approx(data["ac_cutoff"], rel=1e-6), d.path
        assert data["ic_at"](data["ac_cutoff"]) == pytest.approx(0.0, abs=1e-12)


def test_dc_load_line_passes_through_the_quiescent_point(tmp_path):
    for d in _designs(tmp_path):
        fig = evaluate(**d.stage.core_arguments())
        data = load_line_data(d, fig)
        (x0, y0), (x1, y1) = data["dc"]
        vq, iq = data["q"]
        on_line = y0 + (vq - x0) * (y1 - y0) / (x1 - x0)
        assert on_line == pytest.approx(iq, rel=1e-9), d.path


def test_every_random_build_lies_within_the_reported_range(tmp_path):
    # property: each Monte Carlo build is a point inside the tolerance box, so its figures must
    # lie between the lowest and highest the report gives (corner: capacitors at either end)
    from drawerfit.report.figures import gather

    for d in [load_design(p) for p in (FOLLOWER, CE_PNP)] + [load_design(write_spec(tmp_path, "ce-npn-re2-bypassed"))]:
        f = gather(d, monte_carlo=3000, seed=3)
        corner = f.mc.f_low[np.isfinite(f.mc.f_low)]
        assert corner.min() >= f.lowest_f_low * (1 - 1e-9), d.path
        assert corner.max() <= float(f.worst.high["f_low"]) * (1 + 1e-9), d.path
        assert f.lowest_f_low < float(f.nominal.f_low) < float(f.worst.high["f_low"])
        assert f.mc.ie.min() >= float(f.worst.low["ie"]) * (1 - 1e-9)
        assert f.mc.ie.max() <= float(f.worst.high["ie"]) * (1 + 1e-9)
