"""The electrical-safety caution: sources above extra-low voltage.

Extra-low voltage limits (common practice; IEC 61140 and IEC 60449 band I): 50 V AC rms and
120 V ripple-free DC. Above these the window says once, without blocking, that the analysis says
nothing about electrical safety. Qt-free.
"""

from __future__ import annotations

import math
from collections.abc import Iterable

from engine.errors import CircuitError
from engine.schematic import Document, Element, PlacedPart
from engine.units import parse_frequency, parse_value

__all__ = ["AC_RMS_LIMIT", "CAUTION", "DC_LIMIT", "above_extra_low_voltage"]

AC_RMS_LIMIT = 50.0
DC_LIMIT = 120.0

CAUTION = ("This sheet holds a source above extra-low voltage (50 V AC rms / 120 V DC). "
           "Portcut's results describe an ideal linear model only and say nothing about "
           "electrical safety: local codes and licensed practice govern work on such circuits.")


def _frequency(doc: Document) -> float:
    try:
        return parse_frequency(doc.analysis.freq)
    except CircuitError:
        return 0.0


def above_extra_low_voltage(doc: Document, elements: Iterable[Element] | None = None) -> list[str]:
    """Designators of the voltage sources (among ``elements``, default all) above extra-low
    voltage at the document's analysis: at DC the magnitude against 120 V; above DC the rms
    value against 50 V, where a peak phasor's rms is its magnitude over √2."""
    freq = _frequency(doc)
    rms_of_peak = doc.analysis.basis == "peak"
    found = []
    for e in doc.parts() if elements is None else elements:
        if not (isinstance(e, PlacedPart) and e.kind == "voltage_source"):
            continue
        try:
            magnitude = abs(parse_value(e.value))
        except CircuitError:
            continue
        if freq == 0:
            high = magnitude > DC_LIMIT
        else:
            high = (magnitude / math.sqrt(2) if rms_of_peak else magnitude) > AC_RMS_LIMIT
        if high:
            found.append(e.designator)
    return found
