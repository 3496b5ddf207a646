"""Every refusal of the engine's analysis API, matched on its message.

The rules are those of docs/method.md: the two-terminal cut, controlled sources and couplings
on one side, and the existence of a unique solution at the analysis frequency. Each message
must name the parts or nets at fault; nothing but a CircuitError may come out.
"""

from __future__ import annotations

import warnings
from functools import partial

import pytest
from circuits import divider as shared_divider

from portcut.engine import (
    GROUND,
    Circuit,
    CircuitError,
    CutError,
    SingularCircuitError,
    ValueParseError,
    check_cut,
    check_equivalence,
    collapse,
    equivalent,
    sweep,
)

#: 5 V behind 1 kΩ into 1 kΩ at net "a", loaded by 10 kΩ.
divider = partial(shared_divider, 5, "1k", "1k", load="10k", out="a")


REGION = {"V1", "R1", "R2"}


# -- the region and the port --------------------------------------------------------------------
@pytest.mark.parametrize(("region", "message"), [
    ({"V1", "R9", "X1"}, r"not in the circuit: R9, X1"),
    ("R1", r"collection of part names, not the single text 'R1'"),
    (set(), r"the region is empty"),
    (5, r"collection of part names, not 5"),
])
def test_bad_regions(region: object, message: str) -> None:
    with pytest.raises(CutError, match=message):
        check_cut(divider(), region)


@pytest.mark.parametrize(("port", "message"), [
    (("a",), r"two net names \(plus, minus\)"),
    ("a0", r"two net names"),
    (("a", "a"), r"both net 'a'"),
    (("a", "zz"), r"port net 'zz' is not a net of any part in the region"),
    (("a", 0), r"two net names"),
])
def test_bad_ports(port: object, message: str) -> None:
    with pytest.raises(CutError, match=message):
        check_cut(divider(), REGION, port)


def test_a_region_meeting_the_rest_at_three_nets() -> None:
    c = divider()
    c.resistor("R3", "in", "vref", "1k")
    c.resistor("R4", "vref", GROUND, "1k")
    with pytest.raises(CutError, match=r"at 3 nets: a, gnd, vref — a two-terminal cut needs "
                                       r"exactly 2; .*move the parts on one of them"):
        check_cut(c, REGION | {"R3"})


def test_a_region_meeting_the_rest_at_one_net_needs_a_port() -> None:
    c = divider()
    c.resistor("R5", "a", "x", "1k")
    with pytest.raises(CutError, match=r"at 1 net: a — .* give the port"):
        check_cut(c, {"R5"})


def test_a_net_besides_the_given_port() -> None:
    c = divider()
    c.resistor("R3", "in", "x", "1k")
    with pytest.raises(CutError, match=r"at net in besides its port \(a, gnd\)"):
        check_cut(c, REGION, ("a", GROUND))


def test_the_whole_circuit_needs_a_port() -> None:
    c = divider()
    with pytest.raises(CutError, match=r"at 0 nets — .*give the port"):
        check_cut(c, set(c.names))


# -- controlled sources and couplings across the boundary ---------------------------------------
def test_current_controlled_source_inside_controlled_from_outside() -> None:
    c = divider()
    c.cccs("DS1", GROUND, "a", "RL", 2)
    with pytest.raises(CutError, match="DS1 inside the region is controlled by the current in "
                                       "RL outside it"):
        check_cut(c, REGION | {"DS1"}, ("a", GROUND))


def test_current_controlled_source_outside_controlled_from_inside() -> None:
    c = divider()
    c.ccvs("DS7", "b", GROUND, "R1", 10)
    c.resistor("R7", "b", "a", "1k")
    with pytest.raises(CutError, match="DS7 outside the region is controlled by the current in "
                                       "R1 inside it"):
        check_cut(c, REGION, ("a", GROUND))


def test_controller_missing_from_the_circuit() -> None:
    c = divider()
    c.cccs("DS1", GROUND, "a", "R99", 2)
    with pytest.raises(CircuitError, match="DS1 is controlled by the current in R99, which is "
                                           "not in the circuit"):
        check_cut(c, REGION | {"DS1"}, ("a", GROUND))


def test_voltage_controlled_source_sensing_across_the_boundary() -> None:
    c = divider()
    c.resistor("R5", "a", "far", "1k")
    c.resistor("R6", "far", GROUND, "1k")
    c.vcvs("DS2", "e", GROUND, "far", GROUND, 3)
    c.resistor("RE", "e", "a", "1k")
    with pytest.raises(CutError, match="DS2 inside the region senses net far, which lies "
                                       "outside it"):
        check_cut(c, REGION | {"DS2", "RE"}, ("a", GROUND))
    c2 = divider()
    c2.vccs("DS3", "o", GROUND, "in", GROUND, "1m")
    c2.resistor("RO", "o", GROUND, "1k")
    with pytest.raises(CutError, match="DS3 outside the region senses net in, which lies "
                                       "inside it"):
        check_cut(c2, REGION, ("a", GROUND))


def test_op_amp_sensing_across_the_boundary() -> None:
    c = divider()
    c.resistor("R5", "a", "far", "1k")
    c.resistor("R6", "far", GROUND, "1k")
    c.opamp("U1", "far", "o", "o")
    c.resistor("RO", "o", "a", "1k")
    with pytest.raises(CutError, match="U1 inside the region senses net far"):
        check_cut(c, REGION | {"U1", "RO"}, ("a", GROUND))


def test_coupling_across_the_boundary() -> None:
    c = divider()
    c.inductor("L1", "a", GROUND, "1m")
    c.inductor("L2", "s", GROUND, "1m")
    c.resistor("RS", "s", GROUND, 10)
    c.coupling("CP1", "L1", "L2", 0.5)
    with pytest.raises(CutError, match="CP1 couples L1 inside the region with L2 outside it"):
        check_cut(c, REGION | {"L1", "CP1"}, ("a", GROUND))


def test_coupling_of_inductances_of_opposite_signs() -> None:
    # M = k sqrt(L1 L2) (textbook definition of the coupling coefficient) has no real value
    # when L1 L2 < 0; the coupling must be refused by name, not fail inside the square root.
    c = divider()
    c.inductor("L1", "a", GROUND, "1m")
    c.inductor("L2", "a", "s", "-1m")
    c.resistor("RS", "s", GROUND, 10)
    c.coupling("CP1", "L1", "L2", 0.5)
    with pytest.raises(CircuitError, match="CP1 couples inductors of opposite signs"):
        equivalent(c, REGION | {"L1", "L2", "RS", "CP1"}, ("a", GROUND), freq=1e3)


# -- existence of a unique solution -------------------------------------------------------------
def test_loop_of_voltage_sources() -> None:
    c = divider()
    c.voltage_source("V2", "in", GROUND, 3)
    with pytest.raises(SingularCircuitError, match=r"(?=.*V1)(?=.*V2).*loop of voltage-defined"):
        equivalent(c, REGION | {"V2"}, ("a", GROUND))


def test_loop_of_wires() -> None:
    c = divider()
    c.resistor("W1", "a", "w", 0)
    c.resistor("W2", "w", "a", 0)
    with pytest.raises(SingularCircuitError, match=r"W1, W2 form a loop"):
        equivalent(c, REGION | {"W1", "W2"}, ("a", GROUND))


def test_inductor_loop_only_at_dc() -> None:
    c = divider()
    c.inductor("L1", "in", GROUND, "1m")
    region = REGION | {"L1"}
    assert equivalent(c, region, ("a", GROUND), 1e3).has_thevenin
    with pytest.raises(SingularCircuitError, match="inductors are shorts at DC"):
        equivalent(c, region, ("a", GROUND), 0)


def test_current_source_cut_set() -> None:
    c = divider()
    c.current_source("I1", "a", "x", "1m")
    c.current_source("I2", "x", GROUND, "1m")
    with pytest.raises(SingularCircuitError, match=r"net x connects to the rest only through the "
                                                   r"current sources I1, I2"):
        equivalent(c, REGION | {"I1", "I2"}, ("a", GROUND))


def test_capacitor_cut_set_at_dc() -> None:
    c = divider()
    c.current_source("I1", "a", "x", "1m")
    c.capacitor("C1", "x", GROUND, "1u")
    region = REGION | {"I1", "C1"}
    assert equivalent(c, region, ("a", GROUND), 50).has_thevenin
    with pytest.raises(SingularCircuitError, match=r"current source I1 \(capacitors are open at "
                                                   r"DC: C1\)"):
        equivalent(c, region, ("a", GROUND), 0)


def test_sensing_between_isolated_islands() -> None:
    c = divider()
    c.inductor("L1", "a", GROUND, "1m")
    c.inductor("L2", "s", "t", "1m")
    c.coupling("CP1", "L1", "L2", 0.5)
    c.vcvs("DS1", "e", GROUND, "s", GROUND, 2)
    c.resistor("RE", "e", "a", "1k")
    with pytest.raises(SingularCircuitError, match="DS1 senses the voltage between nets s and gnd, "
                                                   "which no conducting path joins"):
        equivalent(c, REGION | {"L1", "L2", "CP1", "DS1", "RE"}, ("a", GROUND), 1e3)


def test_op_amp_without_feedback() -> None:
    c = divider()
    c.opamp("U1", "in", GROUND, "o")
    c.resistor("RO", "o", "a", "1k")
    with pytest.raises(SingularCircuitError, match=r"U1.*negative feedback"):
        equivalent(c, REGION | {"U1", "RO"}, ("a", GROUND))


def test_nothing_but_circuit_errors_and_no_warnings() -> None:
    c = divider()
    c.opamp("U1", "in", GROUND, "o")
    c.resistor("RO", "o", "a", "1k")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        for freq in (0, 1e3):
            with pytest.raises(CircuitError):
                equivalent(c, REGION | {"U1", "RO"}, ("a", GROUND), freq)
            with pytest.raises(CircuitError):
                sweep(c, REGION | {"U1", "RO"}, [freq, 2e3], ("a", GROUND))


def test_impedances_overflowing_at_an_absurd_frequency() -> None:
    # 2 pi f C overflows double precision (IEEE 754 binary64 tops out near 1.8e308) for a
    # 10 GF capacitor at 1e300 Hz: a clear refusal, no overflow warning.
    c = divider()
    c.capacitor("C1", "a", GROUND, 1e10)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(SingularCircuitError, match="overflow double precision"):
            equivalent(c, REGION | {"C1"}, ("a", GROUND), 1e300)


# -- arguments ----------------------------------------------------------------------------------
@pytest.mark.parametrize("freq", [-1, "fast", float("nan"), float("inf"), 1j])
def test_bad_frequency(freq: object) -> None:
    with pytest.raises(ValueParseError, match="frequency"):
        equivalent(divider(), REGION, ("a", GROUND), freq)


@pytest.mark.parametrize(("freqs", "message"), [
    ([], "non-empty"),
    ([[1, 2]], "one-dimensional"),
    ([1.0, -5.0], r"-5.0 Hz must be finite and 0 or more"),
    ([1.0, float("nan")], "must be finite"),
    (["1k", "x"], "frequency"),
    (7, "sequence of frequencies"),
])
def test_bad_sweep_frequencies(freqs: object, message: str) -> None:
    with pytest.raises(CircuitError, match=message):
        sweep(divider(), REGION, freqs, ("a", GROUND))


def test_collapse_refuses_a_form_that_does_not_exist() -> None:
    stiff = Circuit()
    stiff.voltage_source("V1", "a", GROUND, 5)
    stiff.resistor("RL", "a", GROUND, 1)
    with pytest.raises(CircuitError, match=r"no Norton form at DC: its impedance is zero .*use "
                                           r"form='thevenin'"):
        collapse(stiff, {"V1"}, ("a", GROUND), form="norton")
    soft = Circuit()
    soft.current_source("I1", GROUND, "a", 5)
    soft.resistor("RL", "a", GROUND, 1)
    with pytest.raises(CircuitError, match=r"no Thevenin form at 1 kHz: its impedance is "
                                           r"infinite .*use form='norton'"):
        collapse(soft, {"I1"}, ("a", GROUND), freq=1e3, form="thevenin")
    with pytest.raises(CircuitError, match="form must be 'thevenin' or 'norton', not 'both'"):
        collapse(soft, {"I1"}, ("a", GROUND), form="both")


def test_check_equivalence_refuses_an_altered_outside() -> None:
    c = divider()
    reduced = collapse(c, REGION, ("a", GROUND))
    with pytest.raises(CircuitError, match="the reduced circuit changes RL"):
        check_equivalence(c, reduced.with_value("RL", 5), REGION)
    with pytest.raises(CircuitError, match="the reduced circuit lacks RL"):
        check_equivalence(c, reduced.without(["RL"]), REGION)
    with pytest.raises(ValueParseError, match="load"):
        check_equivalence(c, reduced, REGION, loads=["lots"])


def test_check_equivalence_says_which_case_has_no_solution() -> None:
    stiff = Circuit()
    stiff.voltage_source("V1", "in", GROUND, 5)
    stiff.resistor("RL", "in", GROUND, 10)
    reduced = collapse(stiff, {"V1"}, ("in", GROUND))
    with pytest.raises(SingularCircuitError, match=r"the original circuit with a short across "
                                                   r"the port has no unique solution"):
        check_equivalence(stiff, reduced, {"V1"}, loads=[0])


def test_max_power_basis_and_realisation_inputs() -> None:
    eq = equivalent(divider(), REGION, ("a", GROUND))
    with pytest.raises(CircuitError, match="basis must be 'peak' or 'rms', not 'avg'"):
        eq.max_power("avg")
