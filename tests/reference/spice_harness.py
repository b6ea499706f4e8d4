"""Run a stage through ngspice in batch mode and read back the figures the tool reports.

Source of the expected values in tests/reference/test_ngspice_*.py: the ngspice circuit
simulator (Debian package `ngspice`), run as `ngspice -b deck.cir`.  Nothing is stored; every
figure is simulated afresh, so there is no reference data to regenerate.

Under CI (environment variable CI set) a missing ngspice is a failure, never a skip.
"""

from __future__ import annotations

import math
import os
import re
import shutil
import subprocess
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest

F_START = 1e-3  # Hz
F_STOP = 1e6  # Hz: far above every corner and, with no junction capacitances, still mid-band
POINTS_PER_DECADE = 200


def require_ngspice() -> str:
    """Path of ngspice; fails under CI and skips elsewhere when it is missing."""
    path = shutil.which("ngspice")
    if path is None:
        message = "ngspice is not installed (Debian: apt-get install -y ngspice); ./test.sh installs it"
        if os.environ.get("CI"):
            pytest.fail(message)
        pytest.skip(message)
    return path


def run_deck(text: str, workdir: Path, name: str) -> tuple[dict, subprocess.CompletedProcess]:
    """Write ``text`` as ``name``.cir in ``workdir``, run ``ngspice -b`` on it: (the values it printed
    as "name = value", the completed process)."""
    exe = require_ngspice()
    (workdir / f"{name}.cir").write_text(text, encoding="utf-8")
    run = subprocess.run([exe, "-b", f"{name}.cir"], cwd=workdir, capture_output=True, text=True, timeout=60)
    values = {}
    for line in run.stdout.splitlines():
        m = _PRINTED.match(line)
        if m:
            values[m.group(1)] = float(m.group(2))
    return values, run


@dataclass(frozen=True)
class SimResult:
    vb: float
    ve: float
    vc: float
    ic: float
    ib: float
    ie: float
    gain: float  # signed, source EMF to load, at F_STOP
    rin: float  # |v(b)| / |i(VS)| at F_STOP
    f_low: float  # where |v(out)| falls to gain/√2, interpolated on log-log axes
    freq: np.ndarray
    mag: np.ndarray


# Tight tolerances: at the default RELTOL (1e-3) the device currents printed after .op can be
# off by a few tenths of a percent, a sizeable share of the 1.5 % budget.
_CONTROL = f"""option reltol=1e-7 abstol=1e-15 vntol=1e-9
op
print v(b) v(e) v(c) @q1[ic] @q1[ib]
ac dec {POINTS_PER_DECADE} {F_START:g} {F_STOP:g}
wrdata ac.txt vm(out) vr(out) vm(b) mag(vs#branch)
"""

# ngspice prints "name = value", the name sometimes prefixed by its plot ("op1.v(b)").
_PRINTED = re.compile(r"^\s*(?:\w+\.)?(\S+)\s*=\s*([-+0-9.eE]+)\s*$")


def simulate(stage, workdir: Path, temp_c: float = 25.0, sim_temp_c: float | None = None) -> SimResult:
    """Write the stage's netlist into ``workdir``, run ngspice on it, parse the results.

    ``sim_temp_c``: run the simulator at another temperature than the one IS was tuned at
    (``temp_c``), leaving the temperature dependence to ngspice's own transistor model.
    """
    from drawerfit.report.netlist import stage_netlist

    control = _CONTROL if stage.topology == "common-emitter" else _CONTROL.replace(" v(c)", "")
    text = stage_netlist(stage, temp_c=temp_c, control=control)
    if sim_temp_c is not None:
        text = _at_temperature(text, temp_c, sim_temp_c)
    values, run = run_deck(text, workdir, "stage")
    # ngspice -b exits 1 after a .control-only run ("no simulations run"), so the exit status
    # says nothing; the printed values and the data file do.
    needed = ("v(b)", "v(e)", "@q1[ic]", "@q1[ib]")
    if any(k not in values for k in needed) or not (workdir / "ac.txt").exists():
        raise AssertionError(f"ngspice failed ({run.returncode}):\n{run.stdout}\n{run.stderr}")
    data = np.loadtxt(workdir / "ac.txt")
    freq, mag, real, vbm, ivs = data[:, 0], data[:, 1], data[:, 3], data[:, 5], data[:, 7]
    gain = math.copysign(mag[-1], real[-1])
    return SimResult(
        vb=values["v(b)"], ve=values["v(e)"], vc=values.get("v(c)", math.nan),
        ic=abs(values["@q1[ic]"]), ib=abs(values["@q1[ib]"]),
        ie=abs(values["@q1[ic]"]) + abs(values["@q1[ib]"]),
        gain=gain, rin=vbm[-1] / ivs[-1], f_low=_corner(freq, mag, mag[-1]), freq=freq, mag=mag,
    )


def _at_temperature(deck: str, tuned_c: float, sim_temp_c: float) -> str:
    """The deck run at ``sim_temp_c`` with IS left as tuned at ``tuned_c`` (TNOM)."""
    old = f".options TNOM={tuned_c:.10g} TEMP={tuned_c:.10g}"
    assert old in deck
    return deck.replace(old, f".options TNOM={tuned_c:.10g} TEMP={sim_temp_c:.10g}")


def _corner(freq: np.ndarray, mag: np.ndarray, mid: float) -> float:
    level = mid / math.sqrt(2.0)
    above = np.nonzero(mag >= level)[0]
    if len(above) == 0 or above[0] == 0:
        raise AssertionError("the -3 dB point is outside the simulated sweep")
    i = above[0]
    x0, x1 = math.log(freq[i - 1]), math.log(freq[i])
    y0, y1 = math.log(mag[i - 1]), math.log(mag[i])
    return math.exp(x0 + (math.log(level) - y0) * (x1 - x0) / (y1 - y0))


def simulate_clipping(stage, workdir: Path, amplitude: float, freq: float = 20e3) -> tuple[float, float]:
    """(highest, lowest) load voltage over one cycle of a sine of ``amplitude`` (V peak) from the
    source, simulated in the transient.  The frequency is far above every corner (so the
    coupling capacitors barely recharge in one cycle) and, with no junction capacitances in the
    model, still mid-band."""
    from drawerfit.report.netlist import stage_netlist

    exe = require_ngspice()
    period = 1.0 / freq
    step = period / 500
    control = f"tran {step:.4g} {period:.4g} 0 {step:.4g}\nwrdata tran.txt v(out)\n"
    deck = stage_netlist(stage, control=control)
    deck = re.sub(r"^(VS \S+ 0 DC 0 AC 1)$", rf"\1 SIN(0 {amplitude:.6g} {freq:.6g})", deck, flags=re.M)
    (workdir / "clip.cir").write_text(deck)
    run = subprocess.run([exe, "-b", "clip.cir"], cwd=workdir, capture_output=True, text=True, timeout=60)
    out = workdir / "tran.txt"
    if not out.exists():
        raise AssertionError(f"ngspice transient failed:\n{run.stdout}\n{run.stderr}")
    v = np.loadtxt(out)[:, 1]
    return float(v.max()), float(v.min())


def simulate_rout(stage, workdir: Path, sim_temp_c: float | None = None) -> float:
    """Output impedance seen by the load: source EMF at zero, the load replaced by a 1 A AC
    current source into the output node, |v(out)| read far above every corner.

    ``sim_temp_c``: as for ``simulate`` (IS tuned at 25 °C, the simulator run at that temperature)."""
    from drawerfit.report.netlist import stage_netlist

    exe = require_ngspice()
    control = f"ac dec 10 {F_STOP / 10:g} {F_STOP:g}\nwrdata rout.txt vm(out)\n"
    deck = stage_netlist(stage, control=control)
    if sim_temp_c is not None:
        deck = _at_temperature(deck, 25.0, sim_temp_c)
    deck = re.sub(r"^(VS \S+ 0) DC 0 AC 1$", r"\1 DC 0 AC 0", deck, flags=re.M)
    # Keep a DC path at the output node (a floating node makes the operating point fail).
    deck = re.sub(r"^(RL|RLEAK) out 0 .*$", "IOUT 0 out DC 0 AC 1\nRLEAK out 0 1e12", deck, flags=re.M)
    (workdir / "rout.cir").write_text(deck)
    run = subprocess.run([exe, "-b", "rout.cir"], cwd=workdir, capture_output=True, text=True, timeout=60)
    out = workdir / "rout.txt"
    if not out.exists():
        raise AssertionError(f"ngspice failed:\n{run.stdout}\n{run.stderr}")
    return float(np.loadtxt(out)[-1, 1])
