"""The public calls: one frequency, a sweep, and the circuit with a region collapsed."""

from __future__ import annotations

import cmath
from collections.abc import Collection, Iterable, Sequence
from itertools import count

import numpy as np

from ...errors import CircuitError
from .. import topology
from ..circuit import Circuit
from ..mna import describe_freq
from ..units import parse_frequency
from .port import _Port, _Values
from .results import Equivalent, Sweep

__all__ = ["collapse", "equivalent", "sweep"]


def equivalent(circuit: Circuit, region: Collection[str], port: Sequence[str] | None = None,
               freq: float | str = 0.0) -> Equivalent:
    """Thevenin and Norton equivalents of ``region`` seen at ``port`` (plus, minus) at ``freq`` Hz.

    ``region``: names of the parts inside the boundary; ``port`` may be omitted where the
    region meets the rest at exactly two nets (see :func:`engine.solve.topology.check_cut`).
    ``freq``: hertz, 0 for DC (capacitors open, inductors shorts); text such as "1k" is read.
    Source phasors are peak values. Raises CutError for an invalid cut, SingularCircuitError
    where the region has no unique solution, CircuitError for other bad input.

    Examples
    --------
    A 10 V source behind 1 kΩ, loaded by 1 kΩ to ground, seen across the load:

    >>> from portcut.engine import GROUND, Circuit
    >>> c = Circuit()
    >>> _ = c.voltage_source("V1", "in", GROUND, 10); _ = c.resistor("R1", "in", "a", "1k")
    >>> _ = c.resistor("R2", "a", GROUND, "1k")
    >>> eq = equivalent(c, {"V1", "R1", "R2"}, port=("a", GROUND))
    >>> round(eq.voc.real, 9), round(eq.z.real, 6), round(eq.isc.real, 9)
    (5.0, 500.0, 0.01)
    """
    f = parse_frequency(freq)
    cut = topology.cut(circuit, region, port)
    return _equivalent_of(cut, f)


def _port_of(cut: topology.Cut, dc: bool) -> _Port:
    """The region's port problem, kept with its (immutable) netlist for the next call."""
    key = ("port", cut.port, dc)
    port = cut.netlist.memo.get(key)
    if port is None:
        port = cut.netlist.memo[key] = _Port(cut.netlist, cut.port, dc)
    return port


def _equivalent_of(cut: topology.Cut, f: float) -> Equivalent:
    values = _port_of(cut, f == 0).values(np.array([f]))
    return Equivalent(cut.port, f, complex(values.voc[0]), complex(values.isc[0]),
                      complex(values.z[0]), bool(values.thevenin[0]), bool(values.norton[0]),
                      float(values.voc_error[0]), float(values.z_error[0]))


def sweep(circuit: Circuit, region: Collection[str], freqs: Iterable[float],
          port: Sequence[str] | None = None) -> Sweep:
    """Equivalents of ``region`` at every frequency of ``freqs`` (Hz, each >= 0).

    The region is checked and assembled once (DC points separately, since capacitors and
    inductors change role there). Small systems are solved as one batched dense stack, large
    ones with one sparse factorization per frequency; see docs/method.md.

    Examples
    --------
    1 V behind 1 kΩ with 159.15 nF to ground: at 1 kHz, ωRC = 1 and |Voc| = 1/√2.

    >>> from portcut.engine import GROUND, Circuit
    >>> c = Circuit()
    >>> _ = c.voltage_source("V1", "in", GROUND, 1); _ = c.resistor("R1", "in", "a", "1k")
    >>> _ = c.capacitor("C1", "a", GROUND, 1 / (2e6 * 3.141592653589793))
    >>> s = sweep(c, {"V1", "R1", "C1"}, [0, 1e3], port=("a", GROUND))
    >>> [round(abs(s[i].voc), 6) for i in range(2)]
    [1.0, 0.707107]
    """
    f = _frequencies(freqs)
    cut = topology.cut(circuit, region, port)
    out = _Values(f.size)
    for dc in (True, False):
        where = (f == 0) if dc else (f > 0)
        if where.any():
            out.take(where, _port_of(cut, dc).values(f[where]))
    arrays = (f, out.voc, out.isc, out.z, out.thevenin, out.norton, out.voc_error, out.z_error)
    for a in arrays:
        a.flags.writeable = False
    return Sweep(cut.port, *arrays)


def _frequencies(freqs: Iterable[float]) -> np.ndarray:
    try:
        raw = np.asarray(list(freqs) if not isinstance(freqs, np.ndarray) else freqs)
    except TypeError:
        raise CircuitError(f"freqs must be a sequence of frequencies in Hz, not {freqs!r}") \
            from None
    if raw.ndim != 1 or raw.size == 0:
        raise CircuitError("freqs must be a non-empty one-dimensional sequence of frequencies "
                           "in Hz")
    if raw.dtype.kind in "iuf":
        f = raw.astype(float)
        bad = ~np.isfinite(f) | (f < 0)
        if bad.any():
            raise CircuitError(f"frequency {float(f[bad][0])!r} Hz must be finite and 0 or more")
        return f.copy()
    return np.array([parse_frequency(v) for v in raw.tolist()], dtype=float)


def collapse(circuit: Circuit, region: Collection[str], port: Sequence[str] | None = None,
             freq: float | str = 0.0, form: str = "thevenin") -> Circuit:
    """A new circuit with the region replaced by its equivalent at ``freq``.

    ``form="thevenin"``: a voltage source ``<P>_V`` (plus to net ``<P>_n``, value voc) in series
    with the impedance ``<P>_Z`` (``<P>_n`` to minus), or the source alone where z = 0.
    ``form="norton"``: a current source ``<P>_I`` pushing isc into plus, with ``<P>_Z`` across
    the port (omitted where z is infinite). ``<P>_Z`` is a resistor where z is real, else an
    impedance part of complex value z (valid at ``freq`` only). ``<P>`` is ``EQ``, or ``EQ2``,
    ``EQ3``... : the first prefix with which no part or net name of the circuit begins.
    Raises CircuitError where the requested form does not exist, suggesting the other.
    """
    if form not in ("thevenin", "norton"):
        raise CircuitError(f"form must be 'thevenin' or 'norton', not {form!r}")
    f = parse_frequency(freq)
    cut = topology.cut(circuit, region, port)
    eq = _equivalent_of(cut, f)
    plus, minus = eq.port
    if form == "thevenin" and not eq.has_thevenin:
        raise CircuitError(f"the region has no Thevenin form at {describe_freq(f)}: its impedance "
                           "is infinite (e.g. an ideal current source at the port); use "
                           "form='norton'")
    if form == "norton" and not eq.has_norton:
        raise CircuitError(f"the region has no Norton form at {describe_freq(f)}: its impedance "
                           "is zero (e.g. an ideal voltage source across the port); use "
                           "form='thevenin'")
    inside = {p.name for p in cut.parts}
    reduced = circuit.without(inside)
    stem = _free_prefix(circuit)
    if form == "thevenin":
        if eq.z == 0:
            reduced.voltage_source(f"{stem}V", plus, minus, eq.voc)
        else:
            reduced.voltage_source(f"{stem}V", plus, f"{stem}n", eq.voc)
            _add_impedance(reduced, f"{stem}Z", f"{stem}n", minus, eq.z)
    else:
        reduced.current_source(f"{stem}I", minus, plus, eq.isc)
        if not cmath.isinf(eq.z):
            _add_impedance(reduced, f"{stem}Z", plus, minus, eq.z)
    return reduced


def _free_prefix(circuit: Circuit) -> str:
    taken = set(circuit.names) | circuit.nets()
    for i in count(1):
        stem = "EQ_" if i == 1 else f"EQ{i}_"
        if not any(name.startswith(stem) for name in taken):
            return stem
    raise AssertionError("unreachable")


def _add_impedance(c: Circuit, name: str, a: str, b: str, z: complex) -> None:
    if z.imag == 0:
        c.resistor(name, a, b, z.real)
    else:
        c.impedance(name, a, b, z)
