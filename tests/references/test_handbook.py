"""Closed forms and worked examples, each with its source; run on the engine and on the reference.

Every check runs twice: on the engine (the job) and on the exact sympy reference
(tests/references/sympy_nodal.py), so a closed form that both agree with also vouches for the
reference used elsewhere. Tolerance RTOL = 1e-9 as in test_against_sympy.py (float64 LU on systems
of a few nodes whose impedances span under six decades).
"""

from __future__ import annotations

import cmath
import math
from collections.abc import Callable
from dataclasses import dataclass

import pytest
import sympy
from sympy_nodal import port_reference

from portcut.engine import GROUND, Circuit, CircuitError, equivalent

RTOL = 1e-9


@dataclass(frozen=True)
class Port:
    voc: complex
    isc: complex
    z: complex
    has_thevenin: bool
    has_norton: bool


Solver = Callable[..., Port]


def _engine(circuit: Circuit, region: set[str], port: tuple[str, str], freq: object = 0) -> Port:
    eq = equivalent(circuit, region=region, port=port, freq=float(freq))
    return Port(eq.voc, eq.isc, eq.z, eq.has_thevenin, eq.has_norton)


def _reference(circuit: Circuit, region: set[str], port: tuple[str, str],
               freq: object = 0) -> Port:
    ref = port_reference(circuit.subcircuit(region), port, freq)
    voc, isc, z = ref.numeric()
    return Port(math.nan if voc is None else voc, math.nan if isc is None else isc, z,
                ref.has_thevenin, ref.has_norton)


@pytest.fixture(params=[_engine, _reference], ids=["engine", "sympy reference"])
def solve(request: pytest.FixtureRequest) -> Solver:
    return request.param


def close(got: complex, want: complex, floor: float = 0.0) -> bool:
    return abs(got - want) <= RTOL * max(abs(want), floor)


# -- voltage divider (common practice) ----------------------------------------------------------
def test_divider(solve: Solver) -> None:
    # Common practice: V_th = V R2 / (R1 + R2), R_th = R1 R2 / (R1 + R2), I_n = V / R1.
    v, r1, r2 = 10.0, 6e3, 4e3
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", v)
    c.resistor("R1", "in", "out", r1)
    c.resistor("R2", "out", "gnd", r2)
    c.resistor("RL", "out", "gnd", "1k")
    got = solve(c, {"V1", "R1", "R2"}, ("out", "gnd"))
    assert close(got.voc, v * r2 / (r1 + r2))
    assert close(got.z, r1 * r2 / (r1 + r2))
    assert close(got.isc, v / r1)


# -- Wheatstone bridge (common practice) --------------------------------------------------------
def _bridge(r4: float) -> Circuit:
    c = Circuit()
    c.voltage_source("V1", "top", "gnd", 5)
    c.resistor("R1", "top", "a", "1k")
    c.resistor("R2", "a", "gnd", "2k")
    c.resistor("R3", "top", "b", "3k")
    c.resistor("R4", "b", "gnd", r4)
    c.resistor("RG", "a", "b", "100")  # the detector, outside; the port floats from ground
    return c


@pytest.mark.parametrize("r4", [5e3, 6e3])
def test_wheatstone_bridge(solve: Solver, r4: float) -> None:
    # Common practice: seen from the detector, V_th = V (R2/(R1+R2) - R4/(R3+R4)) and
    # R_th = R1 || R2 + R3 || R4; the balanced bridge (R1 R4 = R2 R3, here R4 = 6k) gives 0 V.
    v, r1, r2, r3 = 5.0, 1e3, 2e3, 3e3
    got = solve(_bridge(r4), {"V1", "R1", "R2", "R3", "R4"}, ("a", "b"))
    assert close(got.voc, v * (r2 / (r1 + r2) - r4 / (r3 + r4)), floor=v)
    assert close(got.z, r1 * r2 / (r1 + r2) + r3 * r4 / (r3 + r4))


# -- source transformation (common practice) ----------------------------------------------------
@pytest.mark.parametrize("freq", [0, 1e3])
def test_source_transformation(solve: Solver, freq: float) -> None:
    # Common practice: V in series with Z equals V / Z in parallel with Z, at any frequency.
    v, r, ind = 3 - 4j, 220.0, 10e-3
    series, shunt = Circuit(), Circuit()
    series.voltage_source("V1", "in", "gnd", v)
    series.resistor("R1", "in", "m", r)
    series.inductor("L1", "m", "out", ind)
    z = r + 2j * math.pi * freq * ind
    shunt.current_source("I1", "gnd", "out", v / z)
    shunt.resistor("R1", "out", "m", r)
    shunt.inductor("L1", "m", "gnd", ind)
    for c, region in ((series, {"V1", "R1", "L1"}), (shunt, {"I1", "R1", "L1"})):
        c.resistor("RL", "out", "gnd", "1k")
        got = solve(c, region, ("out", "gnd"), freq)
        assert close(got.voc, v)
        assert close(got.isc, v / z)
        assert close(got.z, z)


# -- first-order RC low-pass corner (common practice) -------------------------------------------
R_LOW_PASS, C_LOW_PASS = sympy.Integer(1000), sympy.Rational(1, 10**7)
F_CORNER = 1 / (2 * sympy.pi * R_LOW_PASS * C_LOW_PASS)  # w = 1e4 rad/s exactly


def _rc_low_pass() -> tuple[Circuit, set[str]]:
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 1)
    c.resistor("R1", "in", "out", float(R_LOW_PASS))
    c.capacitor("C1", "out", "gnd", float(C_LOW_PASS))
    c.resistor("RL", "out", "gnd", "1M")
    return c, {"V1", "R1", "C1"}


def test_rc_low_pass_at_its_corner(solve: Solver) -> None:
    # Common practice: f_c = 1 / (2 pi R C); there V_out / V_in = 1 / (1 + j), i.e. 1/sqrt(2) at
    # -45 degrees, and the output impedance is R || 1/(j w C) = R / (1 + j).
    got = solve(*_rc_low_pass(), ("out", "gnd"), F_CORNER)
    assert close(abs(got.voc), 1 / math.sqrt(2))
    assert math.isclose(math.degrees(cmath.phase(got.voc)), -45, rel_tol=RTOL)
    assert close(got.z, 1000 / (1 + 1j))


# -- series RLC resonance (common practice) -----------------------------------------------------
def test_series_rlc_at_resonance_leaves_only_r(solve: Solver) -> None:
    # Common practice: at f0 = 1 / (2 pi sqrt(L C)) the reactances of L and C cancel, so the
    # series R-L-C source seen at its end is R alone: z = R, voc = V, isc = V / R.
    r, ind, cap = 50.0, sympy.Rational(1, 100), sympy.Rational(1, 10**6)
    f0 = 1 / (2 * sympy.pi * sympy.sqrt(ind * cap))
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 2)
    c.resistor("R1", "in", "x", r)
    c.inductor("L1", "x", "y", float(ind))
    c.capacitor("C1", "y", "out", float(cap))
    c.resistor("RL", "out", "gnd", "50")
    got = solve(c, {"V1", "R1", "L1", "C1"}, ("out", "gnd"), f0)
    # the cancellation leaves a reactance of order eps * w0 L, so z is compared on |w0 L| too
    w0_l = float(2 * sympy.pi * f0 * ind)
    assert close(got.z, r, floor=w0_l)
    assert close(got.voc, 2)
    assert close(got.isc, 2 / r)


# -- Thevenin worked example --------------------------------------------------------------------
def test_alexander_sadiku_example_4_8(solve: Solver) -> None:
    # Alexander & Sadiku, Fundamentals of Electric Circuits, Example 4.8 (from memory):
    # 32 V source behind 4 Ω, 12 Ω to ground, a 2 A source into the same node, then 1 Ω to
    # terminal a. R_th = 4 Ω, V_th = 30 V; I_L = 3 A, 1.5 A, 0.75 A for R_L = 6, 16, 36 Ω.
    c = Circuit()
    c.voltage_source("V1", "s", "gnd", 32)
    c.resistor("R1", "s", "n", 4)
    c.resistor("R2", "n", "gnd", 12)
    c.current_source("I1", "gnd", "n", 2)
    c.resistor("R3", "n", "a", 1)
    c.resistor("RL", "a", "gnd", 6)
    got = solve(c, {"V1", "R1", "R2", "I1", "R3"}, ("a", "gnd"))
    assert close(got.z, 4)
    assert close(got.voc, 30)
    for r_load, current in ((6, 3), (16, 1.5), (36, 0.75)):
        assert close(got.voc / (got.z + r_load), current)


# -- maximum power transfer ---------------------------------------------------------------------
def _example_11_5() -> tuple[Circuit, set[str]]:
    # Alexander & Sadiku, Fundamentals of Electric Circuits, Example 11.5 (from memory): 10 V
    # (amplitude) behind 4 Ω, a shunt 8 Ω - j6 Ω, then j5 Ω to the load.
    c = Circuit()
    c.voltage_source("V1", "s", "gnd", 10)
    c.resistor("R1", "s", "n", 4)
    c.resistor("R2", "n", "m", 8)
    c.impedance("Z1", "m", "gnd", -6j)
    c.impedance("Z2", "n", "a", 5j)
    c.resistor("RL", "a", "gnd", 3)
    return c, {"V1", "R1", "R2", "Z1", "Z2"}


def test_maximum_power_transfer_alexander_sadiku_example_11_5(solve: Solver) -> None:
    # Answer given there: Z_L = conj(Z_th) = 2.933 - j4.467 Ω and P_max = 2.368 W; with
    # amplitude phasors P_max = |V_th|^2 / (8 Re Z_th) (section "Maximum Average Power Transfer").
    # The book works with rounded intermediates (|V_th| = 7.454 V), the exact value is 2.3674 W.
    c, region = _example_11_5()
    got = solve(c, region, ("a", "gnd"), 1e3)  # fixed impedances: any frequency
    z_load = got.z.conjugate()
    assert round(z_load.real, 3) == 2.933
    assert round(z_load.imag, 3) == -4.467
    p_max = abs(got.voc) ** 2 / (8 * got.z.real)
    assert abs(p_max - 2.368) < 1e-3
    # exact values for the same circuit: Z_th = (44 + 67j)/15 Ω, V_th = (22 - 4j)/3 V
    assert close(got.z, (44 + 67j) / 15)
    assert close(got.voc, (22 - 4j) / 3)


def _load_power(voc: complex, z: complex, z_load: complex) -> float:
    """Average power into z_load from an amplitude-phasor source voc behind z."""
    current = voc / (z + z_load)
    return 0.5 * abs(current) ** 2 * z_load.real


def test_conjugate_load_beats_every_nearby_load(solve: Solver) -> None:
    # Alexander & Sadiku, section "Maximum Average Power Transfer": the conjugate load is the
    # maximum; and with a purely resistive load the best is R_L = |Z_th|.
    c, region = _example_11_5()
    got = solve(c, region, ("a", "gnd"))
    best = _load_power(got.voc, got.z, got.z.conjugate())
    assert math.isclose(best, abs(got.voc) ** 2 / (8 * got.z.real), rel_tol=RTOL)
    for dz in (0.1, -0.1, 0.1j, -0.1j, 0.05 + 0.05j):
        assert _load_power(got.voc, got.z, got.z.conjugate() + dz) < best
    r_best = abs(got.z)
    for r in (0.95 * r_best, 1.05 * r_best):
        assert _load_power(got.voc, got.z, r) < _load_power(got.voc, got.z, r_best)


# -- V_th = I_n Z_th ----------------------------------------------------------------------------
def _mixed() -> tuple[Circuit, set[str]]:
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 2, phase_deg=20)
    c.resistor("R1", "in", "a", "1k")
    c.capacitor("C1", "a", "gnd", "100n")
    c.cccs("DS1", "gnd", "b", "R1", 3)  # dependent sources stay when z is found
    c.resistor("R2", "a", "b", "470")
    c.inductor("L1", "b", "gnd", "22m")
    c.current_source("I1", "gnd", "b", "1m")
    c.resistor("RL", "b", "gnd", "1k")
    return c, {"V1", "R1", "C1", "DS1", "R2", "L1", "I1"}


@pytest.mark.parametrize("freq", [50, 1e3, 1e5])
def test_thevenin_voltage_is_norton_current_times_impedance(solve: Solver, freq: float) -> None:
    # Thevenin/Norton duality (common practice): V_th = I_n Z_th, Z_th = Z_n.
    got = solve(*_mixed(), ("b", "gnd"), freq)
    assert got.has_thevenin
    assert got.has_norton
    assert close(got.voc, got.isc * got.z)


def test_an_inductor_across_the_port_at_dc_leaves_no_norton_form(solve: Solver) -> None:
    # Common practice: at DC an inductor is a short, so z = 0 and only the Thevenin form exists.
    got = solve(*_mixed(), ("b", "gnd"), 0)
    assert (got.has_thevenin, got.has_norton) == (True, False)
    assert got.z == 0
    assert abs(got.voc) <= RTOL


# -- result helpers (engine only) ---------------------------------------------------------------
def test_max_power_helper_on_example_11_5() -> None:
    # Alexander & Sadiku, Example 11.5 (from memory), exact form of the circuit above:
    # P_max = |V_th|^2 / (8 R_th) = (500/9) / (8 * 44/15) = 7500/3168 W with amplitude phasors;
    # the same numbers read as rms phasors give |V|^2 / (4 R_th), twice as much.
    c, region = _example_11_5()
    eq = equivalent(c, region=region, port=("a", "gnd"), freq=1e3)  # fixed impedances
    peak, rms = eq.max_power(), eq.max_power("rms")
    assert (peak.basis, rms.basis) == ("peak", "rms")
    assert close(peak.load, (44 - 67j) / 15)
    assert close(peak.power, 7500 / 3168)
    assert close(rms.power, 2 * 7500 / 3168)
    # best purely resistive load |Z_th| (same section): P = 0.5 |V|^2 R / |Z + R|^2
    r = abs((44 + 67j) / 15)
    assert close(peak.resistive_load, r)
    assert close(peak.resistive_power, 0.5 * (500 / 9) * r / abs((44 + 67j) / 15 + r) ** 2)


@pytest.mark.parametrize("basis", ["peak", "rms"])
def test_max_power_at_dc_is_voc_squared_over_4r_in_either_basis(basis: str) -> None:
    # common practice (maximum power transfer at DC): a source Voc behind R delivers
    # Voc^2 / (4 R) into a matched load R; peak and rms are phasor conventions and do not apply.
    # Divider: Voc = 10 V * 2k / (1k + 2k) = 20/3 V, R = 1k || 2k = 2000/3 Ω.
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 10)
    c.resistor("R1", "in", "a", 1e3)
    c.resistor("R2", "a", GROUND, 2e3)
    c.resistor("RL", "a", GROUND, 5e3)
    got = equivalent(c, region={"V1", "R1", "R2"}, port=("a", GROUND)).max_power(basis)
    assert got.basis == "dc" and got.described() == "DC"
    assert close(got.power, (20 / 3) ** 2 / (4 * 2000 / 3))
    assert close(got.resistive_power, (20 / 3) ** 2 / (4 * 2000 / 3))  # |Z| = R at DC


def test_max_power_has_no_finite_maximum_for_negative_resistance() -> None:
    # shared references (Alexander & Sadiku): no finite maximum where Re Z_th <= 0.
    c = Circuit()
    c.voltage_source("V1", "in", "gnd", 3)
    c.resistor("R1", "in", "a", "10k")
    c.resistor("R2", "a", "gnd", "2k")
    c.vccs("DS1", "gnd", "a", "a", "gnd", "1m")  # z = -2.5 kΩ (see test_against_sympy.py)
    c.resistor("RL", "a", "gnd", "5k")
    result = equivalent(c, region={"V1", "R1", "R2", "DS1"}, port=("a", "gnd")).max_power()
    assert result.power is None
    assert result.load is None
    assert "negative" in result.reason


@pytest.mark.parametrize(("build", "port", "freq", "kind", "resistance", "value"), [
    # Common practice: a series R + C has z = R - j / (w C); a series R + L has z = R + j w L.
    # RC low-pass at its corner w = 1e4 rad/s: z = 500 - j500 Ω -> 500 Ω + 200 nF.
    (_rc_low_pass, ("out", "gnd"), float(F_CORNER), "capacitor", 500.0, 200e-9),
    # Example 11.5 (fixed impedances, read at 1 kHz): z = 44/15 + j 67/15 Ω -> L = X / w.
    (_example_11_5, ("a", "gnd"), 1e3, "inductor", 44 / 15, 67 / 15 / (2 * math.pi * 1e3)),
])
def test_series_realisation_of_z(build: Callable[[], tuple[Circuit, set[str]]],
                                 port: tuple[str, str], freq: float, kind: str,
                                 resistance: float, value: float) -> None:
    c, region = build()
    series = equivalent(c, region=region, port=port, freq=freq).realisation()
    assert series.kind == kind
    assert close(series.resistance, resistance)
    assert close(series.value, value)


def test_no_series_realisation_without_a_thevenin_form() -> None:
    c = Circuit()
    c.current_source("I1", "gnd", "a", "1m")
    c.resistor("RL", "a", "gnd", "1k")
    eq = equivalent(c, region={"I1"}, port=("a", "gnd"))
    with pytest.raises(CircuitError, match="no Thevenin form"):
        eq.realisation()
