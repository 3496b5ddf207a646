"""Thermal noise a region hands its port, by adjoint transfer.

Every resistor, and the real part of every impedance part's admittance, is a noise current of
one-sided density ``4 k T Re(Y)`` (A²/Hz) in parallel with it (thermal agitation; the ideal
sources, capacitors, inductors, controlled sources and op-amps are noiseless). The port's
open-circuit voltage from a current injected into net a and out of net b is ``lam[a] - lam[b]``
with ``A^T lam = e_plus`` (engine/solve/sensitivity.py), so one transposed solve weighs every
source:
``en² = sum 4 k T Re(Y) |lam[a] - lam[b]|²``. Densities are rms per root hertz; ``in_`` is
``en / |z|``, the short-circuit current density. The method and its limits: docs/method.md.
"""

from __future__ import annotations

import math
from collections.abc import Collection, Sequence
from dataclasses import dataclass

import numpy as np
from scipy.integrate import simpson

from ..errors import CircuitError
from . import topology
from .circuit import Part
from .sensitivity import port_solution
from .units import parse_frequency

__all__ = ["BOLTZMANN", "REFERENCE_TEMPERATURE", "BandNoise", "Noise", "noise", "noise_band",
           "thermal_conductance"]

#: Boltzmann constant, J/K (exact since the 2019 SI, BIPM SI Brochure, 9th edition).
BOLTZMANN = 1.380649e-23
#: The usual reference temperature for noise figures, K.
REFERENCE_TEMPERATURE = 290.0
_BAND_POINTS = 401


@dataclass(frozen=True, slots=True)
class Noise:
    """Thermal noise at the port at ``freq`` Hz and ``temp_k`` kelvin.

    ``en``: open-circuit noise voltage density, V/√Hz (rms); ``in_``: short-circuit noise
    current density, A/√Hz (nan where z = 0); ``shares``: each noisy part's contribution to
    ``en²``, V²/Hz, largest first.
    """

    port: tuple[str, str]
    freq: float
    temp_k: float
    en: float
    in_: float
    shares: dict[str, float]


@dataclass(frozen=True, slots=True, eq=False)
class BandNoise:
    """Noise integrated over ``f_lo`` .. ``f_hi`` Hz: ``vrms`` volts rms at the open port;
    ``freqs`` and ``en`` (V/√Hz) the density it integrates."""

    port: tuple[str, str]
    f_lo: float
    f_hi: float
    temp_k: float
    vrms: float
    freqs: np.ndarray
    en: np.ndarray


def noise(circuit, region: Collection[str], port: Sequence[str] | None = None,
          freq: float | str = 1e3, temp_k: float = REFERENCE_TEMPERATURE) -> Noise:
    """Thermal noise densities at ``port`` at ``freq`` Hz, parts at ``temp_k`` kelvin.

    Raises CircuitError where the region has no Thevenin form or the temperature is not
    positive.
    """
    t = _temperature(temp_k)
    cut = topology.cut(circuit, region, port)
    return _at(cut, parse_frequency(freq), t)


def noise_band(circuit, region: Collection[str], f_lo: float | str, f_hi: float | str,
               port: Sequence[str] | None = None, temp_k: float = REFERENCE_TEMPERATURE,
               points: int = _BAND_POINTS) -> BandNoise:
    """The rms open-circuit noise voltage over ``f_lo`` .. ``f_hi`` Hz (``f_lo`` may be 0):
    ``sqrt(integral en² df)``, by Simpson's rule on ``points`` log-spaced frequencies (the
    lowest decade below f_hi * 1e-6 taken as flat when the band starts at DC)."""
    lo, hi, t = parse_frequency(f_lo), parse_frequency(f_hi), _temperature(temp_k)
    if not 0 <= lo < hi:
        raise CircuitError(f"the noise band must run from a lower to a higher frequency, not "
                           f"{lo:g} Hz to {hi:g} Hz")
    if points < 3:
        raise CircuitError(f"the noise band needs at least 3 points, not {points}")
    cut = topology.cut(circuit, region, port)
    freqs = np.geomspace(lo if lo > 0 else hi * 1e-6, hi, points - (lo == 0))
    if lo == 0:
        freqs = np.concatenate(([0.0], freqs))
    en = np.array([_at(cut, float(f), t).en for f in freqs])
    vrms = math.sqrt(float(simpson(en ** 2, x=freqs)))
    for a in (freqs, en):
        a.flags.writeable = False
    return BandNoise(cut.port, lo, hi, t, vrms, freqs, en)


def _temperature(temp_k: float) -> float:
    t = float(temp_k)
    if not (math.isfinite(t) and t > 0):
        raise CircuitError(f"the noise temperature must be a positive number of kelvin, not "
                           f"{temp_k!r}")
    return t


def thermal_conductance(part: Part) -> float:
    """Re(Y) of a part's thermal noise (S): 1/R for a resistor, Re(1/Z) for an impedance part;
    0 for a noiseless part, a wire and a negative resistance (an active model, not a body in
    thermal equilibrium)."""
    if part.kind not in ("resistor", "impedance") or part.value == 0:
        return 0.0
    return max(0.0, (1 / complex(part.value)).real)


def _at(cut: topology.Cut, f: float, t: float) -> Noise:
    solved = port_solution(cut, f, "noise densities")
    index, lam = solved.system.netlist.index, np.append(solved.lam, 0j)
    unknown = solved.system.unknown_of_net
    shares = {}
    for part in cut.parts:
        g = thermal_conductance(part)
        if g > 0:
            a, b = (int(unknown[index[n]]) for n in part.nodes)
            shares[part.name] = 4 * BOLTZMANN * t * g * abs(lam[a] - lam[b]) ** 2
    en = math.sqrt(sum(shares.values()))
    z = solved.eq.z
    in_ = en / abs(z) if z != 0 else math.nan
    ranked = dict(sorted(shares.items(), key=lambda kv: -kv[1]))
    return Noise(cut.port, f, t, en, in_, ranked)
