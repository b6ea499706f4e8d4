"""Numbers from the outside world, each with its source.  One home for each."""

from __future__ import annotations

# --- transistor working figures (common practice, no source) --------------------------------
VBE_DEFAULT = 0.65  # V, silicon small-signal BJT base-emitter drop at small currents (common practice, no source)
VBE_TEMPCO = -2.0e-3  # V/°C, drift of VBE with temperature (common practice, no source)
VCE_SAT_DEFAULT = 0.2  # V, small-signal saturation voltage (common practice, no source)

STIFF_DIVIDER_FACTOR = 10.0  # a divider is "stiff" when RTH <= beta*RE/10 (common practice, no source)

# --- derating (common practice, no source) ---------------------------------------------------
POWER_DERATING = 0.5  # use at most 50 % of a resistor's or transistor's power rating (common practice, no source)
CAP_VOLTAGE_MARGIN = 0.8  # keep a capacitor's working voltage at or below 80 % of rating (common practice, no source)

# --- default tolerances when the stock file gives none (common practice, no source) ----------
TOL_RESISTOR = 0.05
TOL_CERAMIC = 0.10
TOL_FILM = 0.05
TOL_ELECTROLYTIC = 0.20

# --- default ratings when the stock file gives none (documented in docs/inventory-format.md) -
POWER_RESISTOR = 0.25  # W, the most common through-hole rating (common practice, no source)
VOLTAGE_NONPOLAR = 50.0  # V, the most common ceramic/film rating (common practice, no source)
VOLTAGE_POLARIZED = 6.3  # V, the lowest common electrolytic rating: the safe guess (common practice, no source)

# --- ranges ----------------------------------------------------------------------------------
AUDIO_LOW_HZ = 20.0  # Hz, low end of the audio band (common practice, no source)
AMBIENT_MIN_C = 0.0  # °C, default ambient range for worst case
AMBIENT_MAX_C = 50.0
NOMINAL_TEMP_C = 25.0
HIGH_VOLTAGE_CAUTION = 50.0  # V DC, above which the supply is treated as dangerous (common practice, no source)

# --- limits on what is read (our own choices; docs/inventory-format.md, "Size limits") -------
# Far above any drawer or parts list kept by hand (the largest sample has a few hundred lines),
# and low enough that a damaged or hostile file is refused in seconds, within a few hundred MB,
# instead of running for minutes and exhausting memory.
MAX_INPUT_BYTES = 64 * 2**20  # a stock file or parts list as stored on disk (CSV text or XLSX zip)
MAX_XLSX_UNPACKED_BYTES = 256 * 2**20  # all parts of a workbook once unzipped (declared sizes, checked first)
MAX_XLSX_SHARED_BYTES = 64 * 2**20  # the shared-strings part, which the XLSX reader holds in memory whole
MAX_ROWS = 300_000  # rows with content in one file, all sheets together
MAX_CELL_CHARS = 2_000  # characters in one cell; a longer cell skips its line (a note fits with room to spare)
MAX_COLUMNS = 500  # columns read per row; cells further right are ignored (no header is that wide)
MAX_QTY = 10**9  # parts on one line: beyond any drawer, and keeps every count sum within 64-bit integers
MAX_VALUE_CHARS = 64  # characters of one value to parse ('4.7 kΩ ±1 %' needs a dozen)
MAX_TEXT_INPUT_BYTES = 16 * 2**20  # a spec, saved design or kit file (a few kilobytes in practice)


def thermal_voltage(temp_c: float = NOMINAL_TEMP_C):
    """kT/q in volts at a temperature in °C, from CODATA constants via scipy.constants."""
    from scipy import constants

    return constants.k * (temp_c + constants.zero_Celsius) / constants.e
