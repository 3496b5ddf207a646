"""Portcut engine: exact Thevenin/Norton reduction of two-terminal regions of linear circuits.

No Qt here. Public names:

* :class:`Circuit`, :class:`Part`, :data:`GROUND` — the netlist;
* :func:`parse_value`, :func:`format_eng` — SI / IEC 60062 values;
* errors: :class:`CircuitError` and its subclasses.
"""

from .circuit import GROUND, KINDS, Circuit, Part
from .errors import CircuitError, CutError, DocumentError, SingularCircuitError, ValueParseError
from .units import format_complex, format_eng, format_phasor, parse_frequency, parse_value

__all__ = [
    "GROUND",
    "KINDS",
    "Circuit",
    "CircuitError",
    "CutError",
    "DocumentError",
    "Part",
    "SingularCircuitError",
    "ValueParseError",
    "format_complex",
    "format_eng",
    "format_phasor",
    "parse_frequency",
    "parse_value",
]
