"""Engine port equivalents against an independent exact solve (tests/references/sympy_nodal.py).

Reference: independent sympy nodal solve, for every circuit below. The reference is exact (rational
arithmetic, s = j w with w rational), so the whole difference is the engine's floating-point error.
Tolerance: LU in float64 loses about kappa * eps (eps = 2.2e-16) relative, kappa the condition
number of the engine's system. The circuits here span at most eight decades of admittance
(10 Ω .. 1 MΩ with gains up to 100), so kappa stays below ~1e6 and the error below ~2e-10;
RTOL = 1e-9 keeps a margin of five, while a wrong sign or stamp shows up as an O(1) error.
"""

from __future__ import annotations

import cmath
from collections.abc import Callable

import pytest
import sympy
from sympy_nodal import PortReference, port_reference

from portcut.engine import Circuit, Equivalent, equivalent, sweep

RTOL = 1e-9
Case = tuple[Circuit, set[str], tuple[str, str], sympy.Expr]
CASES: dict[str, Callable[[], Case]] = {}


def case(build: Callable[[], Case]) -> Callable[[], Case]:
    CASES[build.__name__] = build
    return build


def at_omega(w: int) -> sympy.Expr:
    """The exact frequency in hertz of angular frequency ``w`` rad/s."""
    return sympy.Integer(w) / (2 * sympy.pi)


def assert_close(got: complex, want: complex, floor: float = 0.0) -> None:
    assert abs(got - want) <= RTOL * max(abs(want), floor), f"got {got!r}, expected {want!r}"


def assert_matches_reference(circuit: Circuit, region: set[str], port: tuple[str, str],
                             freq: sympy.Expr) -> None:
    """The engine's result for the region equals the reference solve of its parts alone."""
    assert_agrees(equivalent(circuit, region=region, port=port, freq=float(freq)),
                  port_reference(circuit.subcircuit(region), port, freq), port, freq)


def assert_agrees(eq: Equivalent, ref: PortReference, port: tuple[str, str],
                  freq: sympy.Expr) -> None:
    voc, isc, z = ref.numeric()
    assert eq.port == port
    assert eq.freq == float(freq)
    assert (eq.has_thevenin, eq.has_norton) == (ref.has_thevenin, ref.has_norton)
    # A value that cancels to (near) zero is compared on the size of the whole solution.
    if ref.has_thevenin:
        assert_close(eq.voc, voc, ref.voltage_scale)
    if ref.has_norton:
        assert_close(eq.isc, isc, ref.current_scale)
    if not ref.has_thevenin:
        assert cmath.isinf(eq.z)
    elif not ref.has_norton:
        assert eq.z == 0
    else:
        assert_close(eq.z, z)


# -- the circuits (scenarios of our own; every part kind appears) -------------------------------
@case
def divider_dc() -> Case:
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 12)
    c.resistor("R1", "in", "a", "4k7")
    c.resistor("R2", "a", "gnd", "10k")
    c.resistor("RL", "a", "gnd", "1k")  # the load, outside
    return c, {"V1", "R1", "R2"}, ("a", "gnd"), sympy.Integer(0)


@case
def current_source_through_a_wire() -> Case:
    c = Circuit()
    c.current_source("I1", "gnd", "a", "3m")
    c.resistor("R3", "a", "gnd", "10k")
    c.resistor("R1", "a", "b", "2k2")
    c.resistor("W1", "b", "c", 0)  # ideal wire
    c.resistor("R2", "c", "gnd", "3k3")
    c.resistor("RL", "c", "gnd", "470")
    return c, {"I1", "R3", "R1", "W1", "R2"}, ("c", "gnd"), sympy.Integer(0)


@case
def rc_ladder_with_phase() -> Case:
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 1, phase_deg=30)
    c.resistor("R1", "in", "m", "1k")
    c.capacitor("C1", "m", "gnd", "100n")
    c.resistor("R2", "m", "out", "2k2")
    c.capacitor("C2", "out", "gnd", "47n")
    c.resistor("RL", "out", "gnd", "10k")
    return c, {"V1", "R1", "C1", "R2", "C2"}, ("out", "gnd"), at_omega(10_000)


@case
def series_rlc_with_fixed_impedance() -> Case:
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 2 - 1j)
    c.inductor("L1", "in", "x", "10m")
    c.impedance("Z1", "x", "y", 50 + 30j)
    c.capacitor("C1", "y", "gnd", "22u")
    c.resistor("RL", "y", "gnd", "100")
    return c, {"V1", "L1", "Z1", "C1"}, ("y", "gnd"), at_omega(2000)


@case
def transformer_to_grounded_secondary() -> Case:
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 10)
    c.resistor("R1", "in", "p", "50")
    c.inductor("L1", "p", "gnd", "1m")
    c.inductor("L2", "s", "gnd", "4m")  # sqrt(L1 L2) = 2 mH
    c.coupling("CP1", "L1", "L2", 0.9)
    c.resistor("R2", "s", "gnd", "1k")
    c.resistor("RL", "s", "gnd", "330")
    return c, {"V1", "R1", "L1", "L2", "CP1", "R2"}, ("s", "gnd"), at_omega(50_000)


@case
def transformer_isolated_reversed_winding() -> Case:
    # The secondary floats from the primary; its dot is at the far end (negative k).
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 5, phase_deg=-45)
    c.resistor("R1", "in", "p", "10")
    c.inductor("L1", "p", "gnd", "2m")
    c.inductor("L2", "t", "u", "8m")
    c.coupling("CP1", "L2", "L1", -0.7)
    c.capacitor("C2", "t", "u", "220n")
    c.resistor("RL", "t", "u", "1k")
    c.resistor("RB", "u", "gnd", "1M")
    return c, {"V1", "R1", "L1", "L2", "CP1", "C2"}, ("t", "u"), at_omega(20_000)


@case
def vcvs_amplifier_with_feedback() -> Case:
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", "0.1")
    c.resistor("R1", "in", "n", "10k")
    c.resistor("R2", "n", "e", "100k")
    c.vcvs("DS1", "e", "gnd", "gnd", "n", 100)  # inverting gain of 100 on V(n)
    c.resistor("RO", "e", "out", "75")
    c.resistor("RL", "out", "gnd", "600")
    return c, {"V1", "R1", "R2", "DS1", "RO"}, ("out", "gnd"), sympy.Integer(0)


@case
def negative_resistance_from_a_vccs() -> Case:
    # Positive feedback: the VCCS pushes 1 mS * V(a) into a, more than 10 kΩ || 2 kΩ draws:
    # z = 1 / (0.1 mS + 0.5 mS - 1 mS) = -2.5 kΩ.
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 3)
    c.resistor("R1", "in", "a", "10k")
    c.resistor("R2", "a", "gnd", "2k")
    c.vccs("DS1", "gnd", "a", "a", "gnd", "1m")
    c.resistor("RL", "a", "gnd", "5k")
    return c, {"V1", "R1", "R2", "DS1"}, ("a", "gnd"), sympy.Integer(0)


@case
def ccvs_sensing_a_resistor_at_ac() -> Case:
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 1)
    c.resistor("R1", "in", "m", "1k")
    c.capacitor("C1", "m", "gnd", "1u")
    c.ccvs("DS1", "h", "gnd", "R1", 500)  # voltage at h = 500 Ω × current in R1
    c.resistor("RO", "h", "out", "50")
    c.inductor("L1", "out", "gnd", "5m")
    c.resistor("RL", "out", "gnd", "1k")
    return c, {"V1", "R1", "C1", "DS1", "RO", "L1"}, ("out", "gnd"), at_omega(1000)


@case
def cccs_sensing_a_zero_volt_source() -> Case:
    # A current amplifier: the 0 V source senses the input current, the CCCS mirrors it x50.
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", "0.7")
    c.resistor("RB", "in", "b", "47k")
    c.voltage_source("VS", "b", "gnd", 0)
    c.cccs("DS1", "c", "gnd", "VS", 50)
    c.resistor("RC", "cc", "c", "2k2")
    c.voltage_source("VCC", "cc", "gnd", 9)
    c.resistor("RL", "c", "gnd", "10k")
    return c, {"V1", "RB", "VS", "DS1", "RC", "VCC"}, ("c", "gnd"), sympy.Integer(0)


@case
def cccs_and_ccvs_sensing_reactive_currents() -> Case:
    c = Circuit()
    c.current_source("I1", "gnd", "a", "1m", phase_deg=60)
    c.inductor("L1", "a", "gnd", "1m")
    c.capacitor("C1", "a", "b", "1u")
    c.cccs("DS1", "b", "gnd", "L1", "0.5")
    c.ccvs("DS2", "b", "d", "C1", 20)
    c.resistor("R1", "d", "gnd", "100")
    c.resistor("RL", "b", "gnd", "1k")
    return c, {"I1", "L1", "C1", "DS1", "DS2", "R1"}, ("b", "gnd"), at_omega(30_000)


@case
def opamp_inverting_stage() -> Case:
    # Output straight from the nullor: z = 0, so there is no Norton form.
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", "0.25")
    c.resistor("RI", "in", "n", "10k")
    c.resistor("RF", "n", "out", "47k")
    c.opamp("U1", "gnd", "n", "out")
    c.resistor("RL", "out", "gnd", "2k")
    return c, {"V1", "RI", "RF", "U1"}, ("out", "gnd"), sympy.Integer(0)


@case
def opamp_non_inverting_with_output_resistor() -> Case:
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 1, phase_deg=90)
    c.resistor("RS", "in", "p", "1k")
    c.opamp("U1", "p", "n", "o")
    c.resistor("RG", "n", "gnd", "1k")
    c.resistor("RF", "o", "n", "3k3")
    c.capacitor("CF", "o", "n", "10n")
    c.resistor("RO", "o", "out", "100")
    c.resistor("RL", "out", "gnd", "1k")
    return c, {"V1", "RS", "U1", "RG", "RF", "CF", "RO"}, ("out", "gnd"), at_omega(20_000)


@case
def current_source_at_the_port() -> Case:
    # A series resistor does not help: z is infinite, there is no Thevenin form.
    c = Circuit()
    c.current_source("I1", "gnd", "a", "5m")
    c.resistor("R1", "a", "b", "1k")
    c.resistor("RL", "b", "gnd", "1k")
    return c, {"I1", "R1"}, ("b", "gnd"), sympy.Integer(0)


@case
def voltage_source_at_the_port() -> Case:
    # A parallel resistor does not help: z is zero, there is no Norton form.
    c = Circuit()
    c.voltage_source("V1", "a", "gnd", 5)
    c.resistor("R1", "a", "gnd", "1k")
    c.resistor("RL", "a", "gnd", "1k")
    return c, {"V1", "R1"}, ("a", "gnd"), sympy.Integer(0)


def _bridge_with_reactances() -> Circuit:
    c = Circuit()
    c.voltage_source("V1", "top", "gnd", 10)
    c.resistor("R1", "top", "a", "1k")
    c.inductor("L1", "a", "gnd", "10m")  # a short at DC
    c.resistor("R2", "top", "b", "2k")
    c.capacitor("C1", "b", "gnd", "100n")  # open at DC
    c.resistor("R3", "b", "gnd", "3k")
    c.resistor("RM", "a", "b", "500")
    c.resistor("RL", "b", "gnd", "10k")
    return c


@case
def bridge_with_l_and_c_at_dc() -> Case:
    return _bridge_with_reactances(), {"V1", "R1", "L1", "R2", "C1", "R3", "RM"}, ("b", "gnd"), \
        sympy.Integer(0)


@case
def bridge_with_l_and_c_at_ac() -> Case:
    return _bridge_with_reactances(), {"V1", "R1", "L1", "R2", "C1", "R3", "RM"}, ("b", "gnd"), \
        at_omega(10_000)


@case
def floating_region_between_two_nets() -> Case:
    # The region holds no ground; the rest ties one port net to ground through a bias resistor.
    c = Circuit()
    c.current_source("I1", "x", "m", "2m")
    c.resistor("R1", "x", "m", "1k")
    c.resistor("R2", "m", "y", "2k")
    c.resistor("R3", "x", "y", "3k")
    c.resistor("RL", "x", "y", "1k")
    c.resistor("RB", "y", "gnd", "100k")
    return c, {"I1", "R1", "R2", "R3"}, ("x", "y"), sympy.Integer(0)


@case
def port_given_minus_first() -> Case:
    # port = ("gnd", "out"): the plus net is ground, so voc and isc change sign, z does not.
    c, region, _, freq = rc_ladder_with_phase()
    return c, region, ("gnd", "out"), freq


@case
def vccs_with_complex_transconductance() -> Case:
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 1)
    c.resistor("R1", "in", "g", "1k")
    c.capacitor("C1", "g", "gnd", "1n")
    c.vccs("DS1", "d", "gnd", "g", "gnd", 0.02 - 0.005j)  # a transconductance with a phase lag
    c.resistor("RD", "d", "gnd", "1k")
    c.inductor("LD", "d", "gnd", "100u")
    c.resistor("RL", "d", "gnd", "50")
    return c, {"V1", "R1", "C1", "DS1", "RD", "LD"}, ("d", "gnd"), at_omega(1_000_000)


@pytest.mark.parametrize("name", CASES)
def test_engine_matches_the_exact_reference(name: str) -> None:
    # reference: independent sympy nodal solve
    assert_matches_reference(*CASES[name]())


def test_every_part_kind_is_covered() -> None:
    # The cases above exercise every kind the netlist knows (and the 0 Ω wire).
    from portcut.engine import KINDS

    parts = [p for build in CASES.values() for p in build()[0]]
    assert {p.kind for p in parts} == set(KINDS)
    assert any(p.is_wire for p in parts)


def test_the_reference_sees_the_special_cases_the_cases_claim() -> None:
    # reference: independent sympy nodal solve. Guards the case list itself: each named
    # property really holds for the exact solution, so the engine is checked on it.
    def ref(name: str) -> PortReference:
        c, region, port, freq = CASES[name]()
        return port_reference(c.subcircuit(region), port, freq)

    assert ref("negative_resistance_from_a_vccs").z == -2500
    assert not ref("current_source_at_the_port").has_thevenin
    assert not ref("voltage_source_at_the_port").has_norton
    assert not ref("opamp_inverting_stage").has_norton
    assert ref("opamp_inverting_stage").voc == sympy.Rational(-47, 40)
    assert sympy.im(ref("transformer_to_grounded_secondary").z) != 0
    swapped, straight = ref("port_given_minus_first"), ref("rc_ladder_with_phase")
    assert sympy.simplify(swapped.voc + straight.voc) == 0
    assert sympy.simplify(swapped.z - straight.z) == 0


def test_port_may_be_omitted_when_the_region_meets_the_rest_at_two_nets() -> None:
    # reference: independent sympy nodal solve; with ground among the two nets it is minus.
    c, region, port, freq = CASES["transformer_to_grounded_secondary"]()
    ref = port_reference(c.subcircuit(region), port, freq)
    eq = equivalent(c, region=region, freq=float(freq))
    voc, isc, z = ref.numeric()
    assert eq.port == ("s", "gnd")
    assert_close(eq.voc, voc)
    assert_close(eq.isc, isc)
    assert_close(eq.z, z)


@pytest.mark.parametrize("name", ["bridge_with_l_and_c_at_ac", "transformer_to_grounded_secondary",
                                  "cccs_and_ccvs_sensing_reactive_currents",
                                  "opamp_non_inverting_with_output_resistor"])
def test_sweep_matches_the_reference_at_every_point(name: str) -> None:
    # reference: independent sympy nodal solve at each frequency, DC included (where L and C
    # change role) next to AC points solved as one batch.
    c, region, port, _ = CASES[name]()
    freqs = [at_omega(w) for w in (0, 300, 3_000, 30_000, 300_000)]
    result = sweep(c, region, [float(f) for f in freqs], port=port)
    assert len(result) == len(freqs)
    for i, f in enumerate(freqs):
        assert_agrees(result[i], port_reference(c.subcircuit(region), port, f), port, f)
