"""The texts drawn beside symbols: part values with SI prefixes and units, and block equivalents.

One place for the wording, so the canvas, the SVG writer and the command line agree: 4.7 kΩ,
100 nF, 10 mH, 5 V, 3.33 V ∠ 30° (µ is U+00B5, from engine.solve.units). At a frequency above DC a
source or equivalent value prints as a phasor, magnitude ∠ degrees; at DC as a signed real.
"""

from __future__ import annotations

import cmath
import math
from collections.abc import Iterable
from typing import Protocol

from ..errors import CircuitError
from ..solve.devices import DEVICE_KINDS, PARAMETERS, SYMBOLS, derived, make
from ..solve.kinds import CONTROLLED_BY_CURRENT, SOURCES
from ..solve.mna import describe_freq
from ..solve.tolerance import parse_tolerance
from ..solve.units import format_complex, format_phasor, parse_value
from .model import PlacedPart

__all__ = [
    "ELV_AC_RMS",
    "ELV_DC",
    "SAFETY_CAUTION",
    "UNITS",
    "above_extra_low_voltage",
    "block_caption",
    "derived_caption",
    "device_caption",
    "drawn_form",
    "value_caption",
]

#: Unit symbol of each kind's value (gains of voltage- and current-controlled sources are ratios).
UNITS: dict[str, str] = {
    "resistor": "Ω", "capacitor": "F", "inductor": "H", "impedance": "Ω",
    "voltage_source": "V", "current_source": "A", "vcvs": "V/V", "vccs": "S", "ccvs": "Ω",
    "cccs": "A/A",
}


class Equivalent(Protocol):
    """What a caption reads from engine.solve.equivalent's result."""

    voc: complex
    isc: complex
    z: complex
    has_thevenin: bool
    has_norton: bool


def value_caption(part: PlacedPart, *, ac: bool = False) -> str:
    """The value of ``part`` as drawn beside it: ``"4.7 kΩ"``, ``"5 V ∠ 30°"``,
    ``"100 Ω × current in R1"``, ``"k = 0.9 (L1, L2)"``. ``ac``: the analysis is above DC, so
    sources print as phasors.

    Text that cannot be read is shown as typed (building the circuit reports it); an ideal
    op-amp has no value and gives ``""``. A device part shows the parameters entered, in the
    form chosen (bias point or small-signal values), two to a line, lines parted by ``"\n"``.
    """
    if part.kind in DEVICE_KINDS:
        return device_caption(part)
    if part.kind == "opamp" or not part.value.strip():
        return ""
    try:
        value = parse_value(part.value, what=f"{part.designator} value")
        phase = float(parse_value(part.phase_deg)) if part.phase_deg.strip() else None
    except CircuitError:
        return part.value.strip()
    if part.kind == "coupling":
        named = f" ({', '.join(part.couples)})" if part.couples else ""
        return f"k = {value:.4g}{named}{_tolerance_suffix(part)}"
    unit = UNITS[part.kind]
    if part.kind in SOURCES and (ac or phase is not None):
        phasor = value if phase is None else cmath.rect(value, math.radians(phase))
        text = format_phasor(phasor, unit)
    else:
        text = format_complex(value, unit)
    if part.kind in CONTROLLED_BY_CURRENT and part.control:
        text = f"{text} × current in {part.control}"
    return text + _tolerance_suffix(part)


def _tolerance_suffix(part: PlacedPart) -> str:
    """`` ±1 %`` where the part carries a readable tolerance."""
    if not part.tolerance.strip():
        return ""
    try:
        return f" ±{parse_tolerance(part.tolerance) * 100:g} %"
    except CircuitError:
        return f" {part.tolerance.strip()}"


def device_caption(part: PlacedPart) -> str:
    """``"I_C = 1 mA, β = 100\nV_A = 50 V"``: a device part's entered parameters. A measured
    source shows the Thevenin values it stands for and what they came from."""
    if part.kind == "measured_source":
        return _measured_caption(part)
    units = {name: unit for name, _, unit in PARAMETERS[part.kind]}
    shown = []
    for name, text in part.params:
        if not text.strip():
            continue
        try:
            value = parse_value(text)
        except CircuitError:
            shown.append(f"{SYMBOLS[name]} = {text.strip()}")
            continue
        # λ in 1/V reads badly with a prefix (20 m1/V): a plain number
        text = f"{value:g} 1/V" if name == "lam" else format_complex(value, units[name])
        shown.append(f"{SYMBOLS[name]} = {text}")
    return "\n".join(", ".join(shown[i:i + 2]) for i in range(0, len(shown), 2))


#: The derived values shown for each device kind: (key of engine.solve.devices.derived, symbol,
# unit).
_DERIVED = {
    "bjt": (("gm", "gm", "S"), ("rpi", "rπ", "Ω"), ("ro", "ro", "Ω"), ("beta", "β", ""),
            ("vt", "V_T", "V")),
    "mosfet": (("gm", "gm", "S"), ("ro", "ro", "Ω")),
    "opamp_finite": (("a0", "A0", ""), ("pole_hz", "pole", "Hz"), ("rin", "Rin", "Ω"),
                     ("rout", "Rout", "Ω")),
    "measured_source": (("voc", "Voc", "V"), ("r", "R", "Ω"), ("u_voc", "u(Voc)", "V"),
                        ("u_r", "u(R)", "Ω"), ("residual", "residual (rms)", "V")),
}


def _measured_caption(part: PlacedPart) -> str:
    given = {k: v for k, v in part.params if v.strip()}
    try:
        values = derived(make(part.designator or "source", part.kind, ("a", "b"), given))
    except CircuitError:
        return "no fit: see the inspector"
    def pm(key: str, unit: str) -> str:
        u = values[f"u_{key}"]
        shown = format_complex(values[key], unit)
        return shown if math.isnan(u) else f"{shown} ± {format_complex(u, unit, 2)}"
    source = (f"fitted to {values['points']} readings" if "table" in given
              else f"from Voc and V_L under {format_complex(parse_value(given['rl']), 'Ω')}")
    return f"Voc = {pm('voc', 'V')}\nR = {pm('r', 'Ω')}\n{source}"


def derived_caption(part: PlacedPart) -> str:
    """The small-signal values a device part's model uses, one per line (``"gm = 38.68 mS"``),
    or what is missing or wrong in its parameters. ``inf`` reads "∞ (left out)"."""
    try:
        device = make(part.designator or part.kind, part.kind, ("a", "b", "c"),
                      {k: v for k, v in part.params if v.strip()})
    except CircuitError as e:
        return str(e)
    values = derived(device)
    lines = []
    for key, sym, unit in _DERIVED[part.kind]:
        if key not in values:
            continue
        v = values[key]
        if math.isnan(v):
            continue
        shown = "∞ (left out)" if math.isinf(v) else format_complex(v, unit)
        lines.append(f"{sym} = {shown}")
    return "\n".join(lines)


def drawn_form(eq: Equivalent, form: str) -> str:
    """The form to draw: ``form`` where it exists, otherwise the other one (an ideal current
    source at the port has no Thevenin form, a short has no Norton form)."""
    if form == "thevenin" and not eq.has_thevenin:
        return "norton"
    if form == "norton" and not eq.has_norton:
        return "thevenin"
    return form


def block_caption(eq: Equivalent, form: str, freq: float) -> tuple[str, ...]:
    """Lines shown beside a collapsed block: the source value of the drawn form, its impedance,
    and the frequency they hold at, e.g. ``("Voc = 3.33 V ∠ 0°", "Z = 1.2 kΩ", "at 1 kHz")``."""
    show = format_phasor if freq > 0 else format_complex
    if drawn_form(eq, form) == "thevenin":
        source = f"Voc = {show(eq.voc, 'V')}"
    else:
        source = f"Isc = {show(eq.isc, 'A')}"
    return (source, f"Z = {format_complex(eq.z, 'Ω')}", f"at {describe_freq(freq)}")


#: Extra-low voltage limits (common practice, IEC 61140 / IEC 60449 band I): 50 V AC rms and
#: 120 V ripple-free DC. Above them Portcut shows :data:`SAFETY_CAUTION` once, without blocking.
ELV_AC_RMS = 50.0
ELV_DC = 120.0
SAFETY_CAUTION = ("Caution: this circuit holds voltages above extra-low voltage (50 V AC rms, "
                  "120 V DC). These results say nothing about electrical safety; local codes "
                  "and licensed practice govern such work.")


def above_extra_low_voltage(volts: Iterable[complex], freq: float, basis: str = "peak") -> bool:
    """Whether any of the voltage phasors ``volts`` exceeds extra-low voltage at ``freq`` hertz:
    at DC its magnitude against :data:`ELV_DC`; above DC its rms value (|V| / √2 for peak
    phasors) against :data:`ELV_AC_RMS`. Non-finite values are skipped."""
    for v in volts:
        magnitude = abs(complex(v))
        if not math.isfinite(magnitude):
            continue
        if freq == 0 and magnitude > ELV_DC:
            return True
        rms = magnitude / math.sqrt(2) if basis == "peak" else magnitude
        if freq > 0 and rms > ELV_AC_RMS:
            return True
    return False
