"""The report's plots as SVG text, drawn by matplotlib on an Agg canvas (no display needed).

Magnitude response, DC and AC load lines, and the Monte Carlo histograms of IE and of the
−3 dB corner.  Text stays text in the SVG (browsers draw it with the system fonts).
"""

from __future__ import annotations

import io
import math

import numpy as np

from ..values import format_si

__all__ = ["response_svg", "load_lines_svg", "histogram_svg", "response_data", "load_line_data", "PALETTE"]

# Our own colours: ink for the stage, a warm accent for targets, a muted green for "in band".
PALETTE = {
    "ink": "#1f3b57",
    "accent": "#b5541c",
    "soft": "#8fa8bf",
    "band": "#dfe9d8",
    "grid": "#d9dee4",
    "ok": "#3f7d3a",
}


_RC = {"svg.fonttype": "none", "svg.hashsalt": "drawerfit", "font.family": "sans-serif", "font.size": 9,
       "axes.labelsize": 9, "xtick.labelsize": 8, "ytick.labelsize": 8, "legend.fontsize": 8}


def _with_rc(fn):
    """Run a plot function under our rc settings, so every artist is made with them."""
    import functools

    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        import matplotlib

        with matplotlib.rc_context(_RC):
            return fn(*args, **kwargs)

    return wrapper


def _figure(width=8.0, height=3.6):
    # An Agg canvas of our own: no pyplot, no global backend switch in the caller's process.
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width, height), dpi=100)
    FigureCanvasAgg(fig)
    return fig


def _svg(fig) -> str:
    buf = io.StringIO()
    fig.savefig(buf, format="svg", bbox_inches="tight", metadata={"Date": None, "Creator": None})
    return buf.getvalue()


def _style(ax) -> None:
    ax.grid(True, which="major", color=PALETTE["grid"], lw=0.7)
    ax.grid(True, which="minor", color=PALETTE["grid"], lw=0.4, alpha=0.6)
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    ax.tick_params(labelsize=8)


def response_data(design, *, points: int = 400):
    """Frequencies (Hz), gain in dB, mid-band dB and the whole-stage corner for the response plot."""
    from ..analysis.core import evaluate, evaluate_dc, transfer

    stage = design.stage
    kw = stage.core_arguments()
    caps = {k: kw.pop(k) for k in ("c1", "c2", "ce")}
    dc = evaluate_dc(bypassed=stage.bypassed, temp_c=design.conditions.nominal_temp, **kw)
    fig = evaluate(temp_c=design.conditions.nominal_temp, **stage.core_arguments())
    f_low = float(fig.f_low)
    anchor = f_low if math.isfinite(f_low) and f_low > 0 else 10.0
    target = design.targets.get("f_low")
    lo = min(anchor, target or anchor) / 30.0
    hi = max(anchor * 3e3, 2e4)
    f = np.logspace(math.log10(lo), math.log10(hi), points)
    h = transfer(dc, f=f, **caps)
    with np.errstate(divide="ignore"):
        db = 20.0 * np.log10(np.abs(h))
    mid = 20.0 * math.log10(abs(float(dc.gain))) if float(dc.gain) != 0 else float("nan")
    return f, db, mid, f_low


@_with_rc
def response_svg(design, data=None, *, what: str = "this stage") -> str:
    """|gain| in dB from the source EMF to the load over log frequency, target corner marked.

    ``data`` is ``response_data``'s tuple (default: the single stage's); ``what`` names the curve."""
    f, db, mid, f_low = response_data(design) if data is None else data
    fig = _figure()
    ax = fig.add_subplot()
    ax.semilogx(f, db, color=PALETTE["ink"], lw=1.8, label=f"{what} (nominal parts)")
    target = design.targets.get("f_low")
    if math.isfinite(mid):
        ax.axhline(mid - 3.0103, color=PALETTE["soft"], lw=0.9, ls=":", label="3 dB below mid-band")
        ax.set_ylim(mid - 30, mid + 4)
    if math.isfinite(f_low):
        ax.plot([f_low], [mid - 3.0103], "o", color=PALETTE["ink"], ms=5)
        ax.annotate(f"corner {format_si(f_low, 'Hz', 3)}", (f_low, mid - 3.0103), xytext=(8, -14),
                    textcoords="offset points", fontsize=8, color=PALETTE["ink"])
    if target:
        ax.axvline(target, color=PALETTE["accent"], lw=1.3, ls="--",
                   label=f"target: corner at or below {format_si(target, 'Hz', 3)}")
    # the model has no junction or wiring capacitance: say so on the plot itself, where it stays flat
    ax.text(0.99, 0.98, "upper corner not modelled: flat only in the model", transform=ax.transAxes, ha="right",
            va="top", fontsize=7.5, color=PALETTE["accent"])
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel("gain, source to load (dB)")
    _style(ax)
    ax.legend(fontsize=8, loc="lower right", frameon=False)
    return _svg(fig)


def load_line_data(design, nominal) -> dict:
    """Points of the DC and AC load lines in (VCE, IC), the quiescent point and the swing ends.

    For a PNP stage VCE and IC are magnitudes (VEC, and current out of the collector).
    """
    from ..stages import topology_module

    stage = design.stage
    vcc = stage.supply
    r_dc, r_ac, out_per_vce = topology_module(stage.topology).load_line(stage)
    vce_q, ic_q = float(nominal.vce), float(nominal.ic)
    vce_sat = stage.transistor.vce_sat
    swing_vce = float(nominal.swing_peak) / out_per_vce
    return {
        "dc": ((0.0, vcc / r_dc), (vcc, 0.0)),
        "ac_cutoff": vce_q + ic_q * r_ac,
        "r_ac": r_ac, "r_dc": r_dc,
        "q": (vce_q, ic_q),
        "vce_sat": vce_sat,
        "swing": (vce_q - swing_vce, vce_q + swing_vce),
        "ic_at": lambda v: ic_q - (v - vce_q) / r_ac,
    }


@_with_rc
def load_lines_svg(design, nominal, data=None) -> str:
    """IC over VCE: the DC and AC load lines, the quiescent point, saturation and cut-off ends.

    ``data`` is ``load_line_data``'s dict (default: the single stage's transistor)."""
    data = load_line_data(design, nominal) if data is None else data
    pnp = design.stage.polarity == "pnp"
    vname = "VEC" if pnp else "VCE"
    fig = _figure(8.0, 3.8)
    ax = fig.add_subplot()
    (x0, y0), (x1, y1) = data["dc"]
    ax.plot([x0, x1], [y0 * 1e3, y1 * 1e3], color=PALETTE["ink"], lw=1.6, label="DC load line")
    cut = data["ac_cutoff"]
    ic_at = data["ic_at"]
    v_start = max(0.0, cut - ic_at(0.0) * data["r_ac"]) if ic_at(0.0) > 0 else 0.0
    xs = np.array([v_start, cut])
    ax.plot(xs, [ic_at(v_start) * 1e3, 0.0], color=PALETTE["accent"], lw=1.4, ls="--",
            label="AC load line (signal, with the load)")
    s_lo, s_hi = data["swing"]
    if s_hi > s_lo:
        ax.plot([s_lo, s_hi], [ic_at(s_lo) * 1e3, ic_at(s_hi) * 1e3], color=PALETTE["ok"], lw=5, alpha=0.55,
                solid_capstyle="butt", label="symmetric swing, both ways")
    ax.axvline(data["vce_sat"], color=PALETTE["soft"], lw=0.9, ls=":")
    ax.annotate(f"saturation\n{vname} ≈ {data['vce_sat']:g} V", (data["vce_sat"], 0), xytext=(4, 6),
                textcoords="offset points", fontsize=7.5, color=PALETTE["ink"])
    ax.plot([cut], [0], marker="v", color=PALETTE["accent"], ms=6, clip_on=False, zorder=6)
    ax.annotate("cut-off", (cut, 0), xytext=(0, -22), textcoords="offset points", fontsize=7.5,
                color=PALETTE["accent"], ha="center", annotation_clip=False)
    vq, iq = data["q"]
    ax.plot([vq], [iq * 1e3], "o", color=PALETTE["ink"], ms=6, zorder=5)
    ax.annotate(f"Q: {vname} {format_si(vq, 'V', 3)}, IC {format_si(iq, 'A', 3)}", (vq, iq * 1e3),
                xytext=(8, 8), textcoords="offset points", fontsize=8, color=PALETTE["ink"])
    ax.set_xlim(0, max(design.stage.supply, cut) * 1.05)
    ax.set_ylim(0, max(y0, ic_at(v_start)) * 1e3 * 1.1)
    ax.set_xlabel(f"{vname} (V)")
    ax.set_ylabel("IC (mA)")
    _style(ax)
    ax.legend(fontsize=8, loc="upper right", frameon=False)
    return _svg(fig)


@_with_rc
def histogram_svg(samples, *, unit: str, scale: float, axis_label: str, lines=(), nominal=None,
                  shown_unit: str = "") -> str:
    """A histogram of Monte Carlo samples (SI units; shown ×``scale``) with its target lines.

    ``lines`` are (value, text) pairs drawn as dashed verticals and named, with their values, in
    a legend above the plot (no text squeezed against a line or the frame).  The axis spans the
    samples; a target far outside them is named in the legend with an arrow toward it instead of
    squeezing the bars.
    """
    from matplotlib.lines import Line2D

    x = np.asarray(samples, float)
    missing = int(np.count_nonzero(~np.isfinite(x)))
    x = x[np.isfinite(x)] * scale
    fig = _figure(4.0, 3.0)
    ax = fig.add_subplot()
    if missing:
        # builds outside the active region have no small-signal figures: say how many
        ax.text(0.02, 0.98 if x.size else 0.5, f"{missing} of {missing + x.size} builds: no value (not active)",
                transform=ax.transAxes, fontsize=7.5, va="top" if x.size else "center", color=PALETTE["accent"])
    lo, hi = (float(x.min()), float(x.max())) if x.size else (0.0, 1.0)
    span = max(hi - lo, abs(hi) * 1e-3, 1e-12)
    view_lo, view_hi = lo - 0.15 * span, hi + 0.15 * span
    # Targets within two spans of the samples are drawn in place; farther ones only named.
    near = [(v * scale, t) for v, t in lines if lo - 2 * span <= v * scale <= hi + 2 * span]
    for v, _ in near:
        view_lo, view_hi = min(view_lo, v - 0.08 * span), max(view_hi, v + 0.08 * span)
    if x.size:
        ax.hist(x, bins=40, range=(lo, hi) if hi > lo else None, color=PALETTE["soft"], edgecolor="white", lw=0.4)
    ax.set_xlim(view_lo, view_hi)
    handles = []
    if nominal is not None and math.isfinite(nominal):
        ax.axvline(nominal * scale, color=PALETTE["ink"], lw=1.2)
        handles.append(Line2D([], [], color=PALETTE["ink"], lw=1.2,
                              label=f"nominal {nominal * scale:.3g} {shown_unit}".rstrip()))
    for v, text in lines:
        v = v * scale
        shown = f"{text} {v:.3g} {shown_unit}".rstrip()
        if (v, text) in near:
            ax.axvline(v, color=PALETTE["accent"], lw=1.3, ls="--")
        else:
            shown += " (off the scale " + ("→)" if v > hi else "←)")
        handles.append(Line2D([], [], color=PALETTE["accent"], lw=1.3, ls="--", label=shown))
    if handles:
        ax.legend(handles=handles, loc="lower left", bbox_to_anchor=(0.0, 1.01), ncol=2 if len(handles) > 2 else 1,
                  fontsize=7, frameon=False, borderaxespad=0.0, handlelength=1.8, columnspacing=1.0)
    ax.set_xlabel(axis_label, fontsize=8)
    ax.set_ylabel("builds", fontsize=8)
    _style(ax)
    return _svg(fig)
