"""Parse and format component values: SI prefixes, units, and the IEC 60062 letter code.

Inside the program every value is a plain float in the SI base unit (ohm, farad, volt,
watt, ampere, hertz); tolerances are fractions.  Text exists only at the edges, and this
module is the one place that turns text into numbers and back.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from decimal import ROUND_HALF_UP, Context, Decimal
from fractions import Fraction

from .constants import MAX_VALUE_CHARS

__all__ = [
    "ValueError_",
    "ValueParseError",
    "Quantity",
    "parse_value",
    "parse_quantity",
    "parse_tolerance",
    "parse_value_and_tolerance",
    "format_si",
    "format_code",
    "format_percent",
    "trade_code",
    "trade_si",
    "significant_digits",
    "rounded",
    "implied_unit",
    "UNIT_SYMBOL",
]


class ValueParseError(ValueError):
    """Text that is not a component value; the message quotes the text."""

    def __init__(self, text: str, why: str = "not a value"):
        self.text = text
        self.why = why
        super().__init__(f"{text!r}: {why}")


ValueError_ = ValueParseError  # short alias kept for callers that catch by family

# Multipliers of the SI prefixes (SI Brochure, 9th edition).  "K" is accepted for kilo and
# "meg" for mega because people (and SPICE decks) write them; "M" is mega and "m" is milli.
PREFIX_EXP = {
    "f": -15,
    "p": -12,
    "n": -9,
    "u": -6,
    "µ": -6,  # U+00B5 MICRO SIGN
    "μ": -6,  # U+03BC GREEK SMALL LETTER MU
    "m": -3,
    "k": 3,
    "K": 3,
    "M": 6,
    "G": 9,
    "T": 12,
}


def _scaled(number: str, exp: int) -> float:
    """Decimal text times 10**exp without binary rounding noise ('4.7', -9 -> 4.7e-09 exactly as typed)."""
    if "e" in number.lower():
        mant, e = number.lower().split("e")
        return float(f"{mant}e{int(e) + exp}")
    return float(f"{number}e{exp}")

# Unit words and symbols, normalised to one canonical name each.
_UNIT_WORDS = {
    "ohm": "ohm", "ohms": "ohm", "Ω": "ohm", "Ω": "ohm", "R": "ohm", "r": "ohm",
    "f": "F", "F": "F", "farad": "F", "farads": "F",
    "v": "V", "V": "V", "volt": "V", "volts": "V", "vdc": "V", "VDC": "V", "Vdc": "V",
    "w": "W", "W": "W", "watt": "W", "watts": "W",
    "a": "A", "A": "A", "amp": "A", "amps": "A", "ampere": "A", "amperes": "A",
    "hz": "Hz", "Hz": "Hz", "HZ": "Hz", "hertz": "Hz",
    "%": "%", "percent": "%",
}

UNIT_SYMBOL = {"ohm": "Ω", "F": "F", "V": "V", "W": "W", "A": "A", "Hz": "Hz", "%": "%"}


@dataclass(frozen=True)
class Quantity:
    """A parsed value: the number in SI base units and the unit it was written with (or None)."""

    value: float
    unit: str | None


_NUM = r"(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_PREFIX_CHARS = "pnuµμmkKMGTf"
# IEC 60062 letter code: the prefix letter (or R for the unit) stands where the decimal point goes.
_CODE_RE = re.compile(rf"^(\d*)([{_PREFIX_CHARS}RrF])(\d*)$")
# number, optional prefix (or 'meg'), optional unit word.
_PLAIN_RE = re.compile(
    rf"^({_NUM})(?:(meg|MEG|Meg)|([{_PREFIX_CHARS}]))?([A-Za-zΩΩ%]*)$"
)
_FRACTION_RE = re.compile(r"^(\d+)\s*/\s*(\d+)\s*([A-Za-zΩΩ%]*)$")


def _unit_of(word: str, text: str) -> str | None:
    if word == "":
        return None
    if word in _UNIT_WORDS:
        return _UNIT_WORDS[word]
    low = word.lower()
    if low in _UNIT_WORDS:
        return _UNIT_WORDS[low]
    raise ValueParseError(text, f"unknown unit {word!r}")


def _check_unit(q: Quantity, expect: str | None, text: str) -> Quantity:
    if expect is not None and q.unit is not None and q.unit != expect:
        raise ValueParseError(text, f"expected a value in {UNIT_SYMBOL.get(expect, expect)}, got {UNIT_SYMBOL.get(q.unit, q.unit)}")
    return q


def parse_quantity(text: object, expect: str | None = None) -> Quantity:
    """Read one value with its unit, e.g. '4k7', '4.7 kΩ', '100nF', '1/4 W', '5 %', '2R2'.

    ``expect`` names the unit the caller wants ('ohm', 'F', 'V', 'W', 'A', 'Hz', '%'): a
    different unit written in the text is an error; no unit written is taken as ``expect``.
    A bare letter-code number such as '4n7' has no unit until the caller gives one.
    """
    if isinstance(text, bool):
        raise ValueParseError(str(text))
    if isinstance(text, (int, float)):
        if not math.isfinite(float(text)):
            raise ValueParseError(str(text), "not a finite number")
        return Quantity(float(text), expect)
    if not isinstance(text, str):
        raise ValueParseError(str(text)[:MAX_VALUE_CHARS])
    if len(text) > MAX_VALUE_CHARS:
        # nothing that long is a value, and reading it would take time that grows with its square
        raise ValueParseError(text[:MAX_VALUE_CHARS] + "…", f"too long to be a value ({len(text):,} characters)")
    original = text
    s = re.sub(r"\s+", "", text)
    if s.count(",") == 1 and "." not in s:  # decimal comma: '4,7k'
        s = s.replace(",", ".")
    s = s.lstrip("+")
    if not s:
        raise ValueParseError(original, "empty")
    q = _parse_compact(s, original)
    if not math.isfinite(q.value):
        raise ValueParseError(original, "too large for a number")
    if q.value == 0.0 and re.search(r"[1-9]", re.split(r"[eE]", s)[0]):
        raise ValueParseError(original, "too small for a number")
    if q.unit is None and expect is not None:
        q = Quantity(q.value, expect)
    return _check_unit(q, expect, original)


def _parse_compact(s: str, original: str) -> Quantity:
    m = _FRACTION_RE.match(s)
    if m:
        num, den = int(m.group(1)), int(m.group(2))
        if den == 0:
            raise ValueParseError(original, "division by zero")
        return Quantity(float(Fraction(num, den)), _unit_of(m.group(3), original))

    # Letter code, possibly followed by a unit: '4k7', '4k7Ω', '2R2', 'R47', '4n7F', '470R'.
    for split in range(len(s), 0, -1):
        head, tail = s[:split], s[split:]
        m = _CODE_RE.match(head)
        if not m or (m.group(1) == "" and m.group(3) == ""):
            continue
        if m.group(3) == "" and m.group(2) not in "Rr":
            continue  # '4k' is plain prefix notation, handled below
        if m.group(2) == "F" and not (m.group(1) and m.group(3)):
            continue  # 'F' marks the decimal point only between digits ('1F5'); '10F' is ten farads
        try:
            tail_unit = _unit_of(tail, original)
        except ValueParseError:
            continue
        whole, letter, frac = m.group(1) or "0", m.group(2), m.group(3)
        number = f"{whole}.{frac}" if frac else whole
        if letter in "Rr":
            if tail_unit not in (None, "ohm"):
                raise ValueParseError(original, "R marks ohms and cannot take another unit")
            return Quantity(float(number), "ohm")
        if letter == "F":
            return Quantity(float(number), "F")
        return Quantity(_scaled(number, PREFIX_EXP[letter]), tail_unit)

    m = _PLAIN_RE.match(s)
    if not m:
        raise ValueParseError(original)
    number = m.group(1)
    if m.group(2):
        exp = 6
        unit_word = m.group(4)
    elif m.group(3):
        prefix, unit_word = m.group(3), m.group(4)
        # 'f' alone after a number is farad in this trade ('10f' is rare; '10uF' common), so a
        # lone trailing 'f'/'F' is the unit, not femto.
        if prefix == "f" and unit_word == "":
            return Quantity(float(number), "F")
        exp = PREFIX_EXP[prefix]
        # A word that starts with a prefix letter but is itself a unit ('mohm' is milliohm, 'ms'
        # is not ours): try the unit reading of prefix+word first when that is a known unit.
        joined = prefix + unit_word
        if unit_word and joined.lower() in _UNIT_WORDS and unit_word.lower() not in _UNIT_WORDS:
            return Quantity(float(number), _UNIT_WORDS[joined.lower()])
    else:
        exp = 0
        unit_word = m.group(4)
    unit = _unit_of(unit_word, original)
    if unit == "%":
        return Quantity(_scaled(number, exp - 2), "%")
    return Quantity(_scaled(number, exp), unit)


def implied_unit(text: object) -> str | None:
    """Ohm or farad from how a value is written when it names no unit: the R code or a k/M/G prefix
    means ohms (nobody stocks kilofarads), a p/n/µ prefix means farads (nor nano-ohms); else None."""
    try:
        q = parse_quantity(text)
    except ValueParseError:
        return None
    if q.unit in ("ohm", "F"):
        return q.unit
    if q.unit is not None or not isinstance(text, str):
        return None
    letters = re.sub(r"[\d.\s,eE+-]", "", text)
    if letters in ("k", "K", "M", "meg", "MEG", "Meg", "G"):
        return "ohm"
    if letters in ("p", "n", "u", "µ", "μ"):
        return "F"
    return None


def parse_value(text: object, expect: str | None = None) -> float:
    """The number of ``parse_quantity`` alone, in SI base units."""
    return parse_quantity(text, expect).value


def parse_tolerance(text: object) -> float:
    """A tolerance as a fraction: '5%', '±1 %', '0.05', 5 (a bare number above 1 is a percent)."""
    percent = False
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        t = float(text)
    else:
        s = str(text).strip().lstrip("±").replace("+/-", "").replace("+-", "").strip()
        if not s:
            raise ValueParseError(str(text), "empty tolerance")
        q = parse_quantity(s)
        if q.unit not in (None, "%"):
            raise ValueParseError(str(text), "a tolerance is a percentage or a fraction")
        t, percent = q.value, q.unit == "%"
    if not math.isfinite(t) or t < 0:
        raise ValueParseError(str(text), "a tolerance must be zero or more")
    if t >= 1.0 and not percent:  # '5' in a tolerance column means 5 %; '5 %' is already a fraction
        t = t / 100.0
    if t >= 1.0:
        raise ValueParseError(str(text), f"{t * 100:g} % is not below 100 %")
    return t


_TOL_TAIL = re.compile(r"^(.*?)[\s/]*(?:±|\+/-|\+-)?\s*(\d+(?:\.\d+)?)\s*%\s*$")


def parse_value_and_tolerance(text: object, expect: str | None = None) -> tuple[float, float | None]:
    """Read '4k7 5%', '4.7k ±1%', '100n 10 %' or a plain value; tolerance None when absent."""
    if not isinstance(text, str):
        return parse_value(text, expect), None
    m = _TOL_TAIL.match(text.strip())
    if m and m.group(1).strip():
        return parse_value(m.group(1), expect), parse_tolerance(m.group(2) + "%")
    return parse_value(text, expect), None


def _engineering(value: float, digits: int = 4) -> tuple[float, str]:
    if value == 0 or not math.isfinite(value):
        return value, ""
    exp3 = int(math.floor(math.log10(abs(value)) / 3.0)) * 3
    exp3 = max(-15, min(12, exp3))
    prefixes = {-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}
    mant = value / 10.0**exp3
    # rounding can carry into the next decade group (999.96 -> 1000)
    if abs(float(f"{mant:.{digits}g}")) >= 1000 and exp3 < 12:
        exp3 += 3
        mant = value / 10.0**exp3
    return mant, prefixes[exp3]


def _trim(x: float, digits: int) -> str:
    text = f"{x:.{digits}g}"
    if "e" in text:
        text = f"{x:.{digits}f}".rstrip("0").rstrip(".")
    return text


def format_si(value: float | None, unit: str | None = "ohm", digits: int = 4) -> str:
    """Engineering notation for people: 4700, 'ohm' -> '4.7 kΩ'; 2.2e-8, 'F' -> '22 nF'."""
    if value is None:
        return "—"
    if unit == "%":
        return f"{_trim(value * 100.0, digits)} %"
    mant, prefix = _engineering(value, digits)
    sym = UNIT_SYMBOL.get(unit, unit or "")
    return f"{_trim(mant, digits)} {prefix}{sym}".rstrip()


def format_code(value: float, unit: str = "ohm", ascii_only: bool = False, digits: int = 3) -> str:
    """The IEC 60062 letter code: 4700 -> '4k7', 2.2 -> '2R2', 0.47 -> 'R47', 4.7e-9 F -> '4n7'.

    Resistors use R for the unit below 1 kΩ; other units use the SI prefix letter, with 'u'
    in place of 'µ' when ``ascii_only``.
    """
    if value <= 0 or not math.isfinite(value):
        raise ValueError(f"cannot write {value!r} in the letter code")
    mant, prefix = _engineering(value, digits)
    if unit == "ohm" and prefix == "":
        letter = "R"
    elif unit == "ohm" and prefix == "m":
        mant, letter = value, "R"
    else:
        letter = prefix or {"F": "F", "V": "V", "W": "W"}.get(unit, "R")
        if letter == "µ" and ascii_only:
            letter = "u"
    text = _trim(round(mant, 10), digits)
    if "." in text:
        whole, frac = text.split(".")
        whole = "" if whole == "0" else whole
        return f"{whole}{letter}{frac}"
    if len(text) == 1:  # one significant digit: '1k0', '1M0', '1R0', '2n0'
        return f"{text}{letter}0"
    return f"{text}{letter}"


# --- the trade's notation, exactly --------------------------------------------------------------
#
# The files drawerfit writes for people hold values as people write them ('4k7', '47µ', '1 %',
# '250 mW').  ``trade_code`` and ``trade_si`` write a float either exactly (its shortest decimal
# digits, so that ``parse_value`` gives back the very same float) or rounded to a number of
# significant digits; the decimal arithmetic is exact, so no binary noise creeps in.

_ENG_PREFIX = {-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}


def rounded(value: float, digits: int | None = None) -> Decimal:
    """The float as a decimal: its shortest round-trip digits, or rounded half up to ``digits``
    significant digits (trailing zeros dropped)."""
    d = Decimal(repr(float(value)))
    if digits is not None:
        d = Context(prec=digits, rounding=ROUND_HALF_UP).plus(d)
    return d.normalize()


def significant_digits(value: float) -> int:
    """How many significant digits the shortest decimal that reads back as ``value`` has."""
    return len(rounded(value).as_tuple().digits)


def _plain(d: Decimal) -> str:
    text = format(d.normalize(), "f")
    return text.rstrip("0").rstrip(".") if "." in text else text


def _exp3(d: Decimal) -> int:
    return max(-15, min(12, (d.adjusted() // 3) * 3)) if d != 0 else 0


def trade_code(value: float, unit: str = "ohm", digits: int | None = None) -> str:
    """The IEC 60062 letter code, exact (``digits`` None) or rounded: 4700 -> '4k7', 4.7e-5 F ->
    '47µ', 0.47 -> 'R47', 4753 -> '4k753'.  Reads back through ``parse_value`` to the float it
    stands for (exactly, when ``digits`` is None)."""
    if not (math.isfinite(value) and value > 0):
        raise ValueError(f"cannot write {value!r} in the letter code")
    d = rounded(value, digits)
    exp3 = _exp3(d)
    if unit == "ohm" and exp3 <= 0:
        exp3, letter = 0, "R"
    else:
        letter = _ENG_PREFIX[exp3] or ("F" if unit == "F" else "R")
    text = _plain(d.scaleb(-exp3))
    if "." in text:
        whole, frac = text.split(".")
        code = f"{'' if whole == '0' else whole}{letter}{frac}"
    else:
        code = f"{text}{letter}0" if len(text) == 1 else f"{text}{letter}"
    expect = unit if unit in ("ohm", "F") else None
    try:
        if parse_value(code, expect) == float(d):
            return code
    except ValueParseError:
        pass
    return trade_si(value, unit, digits)  # e.g. femtofarads, where 'f' alone would read as farad


def trade_si(value: float, unit: str | None, digits: int | None = None) -> str:
    """SI notation with the unit, exact (``digits`` None) or rounded: 0.0045 A -> '4.5 mA',
    12 V -> '12 V', 0.01 '%' -> '1 %'; reads back through ``parse_value`` to the float."""
    d = rounded(value, digits)
    if unit == "%":
        return f"{_plain(d.scaleb(2))} %"
    sym = UNIT_SYMBOL.get(unit, unit or "")
    exp3 = _exp3(d) if sym else 0
    return f"{_plain(d.scaleb(-exp3))} {_ENG_PREFIX[exp3]}{sym}".rstrip()


def format_percent(fraction: float | None, digits: int = 3) -> str:
    """A tolerance or share for people: 0.01 -> '1 %', 0.005 -> '0.5 %', 0.0328 -> '3.28 %'."""
    if fraction is None or not math.isfinite(fraction):
        return "—"
    return trade_si(fraction, "%", digits)
