"""The sentences that describe a region's equivalent, in one place: the equivalent panel and the
command line's table both print them, so the two always say the same.

Which forms exist (and why one does not), Z as series parts, the matched load and its power,
and the check of the reduced circuit against the original. Values are written with SI prefixes
and units by engine.solve.units; the frequency as engine.solve.mna.describe_freq writes it.
"""

from __future__ import annotations

from ..errors import CircuitError
from ..solve.equivalent import EquivalenceReport, Equivalent
from ..solve.mna import describe_freq
from ..solve.units import format_complex, format_eng

__all__ = ["MATCH_RTOL", "equivalence_text", "forms_text", "power_text", "realisation_text"]

#: Relative deviation below which the reduced circuit counts as reproducing the original.
MATCH_RTOL = 1e-9

_THEVENIN = "Thevenin: Voc in series with Z"
_NORTON = "Norton: Isc in parallel with Z"
_NO_THEVENIN = ("No Thevenin form: Z is infinite (an ideal current source or an open circuit at "
               "the port)")
_NO_NORTON = "No Norton form: Z is zero (an ideal voltage source or a short across the port)"


def forms_text(eq: Equivalent, form: str) -> list[str]:
    """Which forms exist, and why one does not; the chosen ``form`` ("thevenin" or "norton")
    first."""
    thevenin = _THEVENIN if eq.has_thevenin else _NO_THEVENIN
    norton = _NORTON if eq.has_norton else _NO_NORTON
    return [thevenin, norton] if form == "thevenin" else [norton, thevenin]


def realisation_text(eq: Equivalent) -> str:
    """The series R + L or R + C that has impedance Z at the analysis frequency, or why none
    has; a negative resistance is named as the mark of an active region."""
    try:
        r = eq.realisation()
    except CircuitError as exc:
        return f"No series R, L or C realises Z: {exc}"
    text = f"Z at {describe_freq(eq.freq)} = {r.parts_text()}"
    if r.resistance < 0:
        text += " (a negative resistance: the region is active)"
    return text


def power_text(eq: Equivalent, basis: str) -> str:
    """The conjugate-matched load and the average power it takes (W), and the best resistor and
    its power, in ``basis`` ("peak" or "rms" phasors above DC); or why there is no maximum."""
    p = eq.max_power(basis)
    if p.reason:
        return p.reason[0].upper() + p.reason[1:]
    return (f"Matched load {format_complex(p.load, 'Ω')} takes {format_eng(p.power, 'W', 4)}; "
            f"the best resistor, {format_eng(p.resistive_load, 'Ω', 4)}, takes "
            f"{format_eng(p.resistive_power, 'W', 4)} ({p.described()})")


def _agreement(relative: float, verb: str) -> str:
    return f"{verb} exactly" if relative == 0 else f"{verb} within {relative:.1e} (relative)"


def equivalence_text(report: EquivalenceReport) -> str:
    """The one-line check: the reduced circuit against the original, seen from outside; it
    matches where both relative deviations are within :data:`MATCH_RTOL`."""
    worst = f", worst at net {report.worst_net}" if report.worst_net and report.voltage_rel \
        else ""
    verdict = "Reduced circuit matches" if report.within(MATCH_RTOL) else "Reduced circuit DIFFERS"
    return (f"{verdict} for the load as drawn: outside voltages "
            f"{_agreement(report.voltage_rel, 'agree')}{worst}; port current "
            f"{_agreement(report.current_rel, 'agrees')}")
