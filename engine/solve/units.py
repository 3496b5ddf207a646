"""Reading and writing component values: SI prefixes, IEC 60062 letter codes, engineering format.

Accepted input (numbers pass through unchanged; strings are read as below):

* plain decimals and exponents: ``"4700"``, ``"4.7e3"``, ``"-2.5"``;
* an SI prefix after the number (BIPM SI Brochure, 9th ed.), case sensitive: ``q r y z a f p n``,
  ``u``/``µ`` (U+00B5) /``μ`` (U+03BC) micro, ``m`` milli, ``k`` kilo, ``M G T P E Z Y``:
  ``"100n"``, ``"4.7k"``, ``"2M"``. The 2022 prefixes ronna ``R`` and quetta ``Q`` are not
  accepted as suffixes, because ``R`` is the IEC 60062 unit multiplier (``"1R"`` is 1 Ω) and such
  magnitudes never occur in circuit values;
* an IEC 60062 letter code, the letter standing for the decimal point: ``"4k7"``/``"4K7"`` =
  4700, ``"2R2"`` = 2.2, ``"R47"`` = 0.47, ``"1M0"`` = 1e6, ``"4n7"`` = 4.7e-9, ``"1µ0"``,
  ``"3L3"`` = 3.3e-3 (``L`` milli, resistance code), ``"1F0"`` = 1 (farad). A trailing IEC 60062
  tolerance letter (``B C D F G J K M``) is accepted only after a complete letter code
  (``"4K7J"``): ``K`` and ``M`` inside or right after the digits are multipliers, so ``"47K"`` is
  47 kΩ;
* an optional unit symbol after the prefix or code, with or without a space: ``"4.7 kΩ"``,
  ``"100nF"``, ``"10 mH"``, ``"1 kHz"``, ``"5V"``, ``"2 mA"``, ``"1 mS"``, ``"ohm"``. Given the
  field's unit (``unit=``, ``""`` for a plain ratio), a symbol must be that unit: ``"10uF"`` is
  refused as a resistance.

A bad value raises :class:`ValueParseError` that quotes the text and says what is accepted.
Output writes micro as ``µ`` (U+00B5 MICRO SIGN), never ``u``.
"""

from __future__ import annotations

import cmath
import math
import re
from decimal import Decimal
from numbers import Complex, Real

from ..errors import ValueParseError
from .kinds import VALUE_UNITS

__all__ = [
    "NOISE_RTOL",
    "PLAUSIBLE",
    "SI_PREFIXES",
    "UNDEFINED",
    "VALUE_UNITS",
    "denoised",
    "format_complex",
    "format_eng",
    "format_phasor",
    "implausible",
    "parse_frequency",
    "parse_value",
]

# Powers of ten, kept as integers so that "4n7" reads as exactly the float nearest 4.7e-9.
SI_PREFIXES: dict[str, int] = {
    "q": -30, "r": -27, "y": -24, "z": -21, "a": -18, "f": -15, "p": -12, "n": -9,
    "u": -6, "µ": -6, "μ": -6, "m": -3, "": 0, "k": 3, "K": 3,
    "M": 6, "G": 9, "T": 12, "P": 15, "E": 18, "Z": 21, "Y": 24,
}
# IEC 60062 multiplier letters that may stand for the decimal point (R and L only there).
_CODE_LETTERS: dict[str, int] = {
    "R": 0, "L": -3, "F": 0, "p": -12, "n": -9, "u": -6, "µ": -6, "μ": -6,
    "m": -3, "k": 3, "K": 3, "M": 6, "G": 9, "T": 12,
}
_UNITS = ("Ω", "ohm", "ohms", "Ohm", "F", "H", "V", "A", "Hz", "S", "W")
_OHMS = ("ohm", "ohms", "Ohm")  # spellings of Ω
_TOLERANCE = "BCDFGJKM"

_NUMBER = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_PREFIX = "|".join(sorted((re.escape(p) for p in SI_PREFIXES if p), key=len, reverse=True))
_UNIT = "|".join(sorted((re.escape(u) for u in _UNITS), key=len, reverse=True))
_CODE = "|".join(re.escape(c) for c in _CODE_LETTERS)
_DECIMAL_RE = re.compile(rf"^({_NUMBER})\s*({_PREFIX})?\s*({_UNIT})?$")
_LETTER_CODE_RE = re.compile(rf"^([+-]?)(\d*)({_CODE})(\d+)([{_TOLERANCE}])?\s*({_UNIT})?$")
_BARE_R_RE = re.compile(rf"^({_NUMBER})R\s*({_UNIT})?$")

_HELP = (
    "use a number with an optional SI prefix (100n, 4.7k, 2M, 1e-3) "
    "or an IEC 60062 code (4k7, 2R2, R47, 4n7), optionally followed by a unit (4.7 kΩ)"
)


def parse_value(value: object, *, what: str = "value", unit: str | None = None,
                help_text: str = _HELP) -> float | complex:
    """Read a component value; numbers (real or complex) pass through.

    ``what`` names the field in the error message (e.g. ``"R1 resistance"``). ``unit``: the
    field's unit symbol ("" for a ratio); text carrying another unit is refused (None: any).
    Raises :class:`ValueParseError` quoting the text when it cannot be read, carries the wrong
    unit or is not finite; ``help_text`` says what is accepted.
    """
    if type(value) is float:  # the common case, ahead of the slower abstract-type checks
        if not math.isfinite(value):
            raise ValueParseError(f"{what}: {value!r} is not finite")
        return value
    if isinstance(value, bool):
        raise ValueParseError(f"{what}: {value!r} is not a number; {help_text}")
    if isinstance(value, Real):
        result: float | complex = float(value)
    elif isinstance(value, Complex):
        result = complex(value)
        if result.imag == 0:
            result = result.real
    elif isinstance(value, str):
        try:
            result = _parse_text(value, what, unit, help_text)
        except ArithmeticError:  # decimal.Overflow / InvalidOperation on absurd exponents
            raise ValueParseError(f"{what}: {value!r} is far out of range") from None
    else:
        raise ValueParseError(f"{what}: {value!r} is not a number or text; {help_text}")
    if not cmath.isfinite(result):
        raise ValueParseError(f"{what}: {value!r} is not finite")
    return result


def _parse_text(text: str, what: str, unit: str | None, help_text: str) -> float:
    s = text.strip()
    m = _DECIMAL_RE.match(s)
    if m:
        _check_unit(m.group(3), unit, what, s)
        return _scaled(m.group(1), SI_PREFIXES[m.group(2) or ""])
    m = _BARE_R_RE.match(s)
    if m:  # "470R", "1R": IEC 60062 unit multiplier at the end
        _check_unit(m.group(2), unit, what, s)
        return float(m.group(1))
    m = _LETTER_CODE_RE.match(s)
    if m and (m.group(2) or m.group(4)):
        _check_unit(m.group(6), unit, what, s)
        sign, whole, letter, frac = m.group(1), m.group(2) or "0", m.group(3), m.group(4)
        return _scaled(f"{sign}{whole}.{frac}", _CODE_LETTERS[letter])
    raise ValueParseError(f"{what}: cannot read {text!r}; {help_text}")


def _check_unit(given: str | None, unit: str | None, what: str, text: str) -> None:
    """Refuse a unit symbol other than the field's own (``unit`` None: no check)."""
    if given is None or unit is None:
        return
    symbol = "Ω" if given in _OHMS else given
    if symbol == unit:
        return
    expected = f"a value in {unit}" if unit else "a plain number without a unit"
    raise ValueParseError(f"{what}: {text!r} is in {symbol}, but this field takes {expected}")


def _scaled(number: str, exponent: int) -> float:
    return float(Decimal(number).scaleb(exponent))


#: Magnitudes (low, high) beyond which a part's value is most likely a slip (a wrong prefix); such
#: a value is still taken, with a warning. Zero is never flagged.
PLAUSIBLE: dict[str, tuple[float, float]] = {
    "resistor": (1e-6, 1e15), "impedance": (1e-6, 1e15), "capacitor": (1e-15, 1.0),
    "inductor": (1e-12, 1e3), "voltage_source": (1e-9, 1e6), "current_source": (1e-15, 1e4),
}


def implausible(kind: str, value: complex) -> str | None:
    """Why ``value`` (SI units) is an unusual magnitude for a ``kind`` part, or None."""
    if kind not in PLAUSIBLE or value == 0:
        return None
    low, high = PLAUSIBLE[kind]
    unit = VALUE_UNITS[kind]
    if abs(value) < low:
        return f"below {format_eng(low, unit)}, unusually small for a {kind.replace('_', ' ')}"
    if abs(value) > high:
        return f"above {format_eng(high, unit)}, unusually large for a {kind.replace('_', ' ')}"
    return None


_FREQUENCY_HELP = "give hertz as a number with an optional SI prefix (50, 1k, 2.5 MHz) or DC"


def parse_frequency(value: object) -> float:
    """Read an analysis frequency in hertz (``"1k"``, ``"10 kHz"``, ``"DC"`` = 0); must be >= 0."""
    if isinstance(value, str) and value.strip().upper() == "DC":
        return 0.0
    f = parse_value(value, what="frequency", unit="Hz", help_text=_FREQUENCY_HELP)
    if isinstance(f, complex) or f < 0:
        raise ValueParseError(f"frequency: {value!r} must be a real number of hertz, 0 or more")
    return f


#: How every output writes a quantity that does not exist (Voc without a Thevenin form, Isc
#: without a Norton form): the panel, the command-line tables and the CSV cells alike.
UNDEFINED = "undefined"

#: A component of a complex result smaller than this fraction of the larger component's magnitude
#: is rounding noise: the solution's own error scale is far above it.
NOISE_RTOL = 1e-12


def denoised(z: complex, scale: float | None = None) -> complex:
    """``z`` with a component below its error scale set to zero, and no negative zero.

    ``scale`` is the absolute error bound of ``z`` in its own units; None takes
    :data:`NOISE_RTOL` times the larger component's magnitude. Non-finite values pass through.
    Every output (panel, tables, CSV, JSON) shows results through this one function.
    """
    z = complex(z)
    if not cmath.isfinite(z):
        return z
    bound = NOISE_RTOL * max(abs(z.real), abs(z.imag)) if scale is None else scale
    re = 0.0 if abs(z.real) <= bound else z.real
    im = 0.0 if abs(z.imag) <= bound else z.imag
    return complex(re + 0.0, im + 0.0)  # -0.0 + 0.0 is +0.0


_FORMAT_PREFIXES = [(1e24, "Y"), (1e21, "Z"), (1e18, "E"), (1e15, "P"), (1e12, "T"), (1e9, "G"),
                    (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ"), (1e-9, "n"),
                    (1e-12, "p"), (1e-15, "f"), (1e-18, "a"), (1e-21, "z"), (1e-24, "y")]


def format_eng(value: float, unit: str = "", digits: int = 3) -> str:
    """Engineering notation with an SI prefix and unit: ``format_eng(4700, "Ω") == "4.7 kΩ"``.

    ``digits`` significant figures; trailing zeros are dropped. Infinity prints as ``∞``.
    """
    if math.isnan(value):
        return UNDEFINED
    if math.isinf(value):
        return f"{'-' if value < 0 else ''}∞ {unit}".rstrip()
    if value == 0:
        return f"0 {unit}".rstrip()
    mag = abs(value)
    threshold = 1 - 0.5 * 10**-digits  # 999.95 with 3 digits rounds up to 1 k, not 1000
    scale, prefix = next(((s, p) for s, p in _FORMAT_PREFIXES if mag >= s * threshold),
                         _FORMAT_PREFIXES[-1])
    scaled = float(f"{value / scale:.{digits}g}")
    if abs(scaled) >= 1000 and scale < 1e24:  # rounding carried into the next prefix
        return format_eng(math.copysign(abs(scaled) * scale, value), unit, digits)
    text = f"{scaled:.{digits}g}"
    if "e" in text:  # beyond the prefix table: positional digits, none lost (1e-30 -> 0.000001 y)
        text = format(Decimal(text), "f")
    return f"{text} {prefix}{unit}".rstrip()


def format_complex(z: complex, unit: str = "", digits: int = 4) -> str:
    """Rectangular form: ``"1 kΩ + j 2 kΩ"``; a purely real value prints as a real."""
    z = complex(z)
    if cmath.isinf(z):
        return format_eng(math.inf, unit, digits)
    if z.imag == 0:
        return format_eng(z.real, unit, digits)
    sign = "-" if z.imag < 0 else "+"
    return f"{format_eng(z.real, unit, digits)} {sign} j {format_eng(abs(z.imag), unit, digits)}"


def format_phasor(z: complex, unit: str = "", digits: int = 4) -> str:
    """Polar form, magnitude ∠ degrees: ``format_phasor(3.33, "V") == "3.33 V ∠ 0°"``."""
    z = complex(z.real, z.imag + 0.0)  # -0.0 + 0.0 is +0.0: a negation of a real reads 180°
    if cmath.isinf(z):
        return format_eng(math.inf, unit, digits)
    angle = math.degrees(cmath.phase(z)) if z != 0 else 0.0
    angle = 0.0 if abs(angle) < 5e-10 else angle
    return f"{format_eng(abs(z), unit, digits)} ∠ {float(f'{angle:.{digits}g}'):g}°"
