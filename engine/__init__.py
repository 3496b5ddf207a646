"""Portcut engine: exact Thevenin/Norton reduction of two-terminal regions of linear circuits.

No Qt here. Public names:

* :class:`Circuit`, :class:`Part`, :data:`GROUND` — the netlist;
* :func:`parse_value`, :func:`format_eng` — SI / IEC 60062 values;
* :func:`equivalent`, :func:`sweep`, :func:`collapse`, :func:`check_equivalence` and their
  results (:class:`Equivalent`, :class:`Sweep`, :class:`EquivalenceReport`); :func:`check_cut`;
* :func:`sensitivity`, :func:`sensitivity_sweep` (:class:`Sensitivity`, :func:`influence`):
  derivatives of the port quantities in every part value, by the adjoint method;
* :func:`noise`, :func:`noise_sweep`, :func:`noise_band` (:class:`Noise`, :class:`NoiseSweep`,
  :class:`BandNoise`): thermal noise at the port;
* :func:`nearest`, :func:`best_pair`, :func:`realise`: IEC 60063 standard values;
* :func:`parse_tolerance`, :func:`worst_case`, :func:`monte_carlo` (:class:`WorstCase`,
  :class:`MonteCarlo`): part tolerances and their effect on the port;
* errors: :class:`CircuitError` and its subclasses.
"""

from .errors import CircuitError, CutError, DocumentError, SingularCircuitError, ValueParseError
from .solve.circuit import GROUND, KINDS, Circuit, Part
from .solve.equivalent import (
    EquivalenceReport,
    Equivalent,
    Forms,
    PowerTransfer,
    Realisation,
    Sweep,
    check_equivalence,
    collapse,
    equivalent,
    sweep,
)
from .solve.eseries import best_pair, nearest, realise
from .solve.noise import BandNoise, Noise, NoiseSweep, noise, noise_band, noise_sweep
from .solve.sensitivity import Sensitivity, influence, sensitivity, sensitivity_sweep
from .solve.tolerance import MonteCarlo, WorstCase, monte_carlo, parse_tolerance, worst_case
from .solve.topology import check_cut
from .solve.units import format_complex, format_eng, format_phasor, parse_frequency, parse_value

__all__ = [
    "GROUND",
    "KINDS",
    "BandNoise",
    "Circuit",
    "CircuitError",
    "CutError",
    "DocumentError",
    "EquivalenceReport",
    "Equivalent",
    "Forms",
    "MonteCarlo",
    "Noise",
    "NoiseSweep",
    "Part",
    "PowerTransfer",
    "Realisation",
    "Sensitivity",
    "SingularCircuitError",
    "Sweep",
    "ValueParseError",
    "WorstCase",
    "best_pair",
    "check_cut",
    "check_equivalence",
    "collapse",
    "equivalent",
    "format_complex",
    "format_eng",
    "format_phasor",
    "influence",
    "monte_carlo",
    "nearest",
    "noise",
    "noise_band",
    "noise_sweep",
    "parse_frequency",
    "parse_tolerance",
    "parse_value",
    "realise",
    "sensitivity",
    "sensitivity_sweep",
    "sweep",
    "worst_case",
]
