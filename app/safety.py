"""Which sources of a sheet are above extra-low voltage (engine.schematic.captions holds the
limits, the rule and the caution's wording). Qt-free."""

from __future__ import annotations

from collections.abc import Iterable

from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Document, Element, PlacedPart
from portcut.engine.schematic.captions import ELV_AC_RMS, ELV_DC, SAFETY_CAUTION
from portcut.engine.schematic.captions import above_extra_low_voltage as _above
from portcut.engine.solve.units import parse_value

__all__ = ["AC_RMS_LIMIT", "CAUTION", "DC_LIMIT", "above_extra_low_voltage"]

AC_RMS_LIMIT, DC_LIMIT, CAUTION = ELV_AC_RMS, ELV_DC, SAFETY_CAUTION


def above_extra_low_voltage(doc: Document, elements: Iterable[Element] | None = None) -> list[str]:
    """Designators of the voltage sources (among ``elements``, default all) above extra-low
    voltage at the document's analysis frequency and phasor basis."""
    freq, basis = doc.frequency(), doc.analysis.basis
    found = []
    for e in doc.parts() if elements is None else elements:
        if not (isinstance(e, PlacedPart) and e.kind == "voltage_source"):
            continue
        try:
            magnitude = abs(parse_value(e.value))
        except CircuitError:
            continue
        if _above([magnitude], freq, basis):
            found.append(e.designator)
    return found
