"""Thermal noise a region hands its port, by adjoint transfer.

Every resistor, and the real part of every impedance part's admittance, is a noise current of
one-sided density ``4 k T Re(Y)`` (A²/Hz) in parallel with it (thermal agitation; the ideal
sources, capacitors, inductors, controlled sources and op-amps are noiseless). The port's
open-circuit voltage from a current injected into net a and out of net b is ``lam[a] - lam[b]``
with ``A^T lam = e_plus`` (engine/solve/sensitivity.py), so one transposed solve weighs every
source: ``en² = sum 4 k T Re(Y) |lam[a] - lam[b]|²``. A part with a branch current of its own
(the wide form the equivalent takes on wide value spans, a 0 Ω wire, a controlling part) is
weighed as the equal series source ``4 k T Re(Z)`` in its own row, ``4 k T Re(Z) |lam[own]|²``,
which keeps the digits a small impedance's node-voltage difference loses. Densities are rms per
root hertz; ``in_`` is ``en / |z|``, the short-circuit current density. The method and its
limits: docs/method.md.
"""

from __future__ import annotations

import math
from collections.abc import Collection, Iterable, Sequence
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np
from scipy.integrate import simpson

from ..errors import CircuitError
from . import mna, topology
from .adjoint import port_solution, port_sweep
from .circuit import Part
from .equivalent import _frequencies
from .units import parse_frequency

__all__ = ["BOLTZMANN", "REFERENCE_TEMPERATURE", "BandNoise", "Noise", "NoiseSweep", "noise",
           "noise_band", "noise_sweep", "thermal_conductance"]

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


class NoiseSweep(NamedTuple):
    """Thermal noise densities over a sweep, one entry per frequency: ``en`` V/√Hz (rms, open
    port), ``in_`` A/√Hz (rms, shorted port; nan where z = 0). Unpacks as ``en, in_``."""

    en: np.ndarray
    in_: np.ndarray


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
    f = parse_frequency(freq)
    solved = port_solution(cut, f, "noise densities")
    noisy = _noisy(cut, solved.system, f == 0)
    shares = _shares(noisy, solved.lam, t)
    en, in_ = _densities(shares.sum(), solved.eq.z)
    ranked = sorted(zip(noisy.names, shares.tolist(), strict=True), key=lambda kv: -kv[1])
    return Noise(cut.port, f, t, float(en), float(in_), dict(ranked))


def noise_sweep(circuit, region: Collection[str], freqs: Iterable[float],
                port: Sequence[str] | None = None,
                temp_k: float = REFERENCE_TEMPERATURE) -> NoiseSweep:
    """:func:`noise`'s ``en`` and ``in_`` at every frequency of ``freqs`` (Hz, each >= 0), as
    arrays. The region is checked once, its open-port equations solved batched over the
    frequencies (engine/solve/adjoint.py) and its noisy parts gathered once per formulation."""
    t = _temperature(temp_k)
    cut = topology.cut(circuit, region, port)
    return _sweep(cut, _frequencies(freqs), t)


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
    en = _sweep(cut, freqs, t).en
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
    if part.kind not in _NOISY_KINDS:
        return 0.0
    return float(_conductances(np.array([complex(part.value)]))[0])


_NOISY_KINDS = ("resistor", "impedance")


def _conductances(values: np.ndarray) -> np.ndarray:
    """Re(1/Z) per impedance value Z (ohms), 0 where Z is 0 or Re(1/Z) < 0."""
    with np.errstate(divide="ignore", invalid="ignore"):
        g = np.where(values != 0, (1 / np.where(values != 0, values, 1)).real, 0.0)
    return np.maximum(g, 0.0)


@dataclass(frozen=True, slots=True, eq=False)
class _Noisy:
    """A system's noisy parts (``names``, in netlist order): ``conductance`` Re(Y) (S) and
    ``resistance`` Re(Z) (Ω) of each; ``a``, ``b`` the unknowns of its nets and ``own`` its
    branch unknown (-1: pinned, or none). Where ``own`` is set the part is weighed as a series
    source in its own row."""

    names: list[str]
    conductance: np.ndarray
    resistance: np.ndarray
    a: np.ndarray
    b: np.ndarray
    own: np.ndarray


def _noisy(cut: topology.Cut, system: mna.System, dc: bool) -> _Noisy:
    """The noisy parts of ``system``, gathered as arrays once per formulation and kept with
    the region's netlist (dropped with it when a value changes)."""
    key = ("noisy parts", cut.port, dc, system.branches.wide)
    found = cut.netlist.memo.get(key)
    if found is not None:
        return found
    net = system.netlist
    groups = [net[kind] for kind in _NOISY_KINDS]
    values = np.concatenate([g.values.astype(complex) for g in groups])
    conductance = _conductances(values)
    keep = conductance > 0
    unknown = np.append(system.unknown_of_net, -1)
    nodes = np.concatenate([g.nodes[:, :2] for g in groups]).astype(np.intp)
    offset = np.concatenate([system.branches.offset[g.span] for g in groups])
    own = np.where(offset >= 0, offset + system.n_nodes, -1)
    names = [n for g in groups for n in g.names]
    found = _Noisy([n for n, k in zip(names, keep.tolist(), strict=True) if k],
                   conductance[keep], values.real[keep], unknown.take(nodes[keep, 0]),
                   unknown.take(nodes[keep, 1]), own[keep])
    cut.netlist.memo[key] = found
    return found


def _shares(noisy: _Noisy, lam: np.ndarray, t: float) -> np.ndarray:
    """Each noisy part's share of en² (V²/Hz) at ``t`` kelvin, from the adjoint ``lam`` ((n,)
    or (F, n) over a sweep: shares (parts,) or (F, parts)); one adjoint weighs them all."""
    padded = np.concatenate((lam, np.zeros((*lam.shape[:-1], 1))), axis=-1)  # -1 reads 0
    across = np.abs(padded[..., noisy.a] - padded[..., noisy.b]) ** 2 * noisy.conductance
    series = np.abs(padded[..., noisy.own]) ** 2 * noisy.resistance
    return 4 * BOLTZMANN * t * np.where(noisy.own >= 0, series, across)


def _densities(en_squared: np.ndarray | float, z: np.ndarray | complex
               ) -> tuple[np.ndarray, np.ndarray]:
    """en (V/√Hz) from en², and in_ = en / |z| (nan where z = 0)."""
    en = np.sqrt(en_squared)
    with np.errstate(divide="ignore", invalid="ignore"):
        in_ = np.where(np.asarray(z) != 0, en / np.abs(z), math.nan)
    return en, in_


def _sweep(cut: topology.Cut, freqs: np.ndarray, t: float) -> NoiseSweep:
    en, in_ = np.empty(freqs.size), np.empty(freqs.size)
    for where, solved in port_sweep(cut, freqs, "noise densities"):
        noisy = _noisy(cut, solved.system, bool(solved.freqs[0] == 0))
        en[where], in_[where] = _densities(_shares(noisy, solved.lam, t).sum(axis=-1),
                                           solved.z)
    return NoiseSweep(en, in_)
