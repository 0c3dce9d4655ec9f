"""Reading and writing the values a person types: ohms, farads, hertz, seconds, volts.

Text is matched against our own grammar first (a number, an optional SI
prefix, an optional unit; or the IEC 60062 letter-for-decimal code; or the
capacitor three-digit code), so nothing is ever evaluated. The prefix is
applied exactly in decimal. The units people type most (Ω, F, Hz, s, V, A)
are SI base units with a factor of exactly 1, so they need no unit library;
pint is loaded only for the others (minutes, hours, beats or turns per
minute) and gives each one's factor to SI base units, cached per unit: one
registry for the whole program, created on first use (building it takes
about 0.4 s).

References: IEC 60062:2016 (letter and digit code for resistors and
capacitors); BIPM SI Brochure, 9th ed., table 7 (SI prefixes).
"""

from __future__ import annotations

import math
import re
import unicodedata
from dataclasses import dataclass
from decimal import Decimal
from functools import cache, lru_cache
from typing import TYPE_CHECKING, Literal

from core.errors import InputError
from core.preferred_numbers import E24_FIGURES

if TYPE_CHECKING:
    import pint

Quantity = Literal["resistance", "capacitance", "frequency", "period", "voltage", "current", "time"]

MAX_TEXT = 40
"""Longest value text accepted; anything longer is junk, not a part value."""

# The words a person may type for each quantity's SI base unit (lower-cased lookups;
# "R" is the IEC 60062 ohm marker). Each is the SI unit itself: factor exactly 1.
_UNITS: dict[Quantity, tuple[str, ...]] = {
    "resistance": ("ω", "ohm", "ohms", "r"),
    "capacitance": ("f",),
    "frequency": ("hz",),
    "period": ("s", "sec"),
    "time": ("s", "sec"),
    "voltage": ("v",),
    "current": ("a",),
}
_SYMBOL = {
    "resistance": "Ω",
    "capacitance": "F",
    "frequency": "Hz",
    "period": "s",
    "time": "s",
    "voltage": "V",
    "current": "A",
}
# Units for slow things (issue 14): what a person types -> the unit pint converts.
# A revolution or a beat is one cycle, so rpm and bpm are counted per minute (pint's own
# "rpm" is an angular velocity, 2π rad/min, not a frequency).
_SLOW_UNITS: dict[str, tuple[Quantity, str]] = {
    **dict.fromkeys(("min", "mins", "minute", "minutes"), ("period", "minute")),
    **dict.fromkeys(("h", "hr", "hrs", "hour", "hours"), ("period", "hour")),
    **dict.fromkeys(("bpm", "rpm", "/min"), ("frequency", "1 / minute")),
}
_PREFIX_EXP = {"p": -12, "n": -9, "u": -6, "µ": -6, "μ": -6, "m": -3, "": 0,
               "k": 3, "K": 3, "M": 6, "meg": 6, "MEG": 6, "Meg": 6, "G": 9}
_FORMAT_PREFIX = {-12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G"}

_NUMBER = r"(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,3})?"
_PLAIN = re.compile(
    rf"^(?P<num>{_NUMBER})\s*(?P<prefix>meg|MEG|Meg|[pnuµμmkKMG]?)\s*(?P<unit>[a-zA-ZΩ]*)$",
    re.ASCII)
# IEC 60062: the multiplier letter stands where the decimal point would be.
_LETTER = re.compile(
    r"^(?P<int>\d*)(?P<letter>[RrKkMGpnuµμm])(?P<frac>\d+)\s*(?P<unit>[a-zA-ZΩ]*)$", re.ASCII)
_LETTER_EXP_RES = {"R": 0, "r": 0, "K": 3, "k": 3, "M": 6, "G": 9}
_LETTER_EXP_CAP = {"p": -12, "n": -9, "u": -6, "µ": -6, "μ": -6, "m": -3}
_SLOW = re.compile(rf"^(?P<num>{_NUMBER})\s*(?P<unit>[a-zA-Z/]+)$", re.ASCII)
_CAP_CODE = re.compile(r"^(?P<sig>\d{2})(?P<exp>\d)$", re.ASCII)
_CONTROL = re.compile(r"[\x00-\x1f\x7f]")


@cache
def registry() -> pint.UnitRegistry:
    """The program's one unit registry, built on first use (pint import is slow)."""
    import pint

    return pint.UnitRegistry()


@cache
def _unit_factor(unit: str) -> float:
    """pint's factor from ``unit`` to SI base units, asked once per unit."""
    return float(registry().Quantity(1.0, unit).to_base_units().magnitude)


def _scaled(number: str, exponent: int) -> float:
    """``number`` × 10^exponent, exact in decimal: ``100n`` is 1e-07, not 1.0…01e-07.

    Every unit in ``_UNITS`` is an SI base unit (factor exactly 1).
    """
    return float(Decimal(number).scaleb(exponent))


def _slow_unit(s: str, quantity: Quantity) -> float | None:
    """``2min``, ``0.5 h``, ``120bpm``, ``30rpm`` as SI (s or Hz), or None if not such a unit.

    A period unit where a frequency is asked is handled by the caller (the
    frequency is the period's reciprocal).
    """
    m = _SLOW.match(s)
    if not m or m["unit"].lower() not in _SLOW_UNITS:
        return None
    unit_quantity, pint_unit = _SLOW_UNITS[m["unit"].lower()]
    if quantity == "time":
        quantity = "period"
    if unit_quantity != quantity:
        return None
    return float(Decimal(m["num"])) * _unit_factor(pint_unit)


_NUMBER_CHANGING = ("<super>", "<sub>", "<fraction>")


def compatible_text(text: str) -> str:
    """``text`` in Unicode compatibility form (NFKC) where that keeps its meaning.

    The one rule for every value and count typed: OHM SIGN is Ω, fullwidth ４ｋ７ is
    4k7, a no-break space is a space; digits are then ASCII 0-9 only. Superscripts,
    subscripts and fractions keep their form (NFKC would read 10² as 102), so they
    are refused rather than misread. Reference: Unicode Standard Annex #15.
    """
    if text.isascii():
        return text
    return "".join(ch if unicodedata.decomposition(ch).startswith(_NUMBER_CHANGING)
                   else unicodedata.normalize("NFKC", ch) for ch in text)


def _clean(text: str, what: str) -> str:
    if not isinstance(text, str):
        raise InputError("expected text", text=repr(text), what=what)
    s = compatible_text(text).strip()
    if not s:
        raise InputError(f"empty; expected a {what}", text=text, what=what)
    if len(s) > MAX_TEXT:
        raise InputError(f"too long for a {what} (at most {MAX_TEXT} characters)",
                         text=text, what=what)
    if _CONTROL.search(s):
        raise InputError("contains control characters", text=text, what=what)
    # One decimal comma is a decimal point (European spreadsheets: "4,7k").
    if s.count(",") == 1 and "." not in s:
        s = s.replace(",", ".")
    return s


def _unit_ok(unit: str, quantity: Quantity) -> bool:
    return unit == "" or unit.lower() in _UNITS[quantity]


def _which_quantity(unit: str) -> str | None:
    for q, words in _UNITS.items():
        if unit.lower() in words:
            return q
    return None


def _finish(value: float, text: str, quantity: Quantity) -> float:
    if not math.isfinite(value):
        raise InputError(f"not a finite {quantity}", text=text, what=quantity)
    if value <= 0:
        raise InputError(f"a {quantity} must be greater than zero", text=text, what=quantity)
    return value


def _expected(quantity: Quantity) -> str:
    examples = {
        "resistance": "4.7k, 4k7, 470R, 1M0 or 22 kΩ",
        "capacitance": "100n, 0.1uF, 2n2, 4u7 or the code 104",
        "frequency": "38k, 1 kHz, 440Hz, 120bpm (or a period such as 2ms or 2min)",
        "period": "2ms, 0.5 s, 250us or 2min",
        "time": "2ms, 0.5 s, 250us or 2min",
        "voltage": "5V, 3.3 or 12 V",
        "current": "1mA, 10uA",
    }
    return f"expected a {quantity} such as {examples[quantity]}"


def parse_quantity(text: str, quantity: Quantity) -> float:
    """Parse ``text`` as ``quantity`` and return its SI magnitude (Ω, F, Hz, s, V, A).

    A frequency may also be given as a period (``2ms`` -> 500 Hz).
    """
    if not isinstance(text, str):
        raise InputError("expected text", text=repr(text), what=quantity)
    return _parse_cached(text, quantity)


@lru_cache(maxsize=4096)
def _parse_cached(text: str, quantity: Quantity) -> float:
    """Drawers repeat the same few hundred spellings; parse each once."""
    s = _clean(text, quantity)
    if s[0] in "-−":
        raise InputError(f"a {quantity} must be greater than zero", text=text, what=quantity)
    if quantity == "frequency":
        try:
            return _parse_one(s, text, "frequency")
        except InputError as freq_error:
            try:
                period = _parse_one(s, text, "period", bare_number=False)
            except InputError:
                raise freq_error from None
            return _finish(1.0 / period, text, "frequency")
    return _parse_one(s, text, quantity)


def _parse_one(s: str, text: str, quantity: Quantity, *, bare_number: bool = True) -> float:
    if quantity in ("frequency", "period", "time"):
        slow = _slow_unit(s, quantity)
        if slow is not None:
            return _finish(slow, text, quantity)
    m = _PLAIN.match(s)
    if m:
        unit = m["unit"]
        prefix = m["prefix"]
        # "1m" with no unit on a resistor is milliohm by SI; "470R" is the IEC ohm marker.
        if not _unit_ok(unit, quantity):
            # "5mHz"? the prefix may have swallowed the unit's first letter ("m" + "Hz" ok),
            # so anything left that is not our unit is wrong.
            other = _which_quantity(unit)
            if other:
                raise InputError(f"that is a {other}; {_expected(quantity)}", text=text,
                                 what=quantity)
            raise InputError(_expected(quantity), text=text, what=quantity)
        if quantity == "capacitance" and prefix == "" and unit == "":
            if "e" in m["num"].lower():
                # An exponent is unambiguous: 4.29e-07 is what a spreadsheet writes for farads.
                return _finish(_scaled(m["num"], 0), text, quantity)
            code = _CAP_CODE.match(m["num"])
            if code:
                # Third digit: the power of ten; 8 and 9 stand for 0.01 and 0.1.
                exp = {"8": -2, "9": -1}.get(code["exp"], int(code["exp"]))
                return _finish(int(code["sig"]) * 10.0**exp * 1e-12, text, quantity)
            raise InputError("a capacitance needs a prefix or unit (100n, 0.1uF), "
                             "a three-digit code (104) or farads with an exponent (1e-07)",
                             text=text, what=quantity)
        if not bare_number and prefix == "" and unit == "":
            raise InputError(_expected(quantity), text=text, what=quantity)
        return _finish(_scaled(m["num"], _PREFIX_EXP[prefix]), text, quantity)
    m = _LETTER.match(s)
    if m and m["int"] + m["frac"] and _unit_ok(m["unit"], quantity):
        table = _LETTER_EXP_RES if quantity == "resistance" else (
            _LETTER_EXP_CAP if quantity == "capacitance" else None)
        if table and m["letter"] in table:
            number = f"{m['int'] or '0'}.{m['frac']}"
            return _finish(_scaled(number, table[m["letter"]]), text, quantity)
    raise InputError(_expected(quantity), text=text, what=quantity)


def parse_resistance(text: str) -> float:
    """Ohms from ``4.7k``, ``4k7``, ``470R``, ``22 kΩ``."""
    return parse_quantity(text, "resistance")


def parse_capacitance(text: str) -> float:
    """Farads from ``100n``, ``0.1uF``, ``2n2``, ``104``."""
    return parse_quantity(text, "capacitance")


def parse_frequency(text: str) -> float:
    """Hertz from ``38k``, ``1 kHz``, or a period such as ``2ms``."""
    return parse_quantity(text, "frequency")


def parse_voltage(text: str) -> float:
    """Volts from ``5V``, ``3.3``."""
    return parse_quantity(text, "voltage")


def parse_percent(text: str, *, allow_zero: bool = True, what: str = "percentage") -> float:
    """A plain percentage (``1%``, ``0.5``, ``47 %``) as a number of percent."""
    s = _clean(text, what).rstrip("%").strip()
    if not re.fullmatch(_NUMBER, s):
        raise InputError(f"expected a {what} such as 1% or 0.5", text=text, what=what)
    value = float(s)
    if not math.isfinite(value) or value < 0 or (value == 0 and not allow_zero):
        raise InputError(f"expected a {what} above zero", text=text, what=what)
    return value


def split_range(text: str, what: str, example: str) -> tuple[str, str]:
    """``LO..HI`` (also ``…``, `` to ``, ``–``) as its two texts; InputError naming ``example``."""
    s = text.strip() if isinstance(text, str) else ""
    for sep in ("..", "…", " to ", "–"):
        if sep in s:
            lo_text, hi_text = s.split(sep, 1)
            return lo_text, hi_text
    raise InputError(f"expected a {what} such as {example}", text=text, what=what)


def _ordered(lo: float, hi: float, text: str, what: str) -> tuple[float, float]:
    if lo > hi:
        lo, hi = hi, lo
    if lo == hi:
        raise InputError(f"the {what}'s ends must differ", text=text, what=what)
    return lo, hi


def parse_band(text: str) -> tuple[float, float]:
    """A frequency band ``400..480``, ``400 Hz..480 Hz`` or ``1k-2k``: (low, high) in Hz."""
    lo_text, hi_text = split_range(text, "band", "400..480 or 1k..2kHz")
    return _ordered(parse_frequency(lo_text), parse_frequency(hi_text), text, "band")


def parse_voltage_range(text: str) -> tuple[float, float]:
    """A supply range ``3..4.5``, ``2.7V..3.3V``: (low, high) in V, both above zero."""
    lo_text, hi_text = split_range(text, "supply range", "3..4.5V")
    lo, hi = _ordered(parse_voltage(lo_text), parse_voltage(hi_text), text, "supply range")
    if not lo > 0:
        raise InputError("a supply must be above zero", text=text, what="supply range")
    return lo, hi


# °C unless a unit says otherwise; the names pint knows for each scale (° dropped first).
_TEMPERATURE_UNITS = {
    **dict.fromkeys(("", "c", "degc", "celsius"), "degC"),
    **dict.fromkeys(("f", "degf", "fahrenheit"), "degF"),
    **dict.fromkeys(("k", "kelvin"), "kelvin"),
}
_TEMPERATURE = re.compile(rf"^(?P<num>[+-]?{_NUMBER})\s*(?P<unit>[a-zA-Z]*)$", re.ASCII)


_TEMPERATURE_UNIT = re.compile(r"°?[a-zA-Z]+\s*$")


def parse_temperature(text: str) -> float:
    """A temperature ``-30``, ``85 °C``, ``104degF``, ``300K`` in °C (pint converts the scale)."""
    s = compatible_text(text) if isinstance(text, str) else ""
    m = _TEMPERATURE.match(s.replace("°", "").replace("\u2212", "-").strip())
    unit = _TEMPERATURE_UNITS.get(m["unit"].lower()) if m else None
    if not m or unit is None:
        raise InputError("expected a temperature such as -30, 85°C, 104degF or 300K",
                         text=text, what="temperature")
    value = float(m["num"])
    if unit != "degC":
        value = round(float(registry().Quantity(value, unit).to("degC").magnitude), 9)
    if not (math.isfinite(value) and value >= -273.15):
        raise InputError("a temperature must be above absolute zero", text=text,
                         what="temperature")
    return value


def parse_temperature_range(text: str) -> tuple[float, float]:
    """``-30..85``, ``32..104degF`` (a unit on either end applies to both): (low, high) in °C."""
    lo_text, hi_text = split_range(text, "temperature range", "-30..85 or 32..104degF")
    given = [m[0] for t in (hi_text, lo_text) if (m := _TEMPERATURE_UNIT.search(t))]
    if given:
        lo_text, hi_text = (t if _TEMPERATURE_UNIT.search(t) else t + given[0]
                            for t in (lo_text, hi_text))
    return _ordered(parse_temperature(lo_text), parse_temperature(hi_text), text,
                    "temperature range")


# ---------------------------------------------------------------- tolerances

@dataclass(frozen=True)
class Tolerance:
    """Allowed deviation as fractions: the part lies in [v (1 − minus), v (1 + plus)]."""

    minus: float
    plus: float

    @property
    def symmetric(self) -> bool:
        return math.isclose(self.minus, self.plus)

    def __str__(self) -> str:
        if self.symmetric:
            return f"±{_trim(self.plus * 100)}%"
        return f"+{_trim(self.plus * 100)}/-{_trim(self.minus * 100)}%"


def _trim(x: float) -> str:
    return f"{x:.3g}"


# IEC 60062:2016 table 2 (resistors and capacitors of 10 pF and above).
_LETTER_TOLERANCE_R = {"A": 0.05, "B": 0.1, "C": 0.25, "D": 0.5, "F": 1, "G": 2, "J": 5,
                       "K": 10, "M": 20}
_LETTER_TOLERANCE_C = {"F": (1, 1), "G": (2, 2), "H": (2.5, 2.5), "J": (5, 5), "K": (10, 10),
                       "M": (20, 20), "N": (30, 30), "Q": (10, 30), "T": (10, 50),
                       "S": (20, 50), "Z": (20, 80), "P": (0, 100)}
# IEC 60062: below 10 pF the letters are absolute, in picofarads.
_LETTER_TOLERANCE_C_SMALL = {"B": 0.1, "C": 0.25, "D": 0.5, "F": 1.0}

_ASYM = re.compile(rf"^\+\s*(?P<plus>{_NUMBER})\s*%?\s*/\s*[-−]\s*(?P<minus>{_NUMBER})\s*%?$")
_SYM = re.compile(rf"^(?:±|\+/-|\+-)?\s*(?P<pct>{_NUMBER})\s*%?$")


@lru_cache(maxsize=1024)
def parse_tolerance(text: str, kind: str = "R", value: float | None = None) -> Tolerance:
    """``5%``, ``±5%``, ``+80/-20%`` or an IEC 60062 letter for this part kind.

    ``kind`` is ``R``, ``P`` or ``C``; ``value`` (farads) is needed only for the
    absolute letters of capacitors below 10 pF.
    """
    s = _clean(text, "tolerance")
    letter = s.upper()
    if len(s) == 1 and letter.isalpha():
        if kind == "C":
            if value is not None and value < 10e-12 and letter in _LETTER_TOLERANCE_C_SMALL:
                frac = _LETTER_TOLERANCE_C_SMALL[letter] * 1e-12 / value
                return Tolerance(frac, frac)
            if letter in _LETTER_TOLERANCE_C:
                minus, plus = _LETTER_TOLERANCE_C[letter]
                return Tolerance(minus / 100, plus / 100)
        elif letter in _LETTER_TOLERANCE_R:
            pct = _LETTER_TOLERANCE_R[letter]
            return Tolerance(pct / 100, pct / 100)
        raise InputError(f"not an IEC 60062 tolerance letter for a {_KIND_WORD[kind]}",
                         text=text, what="tolerance")
    s = s.replace(",", ".")
    m = _ASYM.match(s)
    if m:
        tol = Tolerance(float(m["minus"]) / 100, float(m["plus"]) / 100)
    else:
        m = _SYM.match(s)
        if not m:
            raise InputError("expected a tolerance such as 5%, ±1%, +80/-20% or a letter "
                             "(F, G, J, K, M)", text=text, what="tolerance")
        pct = float(m["pct"]) / 100
        tol = Tolerance(pct, pct)
    if not (0 <= tol.minus < 1 and 0 <= tol.plus <= 10):
        raise InputError("tolerance out of range (below 100 % down)", text=text,
                         what="tolerance")
    return tol


_KIND_WORD = {"R": "resistor", "P": "potentiometer", "C": "capacitor"}


# ---------------------------------------------------------------- formatting

def format_quantity(value: float, quantity: Quantity, digits: int = 3) -> str:
    """Engineering notation with an SI prefix: ``4.7 kΩ``, ``100 nF``, ``38.0 kHz``.

    ``digits`` significant figures; trailing zeros are kept for frequency and
    time (they state precision), dropped for part values (``4.7 kΩ``).
    """
    symbol = _SYMBOL[quantity]
    if not math.isfinite(value):
        return f"— {symbol}"
    if quantity in ("period", "time") and 60 <= abs(value) < 3.6e8:  # min and h, to 1e5 h
        minutes = abs(value) < 3600
        text = f"{value / (60 if minutes else 3600):#.{digits}g}".rstrip(".")
        return f"{text} {'min' if minutes else 'h'}"
    if value == 0:
        return f"0 {symbol}"
    exp3 = int(math.floor(math.log10(abs(value)) / 3) * 3)
    # A 1 Hz blink reads as 0.986 Hz on the bench, not 986 mHz (down to 0.00100 Hz).
    lowest = 0 if quantity == "frequency" else -12
    if not lowest - 3 <= exp3 <= 9:
        return f"{value:.{digits - 1}e} {symbol}"  # beyond the prefixes: 1.30e-20 Hz
    exp3 = max(lowest, min(9, exp3))
    mantissa = value / 10.0**exp3
    decimals = max(0, digits - 1 - math.floor(math.log10(abs(mantissa))))
    decimals = min(decimals, 20)
    mantissa = round(mantissa, decimals)
    if abs(mantissa) >= 1000 and exp3 < 9:
        exp3 += 3
        mantissa /= 1000
        decimals = max(0, digits - 1 - math.floor(math.log10(abs(mantissa))))
    keep_zeros = quantity in ("frequency", "period", "time")
    text = f"{mantissa:.{decimals}f}"
    if not keep_zeros and "." in text:
        text = text.rstrip("0").rstrip(".")
    return f"{text} {_FORMAT_PREFIX[exp3]}{symbol}"


def format_part_value(value: float, kind: str, digits: int = 3) -> str:
    """A part's value by its kind: ``C`` in farads, ``R`` and ``P`` in ohms."""
    return format_quantity(value, "capacitance" if kind == "C" else "resistance", digits)


_CODE_LETTERS = {"R": ((1.0, "R"), (1e3, "k"), (1e6, "M"), (1e9, "G")),
                 "C": ((1e-12, "p"), (1e-9, "n"), (1e-6, "u"), (1e-3, "m"))}


def format_code(value: float, kind: str, digits: int = 3) -> str:
    """A part's value as a drawer cell is written: the IEC 60062 letter code, the letter
    standing for the decimal point (``4k7``, ``100R``, ``R47``, ``2n2``, ``100n``).

    References: IEC 60062:2016 §4 (letter and digit code for resistance and capacitance).
    """
    letters = _CODE_LETTERS["C" if kind == "C" else "R"]
    scale, letter = letters[0]
    for step, mark in letters:
        if value >= step * (1 - 1e-9):
            scale, letter = step, mark
    text = f"{float(f'{value / scale:.{digits}g}'):g}"
    if "e" in text:  # beyond the letters: plain SI, which the reader also takes
        return f"{value:.{digits}g}"
    whole, _, fraction = text.partition(".")
    return f"{'' if whole == '0' and fraction else whole}{letter}{fraction}"


_E24_LEADS = frozenset(E24_FIGURES)


def capacitor_code_value(text: str) -> float | None:
    """The capacitance [F] a bare number such as ``104`` means as a three-digit capacitor
    code (two E24 digits and a multiplier 1…9), else None: such a number is seldom
    meant as a resistor (``104`` is 100 nF, not 104 Ω).

    References: IEC 60062:2016 §5 (three-digit code in picofarads); IEC 60063 (E24).
    """
    t = text.strip()
    if len(t) != 3 or not (t.isascii() and t.isdigit()):
        return None
    lead, power = int(t[:2]), int(t[2])
    if lead not in _E24_LEADS or power == 0:
        return None
    return parse_capacitance(t)


def format_signed_pct(x: float, decimals: int = 2) -> str:
    """``+0.25 %``; a value that rounds to zero shows no sign (never ``-0.00 %``)."""
    text = f"{x:+.{decimals}f}"
    return f"{text[1:] if float(text) == 0 else text} %"


def format_resistance(ohms: float, digits: int = 3) -> str:
    return format_quantity(ohms, "resistance", digits)


def format_capacitance(farads: float, digits: int = 3) -> str:
    return format_quantity(farads, "capacitance", digits)


def format_frequency(hertz: float, digits: int = 3) -> str:
    return format_quantity(hertz, "frequency", digits)
