"""Ideal op-amps wired in degenerate ways, judged against the exact reference
(tests/references/sympy_nodal.py: a sympy tableau solve with the op-amp as a nullor).

An ideal op-amp holds its inputs at one voltage and drives whatever output current that takes.
Wired oddly (its output tied to an input, driving the port itself, both inputs on one net, two
op-amps fixing each other's inputs, no feedback at all) the region may have only one form, or
none: the engine must find the forms the exact solve finds, and refuse by name where there are
none, at single frequencies and in sweeps alike.
"""

from __future__ import annotations

import cmath

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from sympy_nodal import PortReference, port_reference

from portcut.engine import GROUND, Circuit, Equivalent, SingularCircuitError, equivalent, sweep

RTOL = 1e-9
NETS = [GROUND, "a", "b", "c", "d"]
OHMS = st.sampled_from([10.0, 100.0, 1e3, 4.7e3])


def _reference(c: Circuit, port: tuple[str, str], freq: float) -> PortReference | None:
    try:
        return port_reference(c, port, freq)
    except ValueError:  # no unique solution with the port open or shorted
        return None


def _loaded(c: Circuit, port: tuple[str, str]) -> Circuit:
    full = c.copy()
    full.resistor("LOAD", *port, 1e3)
    return full


def _judge(eq: Equivalent | None, ref: PortReference | None) -> None:
    """The engine's result (None: it refused) against the reference's (None: no solution)."""
    if ref is None:
        assert eq is None, f"the engine solved a region with no unique solution: {eq}"
        return
    assert eq is not None, "the engine refused a region the reference solves"
    assert (eq.has_thevenin, eq.has_norton) == (ref.has_thevenin, ref.has_norton), (eq, ref)
    voc, isc, z = ref.numeric()
    if ref.has_thevenin:
        assert abs(eq.voc - voc) <= RTOL * max(abs(voc), ref.voltage_scale), (eq.voc, voc)
    if ref.has_norton:
        assert abs(eq.isc - isc) <= RTOL * max(abs(isc), ref.current_scale), (eq.isc, isc)
    if ref.has_thevenin and ref.has_norton:
        assert abs(eq.z - z) <= RTOL * abs(z), (eq.z, z)
    elif ref.has_thevenin:
        assert eq.z == 0
    else:
        assert cmath.isinf(eq.z)


def _single(c: Circuit, port: tuple[str, str], freq: float) -> Equivalent | None:
    try:
        return equivalent(_loaded(c, port), set(c.names), port, freq)
    except SingularCircuitError:
        return None


def _swept(c: Circuit, port: tuple[str, str], freq: float) -> Equivalent | None:
    try:
        return sweep(_loaded(c, port), set(c.names), [freq, 2 * freq, 3 * freq], port)[0]
    except SingularCircuitError:
        return None


def _source(c: Circuit) -> None:
    """1 V behind 1 kΩ into net a, 4.7 kΩ from a to ground."""
    c.voltage_source("V1", "s", GROUND, 1)
    c.resistor("RS", "s", "a", 1e3)
    c.resistor("RA", "a", GROUND, 4.7e3)


def follower() -> tuple[Circuit, tuple[str, str], str]:
    c = Circuit()
    _source(c)
    c.opamp("U1", "a", "o", "o")  # output tied to the inverting input
    return c, ("o", GROUND), "thevenin only: voc = V(a), z = 0"


def inverting_stage_at_the_port() -> tuple[Circuit, tuple[str, str], str]:
    c = Circuit()
    _source(c)
    c.resistor("RI", "a", "n", 1e3)
    c.resistor("RF", "n", "o", 2.2e3)
    c.opamp("U1", GROUND, "n", "o")  # the op-amp drives the port itself
    return c, ("o", GROUND), "thevenin only"


def virtual_ground_at_the_port() -> tuple[Circuit, tuple[str, str], str]:
    c = Circuit()
    _source(c)
    c.resistor("RI", "a", "n", 1e3)
    c.resistor("RF", "n", "o", 2.2e3)
    c.opamp("U1", GROUND, "n", "o")
    return c, ("n", GROUND), "thevenin only: the inputs hold the port at 0 V"


def both_inputs_on_one_net() -> tuple[Circuit, tuple[str, str], str]:
    c = Circuit()
    _source(c)
    c.resistor("RF", "a", "o", 1e3)
    c.opamp("U1", "a", "a", "o")  # nothing fixes the output
    return c, ("o", GROUND), "no unique solution"


def no_feedback() -> tuple[Circuit, tuple[str, str], str]:
    c = Circuit()
    _source(c)
    c.resistor("RO", "o", GROUND, 1e3)
    c.opamp("U1", "a", GROUND, "o")
    return c, ("a", GROUND), "no unique solution: the input network is fixed twice"


def nullor_loop() -> tuple[Circuit, tuple[str, str], str]:
    c = Circuit()
    _source(c)
    c.resistor("R1", "x", GROUND, 1e3)
    c.resistor("R2", "y", GROUND, 2.2e3)
    c.resistor("R3", "x", "a", 470.0)
    c.opamp("U1", "x", GROUND, "y")  # each op-amp's output fixes the other's input
    c.opamp("U2", "y", GROUND, "x")
    return c, ("x", GROUND), "per the reference"


def output_into_a_load_only() -> tuple[Circuit, tuple[str, str], str]:
    # the output reaches nothing but its load, the port sits on the input side: the input
    # network is fixed twice (by its own currents and by the op-amp), the output not at all
    c = Circuit()
    c.resistor("R0", "a", GROUND, 10.0)
    c.resistor("R1", "o", GROUND, 1e3)
    c.resistor("R2", "c", "a", 100.0)
    c.resistor("R3", "d", "o", 100.0)
    c.resistor("R4", GROUND, "c", 1e3)
    c.opamp("U1", GROUND, "a", "o")
    return c, ("a", "c"), "no unique solution"


def port_on_an_undriven_output() -> tuple[Circuit, tuple[str, str], str]:
    # the output drives a loop of its own, the inputs sense another net: nothing fixes the
    # output's voltage with the port open, so only a short across it does (Norton only); its
    # admittance is exactly zero, however it rounds
    c = Circuit()
    c.resistor("R0", "a", GROUND, 10.0)
    c.resistor("R1", "b", GROUND, 4.7e3)
    c.resistor("R2", "c", "b", 1e3)
    c.resistor("R3", "o", GROUND, 10.0)
    c.resistor("R4", "o", "a", 100.0)
    c.opamp("U1", "b", GROUND, "o")
    return c, ("o", "c"), "norton only"


CASES = [follower, output_into_a_load_only, port_on_an_undriven_output,
         inverting_stage_at_the_port, virtual_ground_at_the_port, both_inputs_on_one_net,
         no_feedback, nullor_loop]


@pytest.mark.parametrize("freq", [0.0, 1e3])
@pytest.mark.parametrize("build", CASES, ids=lambda b: b.__name__)
def test_named_degenerate_stages_match_the_exact_reference(build, freq: float) -> None:
    c, port, _ = build()
    ref = _reference(c, port, freq)
    _judge(_single(c, port, freq), ref)
    if freq:
        _judge(_swept(c, port, freq), ref)


def test_the_reference_sees_what_the_cases_claim() -> None:
    # the shapes above are the degenerate ones they are named for
    follow = _reference(*follower()[:2], 0)
    assert follow is not None and follow.has_thevenin and not follow.has_norton
    assert follow.voc == port_reference(follower()[0], ("a", GROUND), 0).voc
    assert not _reference(*inverting_stage_at_the_port()[:2], 0).has_norton
    virtual = _reference(*virtual_ground_at_the_port()[:2], 0)
    assert virtual.voc == 0 and not virtual.has_norton
    assert _reference(*both_inputs_on_one_net()[:2], 0) is None
    assert _reference(*no_feedback()[:2], 0) is None
    assert _reference(*output_into_a_load_only()[:2], 0) is None
    undriven = _reference(*port_on_an_undriven_output()[:2], 0)
    assert not undriven.has_thevenin and undriven.has_norton


@st.composite
def wired_anyhow(draw: st.DrawFn) -> tuple[Circuit, tuple[str, str]]:
    """A resistive tree on a few nets, maybe a source, and one to three ideal op-amps whose pins
    land on any nets (so outputs meet inputs, inputs share a net, op-amps drive each other)."""
    c = Circuit()
    for i, net in enumerate(NETS[1:]):
        c.resistor(f"R{i}", net, draw(st.sampled_from(NETS[:i + 1])), draw(OHMS))
    if draw(st.booleans()):
        c.voltage_source("V1", draw(st.sampled_from(NETS[1:])), "x", draw(st.sampled_from([1, -3])))
        c.resistor("RX", "x", draw(st.sampled_from(NETS)), 100.0)
    for k in range(draw(st.integers(1, 3))):
        c.opamp(f"U{k}", *(draw(st.sampled_from(NETS)) for _ in range(3)))
    for k in range(draw(st.integers(0, 2))):
        a, b = draw(st.lists(st.sampled_from(NETS), min_size=2, max_size=2, unique=True))
        c.resistor(f"RR{k}", a, b, draw(OHMS))
    plus = draw(st.sampled_from(NETS[1:]))
    return c, (plus, draw(st.sampled_from([n for n in NETS if n != plus])))


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(case=wired_anyhow())
def test_op_amps_wired_anyhow_get_the_forms_of_the_exact_reference(
        case: tuple[Circuit, tuple[str, str]]) -> None:
    c, port = case
    _judge(_single(c, port, 0.0), _reference(c, port, 0.0))


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(case=wired_anyhow(), cap=st.lists(st.sampled_from(NETS), min_size=2, max_size=2,
                                         unique=True))
def test_op_amps_wired_anyhow_sweep_as_single_calls(case: tuple[Circuit, tuple[str, str]],
                                                    cap: list[str]) -> None:
    # with a capacitor, above DC: single calls and the sweep's first point against the reference
    c, port = case
    c.capacitor("C9", *cap, 1e-6)
    ref = _reference(c, port, 1e3)
    _judge(_single(c, port, 1e3), ref)
    _judge(_swept(c, port, 1e3), ref)
