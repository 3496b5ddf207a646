"""Thevenin/Norton results, sweeps, collapse and the equivalence check (engine/solve/equivalent/).

Each check names its source: closed forms any circuit-analysis handbook gives are marked
"common practice"; Alexander & Sadiku, Fundamentals of Electric Circuits, is quoted from memory.
"""

from __future__ import annotations

import cmath
import importlib
import math

import numpy as np
import pytest
from circuits import divider

from portcut.engine import (
    GROUND,
    Circuit,
    CircuitError,
    check_equivalence,
    collapse,
    equivalent,
    sweep,
)
from portcut.engine.schematic.wording import forms_text

REL = 1e-12  # systems of a few nets with values within six decades
# the module, not the function
SOLVERS = importlib.import_module("portcut.engine.solve.equivalent.solvers")


def close(got: complex, want: complex) -> bool:
    return abs(got - want) <= REL * abs(want)


DIVIDER = {"V1", "R1", "R2"}


# -- closed forms -------------------------------------------------------------------------------
def test_divider() -> None:
    # Common practice: V_th = V R2 / (R1 + R2), R_th = R1 || R2, I_n = V / R1.
    eq = equivalent(divider(), DIVIDER, ("out", GROUND))
    assert (eq.has_thevenin, eq.has_norton) == (True, True)
    assert close(eq.voc, 4.0)
    assert close(eq.z, 2400.0)
    assert close(eq.isc, 10 / 6e3)


def test_wheatstone_bridge_seen_from_the_detector() -> None:
    # Common practice: V_th = V (R2/(R1+R2) - R4/(R3+R4)), R_th = R1 || R2 + R3 || R4.
    v, r1, r2, r3, r4 = 5.0, 1e3, 2e3, 3e3, 5e3
    c = Circuit()
    c.voltage_source("V1", "top", GROUND, v)
    c.resistor("R1", "top", "a", r1)
    c.resistor("R2", "a", GROUND, r2)
    c.resistor("R3", "top", "b", r3)
    c.resistor("R4", "b", GROUND, r4)
    c.resistor("RG", "a", "b", 100)
    eq = equivalent(c, {"V1", "R1", "R2", "R3", "R4"})
    assert eq.port == ("a", "b")
    assert close(eq.voc, v * (r2 / (r1 + r2) - r4 / (r3 + r4)))
    assert close(eq.z, r1 * r2 / (r1 + r2) + r3 * r4 / (r3 + r4))


@pytest.mark.parametrize("freq", [0.0, 2e3])
def test_source_transformation(freq: float) -> None:
    # Common practice: V in series with Z is I = V / Z in parallel with Z, at any frequency.
    v, r, ind = 3 - 4j, 220.0, 10e-3
    z = r + 2j * math.pi * freq * ind
    series, shunt = Circuit(), Circuit()
    series.voltage_source("V1", "in", GROUND, v)
    series.resistor("R1", "in", "m", r)
    series.inductor("L1", "m", "out", ind)
    shunt.current_source("I1", GROUND, "out", v / z)
    shunt.resistor("R1", "out", "m", r)
    shunt.inductor("L1", "m", GROUND, ind)
    for c, region in ((series, {"V1", "R1", "L1"}), (shunt, {"I1", "R1", "L1"})):
        c.resistor("RL", "out", GROUND, "1k")
        eq = equivalent(c, region, ("out", GROUND), freq)
        assert close(eq.voc, v)
        assert close(eq.isc, v / z)
        assert close(eq.z, z)


def mixed() -> tuple[Circuit, set[str]]:
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 2, phase_deg=20)
    c.resistor("R1", "in", "a", "1k")
    c.capacitor("C1", "a", GROUND, "100n")
    c.cccs("DS1", GROUND, "b", "R1", 3)
    c.resistor("R2", "a", "b", "470")
    c.inductor("L1", "b", GROUND, "22m")
    c.current_source("I1", GROUND, "b", "1m")
    c.resistor("RL", "b", GROUND, "1k")
    return c, {"V1", "R1", "C1", "DS1", "R2", "L1", "I1"}


@pytest.mark.parametrize("freq", [50.0, 1e3, 1e5])
def test_thevenin_voltage_is_norton_current_times_impedance(freq: float) -> None:
    # Thevenin/Norton duality (common practice): V_th = I_n Z_th.
    c, region = mixed()
    eq = equivalent(c, region, ("b", GROUND), freq)
    assert eq.has_thevenin and eq.has_norton
    assert close(eq.voc, eq.isc * eq.z)


def test_positive_feedback_gives_a_negative_impedance() -> None:
    # Nodal analysis (common practice): the VCCS pushes g V(a) into a, so
    # z = 1 / (1/R1 + 1/R2 - g) = 1 / (0.1 mS + 0.5 mS - 1 mS) = -2.5 kΩ.
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 3)
    c.resistor("R1", "in", "a", "10k")
    c.resistor("R2", "a", GROUND, "2k")
    c.vccs("DS1", GROUND, "a", "a", GROUND, "1m")
    c.resistor("RL", "a", GROUND, "5k")
    eq = equivalent(c, {"V1", "R1", "R2", "DS1"}, ("a", GROUND))
    assert close(eq.z, -2500.0)
    assert close(eq.voc, -2500.0 * 3 / 10e3)  # voc = z * isc, isc = V1 / R1


# -- existence rules ----------------------------------------------------------------------------
def test_ideal_current_source_at_the_port_has_no_thevenin_form() -> None:
    # Common practice: a current source in series with anything is that current source.
    c = Circuit()
    c.current_source("I1", GROUND, "a", "5m")
    c.resistor("R1", "a", "b", "1k")
    c.resistor("RL", "b", GROUND, "1k")
    eq = equivalent(c, {"I1", "R1"}, ("b", GROUND))
    assert (eq.has_thevenin, eq.has_norton) == (False, True)
    assert cmath.isinf(eq.z) and cmath.isinf(eq.voc)
    assert close(eq.isc, 5e-3)


def test_ideal_voltage_source_across_the_port_has_no_norton_form() -> None:
    # Common practice: anything in parallel with a voltage source is that voltage source.
    c = Circuit()
    c.voltage_source("V1", "a", GROUND, 5)
    c.resistor("R1", "a", GROUND, "1k")
    c.resistor("RL", "a", GROUND, "1k")
    eq = equivalent(c, {"V1", "R1"}, ("a", GROUND))
    assert (eq.has_thevenin, eq.has_norton) == (True, False)
    assert eq.z == 0
    assert close(eq.voc, 5.0)
    assert cmath.isinf(eq.isc)


def test_undefined_quantities_are_nan() -> None:
    # A zero current source at the port: the open-circuit voltage is 0/0.
    c = Circuit()
    c.current_source("I1", GROUND, "a", 0)
    c.resistor("RL", "a", GROUND, "1k")
    eq = equivalent(c, {"I1"}, ("a", GROUND))
    assert not eq.has_thevenin
    assert eq.isc == 0
    assert cmath.isnan(eq.voc)


def test_an_inductor_across_the_port_is_a_short_at_dc() -> None:
    # Common practice: at DC an inductor is a short (z = 0), at AC it is j w L.
    c = Circuit()
    c.current_source("I1", GROUND, "a", "1m")
    c.inductor("L1", "a", GROUND, "10m")
    c.resistor("RL", "a", GROUND, "1k")
    dc = equivalent(c, {"I1", "L1"}, ("a", GROUND))
    assert (dc.has_thevenin, dc.has_norton, dc.z) == (True, False, 0)
    ac = equivalent(c, {"I1", "L1"}, ("a", GROUND), 1e3)
    assert close(ac.z, 2j * math.pi * 1e3 * 10e-3)


def test_zero_ohm_wires_join_nets_exactly() -> None:
    # A 0 Ω wire is an ideal connection: the divider seen through it is unchanged; a wire
    # across the port makes z = 0 and voc = 0 (common practice).
    c = divider()
    c.resistor("W1", "out", "o2", 0)
    c.resistor("RL2", "o2", GROUND, "1k")
    through = equivalent(c, {*DIVIDER, "RL", "W1"}, ("o2", GROUND))
    assert close(through.voc, 4.0 * 1e3 / (2400 + 1e3))
    assert close(through.z, 1 / (1 / 6e3 + 1 / 4e3 + 1 / 1e3))
    c.resistor("W2", "o2", GROUND, 0)
    shorted = equivalent(c, {*DIVIDER, "RL", "W1", "W2"}, ("o2", GROUND))
    assert (shorted.has_norton, shorted.z, shorted.voc) == (False, 0, 0)


def test_inverting_op_amp_stage() -> None:
    # Ideal op-amp (common practice): voc = -Rf/Ri Vin, and the output is a voltage source
    # (z = 0, no Norton form).
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, "0.25")
    c.resistor("RI", "in", "n", "10k")
    c.resistor("RF", "n", "out", "47k")
    c.opamp("U1", GROUND, "n", "out")
    c.resistor("RL", "out", GROUND, "2k")
    eq = equivalent(c, {"V1", "RI", "RF", "U1"}, ("out", GROUND))
    assert (eq.has_thevenin, eq.has_norton, eq.z) == (True, False, 0)
    assert close(eq.voc, -4.7 * 0.25)


def test_non_inverting_op_amp_stage_behind_a_resistor() -> None:
    # Ideal op-amp (common practice): gain 1 + Rf/Rg; behind RO the impedance is RO.
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 0.1)
    c.opamp("U1", "in", "n", "o")
    c.resistor("RG", "n", GROUND, "1k")
    c.resistor("RF", "o", "n", "9k")
    c.resistor("RO", "o", "out", 75)
    c.resistor("RL", "out", GROUND, 600)
    eq = equivalent(c, {"V1", "U1", "RG", "RF", "RO"}, ("out", GROUND))
    assert close(eq.voc, 1.0)
    assert close(eq.z, 75.0)


# -- the tolerance rule -------------------------------------------------------------------------
def test_small_and_large_impedances_are_resolved_not_rounded_away() -> None:
    # A 1 mΩ shunt across a 1 GΩ network stays 1 mΩ || 1 GΩ (not "zero"); a 1 TΩ series
    # resistor stays finite (not "infinite"): common practice, series/parallel.
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 1)
    c.resistor("R1", "in", "a", "1G")
    c.resistor("RS", "a", GROUND, "1m")
    c.resistor("RT", "a", "b", "1T")
    c.resistor("RL", "b", GROUND, 1)
    shunt = equivalent(c, {"V1", "R1", "RS"}, ("a", GROUND))
    assert shunt.has_norton and close(shunt.z, 1 / (1 / 1e-3 + 1 / 1e9))
    series = equivalent(c, {"V1", "R1", "RS", "RT"}, ("b", GROUND))
    assert series.has_thevenin and close(series.z, 1e12 + 1 / (1 / 1e-3 + 1 / 1e9))


def test_cancelling_resistances_leave_no_thevenin_form() -> None:
    # R in parallel with -R (a negative-impedance converter's result): the port admittance is
    # exactly 0, so z is infinite (common practice).
    c = Circuit()
    c.current_source("I1", GROUND, "a", "1m")
    c.resistor("R1", "a", GROUND, "1k")
    c.resistor("R2", "a", GROUND, "-1k")
    c.resistor("RL", "a", GROUND, "1k")
    eq = equivalent(c, {"I1", "R1", "R2"}, ("a", GROUND))
    assert (eq.has_thevenin, eq.has_norton) == (False, True)
    assert close(eq.isc, 1e-3)


# -- sweeps -------------------------------------------------------------------------------------
def low_pass(r: float = 1e3, cap: float = 100e-9) -> Circuit:
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 1)
    c.resistor("R1", "in", "out", r)
    c.capacitor("C1", "out", GROUND, cap)
    c.resistor("RL", "out", GROUND, "1M")
    return c


@pytest.mark.parametrize("dense_limit", [0, 1000], ids=["per-frequency LU", "batched dense"])
def test_sweep_of_an_rc_low_pass(dense_limit: int, monkeypatch: pytest.MonkeyPatch) -> None:
    # Common practice: voc = V / (1 + j w R C), z = R / (1 + j w R C); at DC voc = V, z = R.
    monkeypatch.setattr(SOLVERS, "DENSE_SWEEP_LIMIT", dense_limit)
    freqs = np.array([0.0, 10.0, 1591.5494309189535, 1e5, 1e7])
    got = sweep(low_pass(), {"V1", "R1", "C1"}, freqs, ("out", GROUND))
    ratio = 1 / (1 + 2j * np.pi * freqs * 1e3 * 100e-9)
    np.testing.assert_allclose(got.voc, ratio, rtol=REL)
    np.testing.assert_allclose(got.z, 1e3 * ratio, rtol=REL)
    np.testing.assert_allclose(got.isc, np.full(freqs.size, 1e-3), rtol=REL)
    assert got.has_thevenin.all() and got.has_norton.all()
    assert got.port == ("out", GROUND) and len(got) == 5
    with pytest.raises(ValueError):
        got.z[0] = 0  # read-only


def test_sweep_points_equal_single_equivalents() -> None:
    c, region = mixed()
    freqs = [0.0, 50.0, 1e3, 1e5]
    got = sweep(c, region, freqs, ("b", GROUND))
    for i, f in enumerate(freqs):
        one = equivalent(c, region, ("b", GROUND), f)
        assert (got[i].has_thevenin, got[i].has_norton) == (one.has_thevenin, one.has_norton)
        np.testing.assert_allclose([got[i].voc, got[i].isc, got[i].z], [one.voc, one.isc, one.z],
                                   rtol=REL, equal_nan=True)


def test_sweep_without_a_thevenin_form() -> None:
    c = Circuit()
    c.current_source("I1", GROUND, "a", "2m")
    c.capacitor("C1", "a", "b", "1u")
    c.resistor("RL", "b", GROUND, "1k")
    got = sweep(c, {"I1", "C1"}, [10.0, 100.0, 1e3], ("b", GROUND))
    assert not got.has_thevenin.any()
    assert np.isinf(got.z).all()
    np.testing.assert_allclose(got.isc, 2e-3, rtol=REL)


# -- collapse and the equivalence check ---------------------------------------------------------
def test_collapse_to_thevenin_and_norton() -> None:
    c = divider()
    th = collapse(c, DIVIDER, ("out", GROUND), form="thevenin")
    assert th.names == ["RL", "EQ_V", "EQ_Z"]
    assert th["EQ_V"].nodes == ("out", "EQ_n") and close(th["EQ_V"].value, 4.0)
    assert th["EQ_Z"].kind == "resistor" and close(th["EQ_Z"].value, 2400.0)
    no = collapse(c, DIVIDER, ("out", GROUND), form="norton")
    assert no["EQ_I"].nodes == (GROUND, "out") and close(no["EQ_I"].value, 10 / 6e3)
    assert no["EQ_Z"].nodes == ("out", GROUND)


def test_collapse_at_ac_uses_a_complex_impedance_part() -> None:
    reduced = collapse(low_pass(), {"V1", "R1", "C1"}, ("out", GROUND), freq=1e3)
    assert reduced["EQ_Z"].kind == "impedance"
    assert isinstance(reduced["EQ_V"].value, complex)


def test_collapse_names_avoid_existing_ones() -> None:
    c = divider()
    c.resistor("EQ_Z", "out", "x", 1)  # a part and a net already begin with EQ_
    c.resistor("R9", "x", GROUND, 1)
    reduced = collapse(c, DIVIDER, ("out", GROUND))
    assert {"EQ2_V", "EQ2_Z"} <= set(reduced.names)
    assert "EQ2_n" in reduced.nets()


def test_collapse_keeps_only_the_form_that_exists() -> None:
    c = Circuit()
    c.voltage_source("V1", "a", GROUND, 5)
    c.resistor("RL", "a", GROUND, "1k")
    reduced = collapse(c, {"V1"}, ("a", GROUND))
    assert reduced.names == ["RL", "EQ_V"]
    assert reduced["EQ_V"].nodes == ("a", GROUND)


@pytest.mark.parametrize("form", ["thevenin", "norton"])
@pytest.mark.parametrize("freq", [50.0, 1e3, 1e5])
def test_collapsed_circuit_behaves_as_the_original(form: str, freq: float) -> None:
    # The substitution theorem (common practice): every voltage outside and the port current
    # are unchanged, for the outside as drawn and for added loads.
    c, region = mixed()
    c.resistor("RX", "b", "far", "330")
    c.capacitor("CX", "far", GROUND, "47n")
    reduced = collapse(c, region, ("b", GROUND), freq, form)
    report = check_equivalence(c, reduced, region, port=("b", GROUND), freq=freq,
                               loads=[100, "4k7", 50 - 30j, 0])
    assert report.cases[0] == "as drawn" and len(report.cases) == 5
    assert report.within(1e-10), report


@pytest.mark.parametrize("form", ["thevenin", "norton"])
def test_collapsed_divider_at_dc(form: str) -> None:
    c = divider()
    reduced = collapse(c, DIVIDER, ("out", GROUND), form=form)
    assert check_equivalence(c, reduced, DIVIDER, loads=[0, 1, 1e6]).within(1e-12)


def test_the_check_sees_a_wrong_reduction() -> None:
    c = divider()
    wrong = collapse(c, DIVIDER, ("out", GROUND)).with_value("EQ_Z", 2500)
    report = check_equivalence(c, wrong, DIVIDER, port=("out", GROUND), loads=[1e3])
    assert not report.within(1e-3)
    assert report.worst_net == "out"
    assert report.voltage_abs > 0.01 and report.current_abs > 1e-6



def test_a_current_circulating_in_a_wire_is_no_deviation() -> None:
    # A current source shorted by a 0 Ohm wire delivers nothing outside (common practice):
    # voc = 0 and z = 10 Ohm || 2.2 kOhm. Both whole solutions leave every voltage at
    # rounding level; that noise must not read as a deviation of the reduced circuit.
    c = Circuit()
    c.resistor("R3", "n3", GROUND, 10)
    c.resistor("R4", "n4", GROUND, "2k2")
    c.current_source("I5", "n3", "n4", 3e-3j)
    c.resistor("W6", "n3", "n4", 0)
    c.resistor("LOAD", "n3", GROUND, "1k")
    region = {"R3", "R4", "I5", "W6"}
    eq = equivalent(c, region, ("n3", GROUND))
    assert abs(eq.voc) < 1e-15 and close(eq.z, 10 * 2200 / 2210)
    reduced = collapse(c, region, port=("n3", GROUND))
    assert check_equivalence(c, reduced, region, port=("n3", GROUND), loads=[10]).within(1e-9)

def test_the_check_across_a_galvanically_separate_winding() -> None:
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 10)
    c.resistor("R1", "in", "p", 50)
    c.inductor("L1", "p", GROUND, "1m")
    c.inductor("L2", "t", "u", "4m")
    c.coupling("CP1", "L2", "L1", -0.7)
    c.resistor("RL", "t", "u", "1k")
    c.resistor("RB", "u", GROUND, "1M")
    region = {"V1", "R1", "L1", "L2", "CP1"}
    reduced = collapse(c, region, ("t", "u"), 2e4)
    assert check_equivalence(c, reduced, region, port=("t", "u"), freq=2e4,
                             loads=[10, 1e4]).within(1e-10)


# -- helpers on the result ----------------------------------------------------------------------
def example_11_5() -> tuple[Circuit, set[str]]:
    # Alexander & Sadiku, Fundamentals of Electric Circuits, Example 11.5 (from memory): 10 V
    # amplitude behind 4 Ω, a shunt 8 Ω - j6 Ω, then j5 Ω to the load. Exact:
    # Z_th = (44 + 67j)/15 Ω, V_th = (22 - 4j)/3 V.
    c = Circuit()
    c.voltage_source("V1", "s", GROUND, 10)
    c.resistor("R1", "s", "n", 4)
    c.resistor("R2", "n", "m", 8)
    c.impedance("Z1", "m", GROUND, -6j)
    c.impedance("Z2", "n", "a", 5j)
    c.resistor("RL", "a", GROUND, 3)
    return c, {"V1", "R1", "R2", "Z1", "Z2"}


def test_maximum_power_into_a_conjugate_load() -> None:
    # Alexander & Sadiku (section "Maximum Average Power Transfer", from memory): Z_L = Z_th*,
    # P_max = |V_th|^2 / (8 Re Z_th) with amplitude phasors, / (4 Re Z_th) with rms ones; the
    # book's answer for Example 11.5 is 2.368 W. Best resistive load R_L = |Z_th|.
    c, region = example_11_5()
    eq = equivalent(c, region, ("a", GROUND), 1e3)
    z, v = (44 + 67j) / 15, (22 - 4j) / 3
    peak = eq.max_power()
    assert close(peak.load, z.conjugate())
    assert peak.power == pytest.approx(abs(v) ** 2 / (8 * z.real), rel=REL)
    assert round(peak.power, 3) == 2.367  # the book rounds intermediates to 2.368
    assert peak.resistive_load == pytest.approx(abs(z), rel=REL)
    current = abs(v) / abs(z + abs(z))
    assert peak.resistive_power == pytest.approx(0.5 * current ** 2 * abs(z), rel=REL)
    assert eq.max_power("rms").power == pytest.approx(2 * peak.power, rel=REL)


@pytest.mark.parametrize(("build", "reason"), [
    (lambda c: c.voltage_source("V1", "a", GROUND, 1), "impedance is zero"),
    (lambda c: c.current_source("V1", GROUND, "a", 1), "no Thevenin form"),
    (lambda c: (c.current_source("V1", GROUND, "a", 1), c.resistor("R1", "a", GROUND, -5)),
     "negative"),
])
def test_no_finite_maximum_power(build, reason: str) -> None:
    c = Circuit()
    build(c)
    c.resistor("RL", "a", GROUND, 1)
    got = equivalent(c, set(c.names) - {"RL"}, ("a", GROUND)).max_power()
    assert got.power is None and got.load is None
    assert reason in got.reason


def test_realisation_of_z() -> None:
    # X > 0 is an inductor X / w, X < 0 a capacitor 1 / (w |X|) (common practice).
    c, region = example_11_5()
    w = 2 * math.pi * 1e3
    inductive = equivalent(c, region, ("a", GROUND), 1e3).realisation()
    assert inductive.kind == "inductor"
    assert inductive.resistance == pytest.approx(44 / 15, rel=REL)
    assert inductive.value == pytest.approx(67 / 15 / w, rel=REL)
    rc = equivalent(low_pass(), {"V1", "R1", "C1"}, ("out", GROUND), 1e3)
    capacitive = rc.realisation()
    assert capacitive.kind == "capacitor"
    assert capacitive.value == pytest.approx(-1 / (w * rc.z.imag), rel=REL)
    dc = equivalent(divider(), DIVIDER, ("out", GROUND)).realisation()
    assert (dc.resistance, dc.kind, dc.value) == (pytest.approx(2400.0), None, None)


def test_realisation_refusals() -> None:
    c, region = example_11_5()
    with pytest.raises(CircuitError, match="reactive at DC"):
        equivalent(c, region, ("a", GROUND), 0).realisation()
    c = Circuit()
    c.current_source("I1", GROUND, "a", 1)
    c.resistor("RL", "a", GROUND, 1)
    with pytest.raises(CircuitError, match="no Thevenin form"):
        equivalent(c, {"I1"}, ("a", GROUND)).realisation()


def test_formatted_forms_and_the_missing_form_named() -> None:
    eq = equivalent(divider(), DIVIDER, ("out", GROUND))
    assert eq.rectangular().z == "2.4 kΩ"
    assert eq.polar().voc == "4 V ∠ 0°"
    c = Circuit()
    c.voltage_source("V1", "a", GROUND, 5)
    c.resistor("RL", "a", GROUND, 1)
    stiff = equivalent(c, {"V1"}, ("a", GROUND))
    assert stiff.rectangular().isc == stiff.polar().isc == "undefined"  # no Norton form
    assert forms_text(stiff, "thevenin")[1].startswith("No Norton form: Z is zero")
    open_ = Circuit()
    open_.current_source("I1", GROUND, "a", 0)
    open_.resistor("RL", "a", GROUND, 1)
    assert equivalent(open_, {"I1"}, ("a", GROUND)).polar().voc == "undefined"


def test_series_parts_read_the_same_in_every_output() -> None:
    # a 100 Ω + 4.278 µF region reads as both parts; with no resistance only the capacitor,
    # never "0 Ω in series with" (the panel and reduce share this text)
    Realisation = importlib.import_module("portcut.engine.solve.equivalent").Realisation
    assert Realisation(100.0, "capacitor", 4.278e-6, 1e4).parts_text() == \
        "100 Ω in series with 4.278 µF"
    assert Realisation(0.0, "capacitor", 4.278e-6, 1e4).parts_text() == "4.278 µF"
    assert Realisation(50.0, None, None, 0.0).parts_text() == "50 Ω"


def test_a_purely_reactive_z_is_named_with_a_capital_z() -> None:
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 1)
    c.capacitor("C1", "in", "a", 1e-6)
    c.resistor("RL", "a", GROUND, 1)
    got = equivalent(c, {"V1", "C1"}, ("a", GROUND), 1e3).max_power()
    assert got.reason.startswith("no finite maximum: Z is purely reactive")


def _source_behind(volts: float, ohms: float) -> Circuit:
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, volts)
    c.resistor("R1", "in", "a", ohms)
    c.capacitor("C1", "a", GROUND, 1e-6)
    return c


def test_available_power_beyond_double_range_is_refused_with_a_reason() -> None:
    # at DC Voc^2 / (4 R) for 1e160 V behind 1 kΩ is 2.5e316 W, past the largest double (common
    # practice: IEEE 754 binary64 tops out near 1.8e308)
    c = _source_behind(1e160, 1e3)
    found = equivalent(c, set(c.names), ("a", GROUND)).max_power()
    assert found.power is None and "range of double precision" in found.reason


def test_available_power_of_a_tiny_impedance_is_finite() -> None:
    # 1 V behind 1e-300 Ω at DC: Voc^2 / (4 R) = 2.5e299 W (common practice: maximum power
    # transfer); into R = |z| the same (matched)
    c = _source_behind(1.0, 1e-300)
    found = equivalent(c, set(c.names), ("a", GROUND)).max_power()
    assert found.power == pytest.approx(2.5e299, rel=1e-12)
    assert found.resistive_power == pytest.approx(2.5e299, rel=1e-12)


def test_realisation_at_an_absurdly_low_frequency_never_divides_by_zero() -> None:
    # at 1e-300 Hz, z = 1 kΩ - j w C (1 kΩ)^2 = 1 kΩ - j 6.3e-300 Ω (common practice: R || C
    # to first order in w): the reactance is far below z's rounding, so z reads as 1 kΩ
    c = _source_behind(1.0, 1e3)
    eq = equivalent(c, set(c.names), ("a", GROUND), 1e-300)
    assert eq.has_norton and cmath.isfinite(eq.isc)
    got = eq.realisation()
    assert got.kind is None and got.resistance == pytest.approx(1e3, rel=1e-12)


def test_realisation_outside_double_range_is_refused_by_name() -> None:
    # an impedance of j 1e10 Ω at 1e-300 Hz is an inductance X / w = 1.6e309 H, past the
    # largest double (common practice: IEEE 754 binary64 tops out near 1.8e308)
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 1.0)
    c.impedance("Z1", "in", "a", 1e10j)
    eq = equivalent(c, set(c.names), ("a", GROUND), 1e-300)
    with pytest.raises(CircuitError, match="inductor outside the range of double precision"):
        eq.realisation()


def test_a_frequency_whose_impedances_overflow_is_refused_by_name() -> None:
    # 1 µF at 1e-310 Hz: 1 / (w C) = 1.6e315 Ω, past the largest double (common practice:
    # IEEE 754 binary64 tops out near 1.8e308); no form may be claimed with a quantity of nan
    c = Circuit()
    c.current_source("I1", GROUND, "a", 1)
    c.capacitor("C1", "a", GROUND, 1e-6)
    with pytest.raises(CircuitError, match="1e-310 Hz some part impedances overflow"):
        equivalent(c, set(c.names), ("a", GROUND), 1e-310)


@pytest.mark.parametrize("freq", [0.0, 1e3])
def test_a_tiny_part_among_kiloohms_is_judged_equivalent(freq: float) -> None:
    # Thevenin's theorem (common practice): the collapsed region reproduces the outside exactly,
    # so a 100 µΩ part beside kΩ parts must not read as a deviation (the check is judged
    # against the solution's own scale, and the wide form keeps the small part's digits)
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 10)
    c.resistor("R1", "in", "a", "1k")
    c.resistor("R2", "a", "b", "100u")
    c.resistor("R3", "b", GROUND, "2k2")
    c.capacitor("C1", "b", GROUND, "10n")
    c.resistor("RL", "b", GROUND, "4k7")
    region = {"V1", "R1", "R2", "R3", "C1"}
    reduced = collapse(c, region, ("b", GROUND), freq)
    report = check_equivalence(c, reduced, region, port=("b", GROUND), freq=freq,
                               loads=[0, "100u", "1k", 1e9])
    assert report.within(1e-9), report
