"""Properties of port equivalents on random linear circuits (hypothesis).

Well-posed circuits are grown from a resistive spanning tree (every net has a DC path to ground),
then random motifs of every part kind are added in shapes that cannot make a loop of voltage-type
branches or a cut-set of current-type ones: voltage-type outputs and inductors come with a series
resistor, op-amps as amplifier stages with feedback. The region is the whole random network and
the rest is a load across the port, so every cut is a valid two-terminal one.

Tolerances: values span five decades and dependent gains stay below 100, so the systems are
conditioned well enough for RTOL = 1e-9 (see test_against_sympy.py); where a random draw lands
near a singular system the engine must say so with a CircuitError, which the properties accept.
"""

from __future__ import annotations

import cmath
import contextlib
import itertools
import math
import warnings
from dataclasses import dataclass, field

import sympy
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from sympy_nodal import port_reference

from portcut.engine import (
    KINDS,
    Circuit,
    CircuitError,
    Equivalent,
    Part,
    SingularCircuitError,
    collapse,
    equivalent,
)

RTOL = 1e-9
FAST = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
SLOW = settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.too_slow])

OHMS = st.sampled_from([10.0, 22.0, 47.0, 100.0, 220.0, 470.0, 1e3, 2.2e3, 4.7e3, 10e3, 47e3])
FARADS = st.sampled_from([1e-9, 10e-9, 100e-9, 1e-6])
# 1e-4 times squares: sqrt(L1 L2) stays rational, which keeps the exact reference fast
HENRIES = st.sampled_from([100e-6, 400e-6, 2.5e-3, 10e-3])
GAINS = st.sampled_from([-20.0, -2.0, -0.5, 0.5, 2.0, 20.0])
SIEMENS = st.sampled_from([-10e-3, -1e-3, 1e-3, 10e-3])
PHASORS = st.builds(complex, st.integers(-5, 5), st.integers(-5, 5)).filter(lambda v: v != 0)


@dataclass(frozen=True)
class Ranges:
    """Where a grown region draws its part values from."""

    ohms: st.SearchStrategy[float]
    farads: st.SearchStrategy[float]
    henries: st.SearchStrategy[float]


NARROW = Ranges(OHMS, FARADS, HENRIES)
PASSIVE_MOTIFS = ("resistor", "capacitor", "inductor", "coupled", "wire")
ALL_MOTIFS = (*PASSIVE_MOTIFS, "impedance", "voltage_source", "current_source", "vcvs", "vccs",
              "ccvs", "cccs", "opamp")


@dataclass
class Grown:
    """A random region, the nets it was built on, and the port it is seen from."""

    circuit: Circuit = field(default_factory=Circuit)
    nets: list[str] = field(default_factory=lambda: ["gnd"])
    port: tuple[str, str] = ("n1", "gnd")
    ranges: Ranges = NARROW
    counter: itertools.count = field(default_factory=lambda: itertools.count(1))

    def name(self, prefix: str) -> str:
        return f"{prefix}{next(self.counter)}"

    @property
    def region(self) -> set[str]:
        return set(self.circuit.names)


@st.composite
def regions(draw: st.DrawFn, motifs: tuple[str, ...] = ALL_MOTIFS,
            floating_port: bool = True, ranges: Ranges = NARROW) -> Grown:
    """A well-posed random region and a port on it (see the module docstring), its values
    drawn from ``ranges``."""
    g = Grown(ranges=ranges)
    c = g.circuit
    for i in range(draw(st.integers(2, 5))):
        net, other = f"n{i + 1}", draw(st.sampled_from(g.nets))
        if "wire" in motifs and draw(st.integers(0, 4)) == 0:
            c.resistor(g.name("W"), net, other, 0)
        else:
            c.resistor(g.name("R"), net, other, draw(ranges.ohms))
        g.nets.append(net)
    for motif in draw(st.lists(st.sampled_from(motifs), max_size=6)):
        _add_motif(draw, g, motif)
    plus = draw(st.sampled_from(g.nets[1:]))
    others = [n for n in g.nets if n != plus] if floating_port else ["gnd"]
    g.port = (plus, draw(st.sampled_from(others)))
    return g


def _add_motif(draw: st.DrawFn, g: Grown, motif: str) -> None:
    c = g.circuit
    a, b = draw(st.lists(st.sampled_from(g.nets), min_size=2, max_size=2, unique=True))
    sense = draw(st.lists(st.sampled_from(g.nets), min_size=2, max_size=2, unique=True))
    controls = [p.name for p in c if p.kind not in ("opamp", "coupling", "vcvs", "vccs")]

    def behind_resistor() -> str:  # a fresh net joined to b through a resistor
        x = g.name("x")
        c.resistor(g.name("R"), x, b, draw(g.ranges.ohms))
        return x

    if motif == "resistor":
        c.resistor(g.name("R"), a, b, draw(g.ranges.ohms))
    elif motif == "wire":  # may close a loop of wires: a singular draw, rejected
        c.resistor(g.name("W"), a, b, 0)
    elif motif == "capacitor":
        c.capacitor(g.name("C"), a, b, draw(g.ranges.farads))
    elif motif in ("inductor", "coupled"):
        first = c.inductor(g.name("L"), a, behind_resistor(), draw(g.ranges.henries))
        if motif == "coupled":
            a, b = sense
            second = c.inductor(g.name("L"), a, behind_resistor(), draw(g.ranges.henries))
            k = draw(st.sampled_from([-0.95, -0.5, 0.3, 0.8, 0.99]))
            c.coupling(g.name("CP"), first.name, second.name, k)
    elif motif == "impedance":
        c.impedance(g.name("Z"), a, b,
                    complex(draw(g.ranges.ohms), draw(st.sampled_from([-1e3, 0, 50]))))
    elif motif == "voltage_source":
        c.voltage_source(g.name("V"), a, behind_resistor(), draw(PHASORS))
    elif motif == "current_source":
        c.current_source(g.name("I"), a, b, draw(PHASORS) * 1e-3)
    elif motif == "vcvs":
        c.vcvs(g.name("DS"), behind_resistor(), a, *sense, draw(GAINS))
    elif motif == "vccs":
        c.vccs(g.name("DS"), a, b, *sense, draw(SIEMENS))
    elif motif == "ccvs":
        c.ccvs(g.name("DS"), behind_resistor(), a, draw(st.sampled_from(controls)),
               draw(GAINS) * 100)
    elif motif == "cccs":
        c.cccs(g.name("DS"), a, b, draw(st.sampled_from(controls)), draw(GAINS))
    elif motif == "opamp":  # a non-inverting stage from net a, its output through a resistor
        n, o = g.name("x"), g.name("x")
        c.opamp(g.name("U"), a, n, o)
        c.resistor(g.name("R"), n, "gnd", draw(g.ranges.ohms))
        c.resistor(g.name("R"), n, o, draw(g.ranges.ohms))
        c.resistor(g.name("R"), o, b, draw(g.ranges.ohms))


def with_load(g: Grown, port: tuple[str, str] | None = None) -> Circuit:
    """The region plus a 1 kΩ load across its port (or ``port``): the rest of the circuit."""
    full = g.circuit.copy()
    full.resistor("LOAD", *(port or g.port), 1e3)
    return full


FREQS = st.sampled_from([0.0, 50.0, 1e3, 159.15494309189535, 1e5])


def _close(got: complex, want: complex, floor: float = 0.0) -> bool:
    return abs(got - want) <= RTOL * max(abs(want), floor)


def voltage_scale(g: Grown, freq: float) -> float:
    """The largest open-circuit voltage of any net of the region against ground: the size of
    the solution that rounding is relative to where a port quantity cancels to near zero."""
    found = [equivalent(g.circuit, region=g.region, port=(net, "gnd"), freq=freq)
             for net in sorted(g.circuit.nets() - {"gnd"})]
    return max((abs(eq.voc) for eq in found if eq.has_thevenin), default=0.0)


def solved(g: Grown, freq: float, circuit: Circuit | None = None,
           port: tuple[str, str] | None = None, region: set[str] | None = None) -> Equivalent:
    """The engine's equivalent of the grown region (or of ``circuit``/``region`` at ``port``),
    the example rejected where the draw is singular (e.g. a loop of wires)."""
    port = port or g.port
    try:
        return equivalent(circuit or with_load(g, port), region=region or g.region, port=port,
                          freq=freq)
    except SingularCircuitError:
        assume(False)
        raise


# -- existence rules and duality ----------------------------------------------------------------
@FAST
@given(g=regions(), freq=FREQS)
def test_thevenin_voltage_is_norton_current_times_impedance(g: Grown, freq: float) -> None:
    # Thevenin/Norton duality (common practice): voc = z isc whenever both forms exist; z = inf
    # exactly where there is no Thevenin form and z = 0 exactly where there is no Norton form.
    eq = solved(g, freq)
    assert eq.has_thevenin or eq.has_norton
    if not eq.has_thevenin:
        assert cmath.isinf(eq.z)
        assert cmath.isfinite(eq.isc)
    elif not eq.has_norton:
        assert eq.z == 0
        assert cmath.isfinite(eq.voc)
    else:
        assert _close(eq.voc, eq.z * eq.isc, floor=voltage_scale(g, freq))


# -- passive regions ----------------------------------------------------------------------------
@FAST
@given(g=regions(motifs=PASSIVE_MOTIFS), freq=FREQS, drive=st.data())
def test_passive_regions_are_reciprocal(g: Grown, freq: float, drive: st.DataObject) -> None:
    # Reciprocity theorem (common practice, any RLC network with coupled inductors): 1 A driven
    # into net b gives at net a the voltage that 1 A driven into a gives at b (Z_ab = Z_ba).
    a, b = drive.draw(st.lists(st.sampled_from(g.nets[1:]), min_size=2, max_size=2, unique=True))
    transfer = {}
    for into, seen in ((b, a), (a, b)):
        c = g.circuit.copy()
        c.current_source("ITEST", "gnd", into, 1)
        c.resistor("LOAD", seen, "gnd", "1k")
        eq = solved(g, freq, c, (seen, "gnd"), {*g.region, "ITEST"})
        assert eq.has_thevenin
        transfer[into] = eq.voc
    driving = solved(g, freq, port=(a, "gnd")).z
    assert _close(transfer[a], transfer[b], floor=abs(driving))


@FAST
@given(g=regions(motifs=PASSIVE_MOTIFS), freq=FREQS)
def test_passive_regions_absorb_power(g: Grown, freq: float) -> None:
    # A passive network cannot deliver net power (common practice): Re z >= 0, to rounding.
    eq = solved(g, freq)
    assert eq.has_thevenin  # the resistive tree joins every net
    assert eq.voc == 0  # no sources inside
    if eq.has_norton:
        assert eq.z.real >= -RTOL * abs(eq.z)


# -- against the exact reference ----------------------------------------------------------------
@SLOW
@given(g=regions(), freq=st.sampled_from([0.0, 159.15494309189535]))
def test_random_regions_match_the_exact_reference(g: Grown, freq: float) -> None:
    # reference: independent sympy nodal solve (159.15... Hz is w = 1000 rad/s; the reference
    # takes the exact w so that its arithmetic stays rational).
    exact_freq = 0 if freq == 0 else sympy.Integer(1000) / (2 * sympy.pi)
    try:
        ref = port_reference(g.circuit, g.port, exact_freq)
    except ValueError:  # exactly singular: the engine must say so
        try:
            equivalent(with_load(g), region=g.region, port=g.port, freq=freq)
        except SingularCircuitError:
            return
        raise AssertionError("the engine solved a region that has no unique solution") from None
    eq = equivalent(with_load(g), region=g.region, port=g.port, freq=freq)
    voc, isc, z = ref.numeric()
    assert (eq.has_thevenin, eq.has_norton) == (ref.has_thevenin, ref.has_norton)
    if ref.has_thevenin:
        assert _close(eq.voc, voc, floor=ref.voltage_scale)
    if ref.has_norton:
        assert _close(eq.isc, isc, floor=ref.current_scale)
    if ref.has_thevenin and ref.has_norton:
        assert _close(eq.z, z)


# -- robustness ---------------------------------------------------------------------------------
_NETS = ["gnd", "a", "b", "c", "d"]
_VALUES = st.one_of(
    st.sampled_from([0, 1, -1, 1e-300, 1e300, "4k7", "bad", 1 + 1j, math.nan, math.inf, None]),
    st.floats(allow_nan=True, allow_infinity=True),
)


@st.composite
def anything(draw: st.DrawFn) -> tuple[Circuit, object, object, object]:
    """Any netlist the circuit accepts, with any region, port and frequency."""
    c = Circuit()
    for i in range(draw(st.integers(0, 8))):
        kind = draw(st.sampled_from(sorted(KINDS)))
        nodes = tuple(draw(st.sampled_from(_NETS)) for _ in KINDS[kind])
        refs = tuple(draw(st.sampled_from([*c.names, "P99"]))
                     for _ in range({"ccvs": 1, "cccs": 1, "coupling": 2}.get(kind, 0)))
        with contextlib.suppress(CircuitError):  # refused by the builder: fine, try the next
            c.add(Part(f"P{i}", kind, nodes, draw(_VALUES), refs))
    names = [*c.names, "P99"]
    region = draw(st.one_of(st.sets(st.sampled_from(names)), st.lists(st.sampled_from(names)),
                            st.just(set())))
    port = draw(st.one_of(st.none(), st.tuples(st.sampled_from([*_NETS, "zz"]),
                                               st.sampled_from([*_NETS, "zz"])),
                          st.tuples(st.sampled_from(_NETS))))
    freq = draw(st.one_of(st.sampled_from([0, 0.0, 1e3, -1.0, math.nan, math.inf, 1e300, "1k"]),
                          st.floats(min_value=0, max_value=1e12)))
    return c, region, port, freq


@settings(max_examples=150, deadline=None)
@given(case=anything())
def test_equivalent_raises_only_circuit_errors(case: tuple[Circuit, object, object,
                                                           object]) -> None:
    # docs/architecture.md (errors.py): every engine error is a CircuitError; no numpy/scipy
    # error or warning escapes. A returned result obeys the existence rules.
    circuit, region, port, freq = case
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        try:
            eq = equivalent(circuit, region=region, port=port, freq=freq)
        except CircuitError as error:
            assert str(error)
            return
    assert eq.has_thevenin or eq.has_norton
    if eq.has_thevenin:
        assert cmath.isfinite(eq.voc)
    if eq.has_norton:
        assert cmath.isfinite(eq.isc)
    assert cmath.isinf(eq.z) if not eq.has_thevenin else cmath.isfinite(eq.z)


# -- collapse -----------------------------------------------------------------------------------
LOADS = st.one_of(OHMS, st.builds(complex, OHMS, st.sampled_from([-470.0, 100.0, 2.2e3])))


#: 159.15... Hz is w = 1000 rad/s; the exact reference takes that w exactly, so that its
#: arithmetic stays rational (see test_random_regions_match_the_exact_reference).
W_1000 = 159.15494309189535


def _exact(freq: float) -> object:
    """The frequency the exact reference solves at (hertz, exact where it can be)."""
    return sympy.Integer(1000) / (2 * sympy.pi) if freq == W_1000 else freq


def _port_seen(c: Circuit, port: tuple[str, str], freq: float, load: complex | None) -> tuple:
    """The port voltage of ``c`` (with ``load`` across the port too), solved exactly by the
    sympy nodal reference, and the scale its rounding is relative to."""
    if load is not None:
        c = c.copy()
        c.impedance("ZL", *port, load)
    ref = port_reference(c, port, _exact(freq))
    assert ref.has_thevenin  # the outside load joins the port
    return ref.numeric()[0], ref.voltage_scale


def assert_collapse_judged_exactly(original: Circuit, reduced: Circuit, port: tuple[str, str],
                                   freq: float, loads: list[complex]) -> None:
    """Outside the region only the port exists, so the collapse is right when the port voltage
    (and with it the current into each load) is the original's, for the outside as drawn and
    with each of ``loads`` across the port: both circuits solved by the exact reference, not by
    the engine."""
    for load in [None, *loads]:
        want, scale = _port_seen(original, port, freq, load)
        got, _ = _port_seen(reduced, port, freq, load)
        assert _close(got, want, floor=scale), (load, got, want)


@SLOW
@given(g=regions(), freq=st.sampled_from([0.0, W_1000]),
       form=st.sampled_from(["thevenin", "norton"]), loads=st.lists(LOADS, min_size=1, max_size=2))
def test_collapsed_circuit_behaves_as_the_original(g: Grown, freq: float, form: str,
                                                   loads: list[complex]) -> None:
    # Thevenin's and Norton's theorems: outside the region, nothing tells the equivalent from
    # the region, for the load as drawn and for every load tried across the port. Judged by
    # the independent sympy nodal solve (reference), not by the engine's own check.
    original = with_load(g)
    eq = solved(g, freq)
    assume(eq.has_thevenin if form == "thevenin" else eq.has_norton)
    reduced = collapse(original, g.region, port=g.port, freq=freq, form=form)
    assert_collapse_judged_exactly(original, reduced, g.port, freq, loads)


def _check_collapse(c: Circuit, region: set[str], port: tuple[str, str]) -> None:
    reduced = collapse(c, region, port=port)
    assert_collapse_judged_exactly(c, reduced, port, 0.0, [10])


def test_collapse_seen_through_a_floating_port() -> None:
    # A shape the property above finds: ground lies only inside the region, the outside floats.
    # Outside, only voltage differences exist; the equivalent keeps V(x) - V(y) = 0.5 V exactly.
    c = Circuit()
    c.voltage_source("V1", "x", "gnd", 1)
    c.resistor("R1", "gnd", "y", "1k")
    c.resistor("RL", "x", "y", "1k")
    _check_collapse(c, {"V1", "R1"}, ("x", "y"))


def test_collapse_of_a_region_whose_port_voltage_cancels() -> None:
    # Another shape it finds: 0.3 A circulates inside (3 V, 10 Ω and a wire in a loop) and the
    # port sees none of it, so voc = 0; outside, both circuits show 0 V up to rounding.
    c = Circuit()
    c.resistor("R1", "n1", "gnd", 10)
    c.voltage_source("V1", "n1", "x", 3)
    c.resistor("R2", "x", "n3", 10)
    c.resistor("W1", "n3", "n1", 0)
    c.resistor("RL", "n1", "gnd", "1k")
    _check_collapse(c, {"R1", "V1", "R2", "W1"}, ("n1", "gnd"))


@FAST
@given(g=regions(), freq=FREQS, load=LOADS)
def test_loaded_port_voltage_is_the_divider_of_the_equivalent(g: Grown, freq: float,
                                                             load: complex) -> None:
    # Thevenin's theorem with the divider rule (common practice): a load Z_L across the port
    # sees V = voc Z_L / (z + Z_L), the same as the open voltage of region and load together.
    eq = solved(g, freq)
    assume(eq.has_thevenin)
    c = g.circuit.copy()
    c.impedance("ZL", *g.port, load)
    c.resistor("LOAD", *g.port, 1e3)
    loaded = solved(g, freq, c, g.port, {*g.region, "ZL"})
    want = eq.voc * load / (eq.z + load)
    # where every voltage cancels to rounding level, the engine's reported error bounds are
    # the measure of that rounding
    noise = loaded.voc_error + abs(load / (eq.z + load)) * eq.voc_error
    assert _close(loaded.voc, want, floor=voltage_scale(g, freq)) \
        or abs(loaded.voc - want) <= noise
