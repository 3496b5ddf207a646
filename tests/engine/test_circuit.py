"""The netlist builder: what it accepts, how it stores it, and every refusal with its message."""

from __future__ import annotations

import cmath
import math

import pytest

from portcut.engine import GROUND, KINDS, Circuit, CircuitError, Part, ValueParseError


@pytest.fixture
def circuit() -> Circuit:
    """A divider with a coupled pair, an op-amp and a current-sensing source to refer to."""
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 5)
    c.resistor("R1", "in", "a", "4k7")
    c.resistor("R2", "a", GROUND, "10k")
    c.inductor("L1", "a", "b", "10m")
    c.inductor("L2", "c", GROUND, "22m")
    c.coupling("CP1", "L1", "L2", 0.5)
    c.opamp("U1", "a", "o", "o")
    return c


# -- what is stored -----------------------------------------------------------------------------
def test_values_are_parsed_and_nodes_kept_in_role_order(circuit: Circuit) -> None:
    assert circuit["R1"] == Part("R1", "resistor", ("in", "a"), 4700.0)
    assert circuit["L1"].value == pytest.approx(10e-3)
    assert circuit["CP1"].refs == ("L1", "L2")
    assert circuit.names == ["V1", "R1", "R2", "L1", "L2", "CP1", "U1"]
    assert len(circuit) == 7
    assert "R2" in circuit
    assert "R9" not in circuit


def test_every_builder_makes_the_kind_with_its_node_roles() -> None:
    c = Circuit()
    made = [
        c.resistor("R1", "a", "b", 1), c.capacitor("C1", "a", "b", 1),
        c.inductor("L1", "a", "b", 1), c.impedance("Z1", "a", "b", 1 + 1j),
        c.voltage_source("V1", "a", "b", 1),
        c.current_source("I1", "a", "b", 1), c.vcvs("E1", "a", "b", "c", "d", 2),
        c.vccs("G1", "a", "b", "c", "d", 2), c.ccvs("H1", "a", "b", "R1", 2),
        c.cccs("F1", "a", "b", "R1", 2), c.opamp("U1", "a", "b", "c"),
        c.inductor("L2", "c", "d", 1), c.coupling("CP1", "L1", "L2", 0.1),
    ]
    kinds = {p.kind for p in made}
    assert kinds == set(KINDS)
    for part in made:
        assert len(part.nodes) == len(KINDS[part.kind])


def test_nets_include_the_op_amp_ground_return(circuit: Circuit) -> None:
    assert circuit["U1"].nets == ("a", "o", "o", GROUND)
    assert circuit.nets() == {"in", "a", "b", "c", "o", GROUND}


def test_a_zero_ohm_resistor_is_an_ideal_wire() -> None:
    c = Circuit()
    assert c.resistor("W1", "a", "b", 0).is_wire
    assert not c.resistor("R1", "a", "b", "1m").is_wire
    assert not c.capacitor("C1", "a", "b", 0).is_wire


def test_sources_are_independent_and_dependent_ones_are_not(circuit: Circuit) -> None:
    circuit.current_source("I1", "gnd", "a", "2m")
    circuit.vcvs("E1", "x", "gnd", "a", "gnd", 10)
    assert [p.name for p in circuit if p.is_independent_source] == ["V1", "I1"]


def test_magnitude_with_phase_makes_a_phasor() -> None:
    c = Circuit()
    v = c.voltage_source("V1", "a", "gnd", 2, phase_deg=30)
    i = c.current_source("I1", "gnd", "a", "2m", phase_deg=-90)
    assert v.value == pytest.approx(cmath.rect(2, math.radians(30)), abs=1e-15)
    assert i.value == pytest.approx(-2e-3j, abs=1e-18)
    assert c.voltage_source("V2", "b", "gnd", 5, phase_deg=0).value == 5.0
    assert c.voltage_source("V3", "c", "gnd", 1 + 2j).value == 1 + 2j


def test_complex_values_are_kept_where_they_mean_something() -> None:
    c = Circuit()
    assert c.impedance("Z1", "a", "b", 3 + 4j).value == 3 + 4j
    assert c.vccs("G1", "a", "b", "c", "d", 1j).value == 1j  # a transconductance with phase


def test_copy_without_subcircuit_and_with_value_leave_the_original(circuit: Circuit) -> None:
    assert circuit.copy() == circuit
    assert circuit.copy() is not circuit
    smaller = circuit.without(["R2", "U1"])
    assert smaller.names == ["V1", "R1", "L1", "L2", "CP1"]
    assert circuit.subcircuit(["R2", "V1"]).names == ["V1", "R2"]
    changed = circuit.with_value("R1", "2k2")
    assert changed["R1"].value == 2200.0
    assert circuit["R1"].value == 4700.0
    assert changed != circuit
    assert changed.names == circuit.names


def test_replaced_swaps_parts_in_place_and_checks_only_the_new_ones(circuit: Circuit) -> None:
    changed = circuit.replaced([Part("R1", "resistor", ("in", "b"), "2k2"),
                                Part("L2", "inductor", ("c", GROUND), "1m")])
    assert changed.names == circuit.names  # same order
    assert changed["R1"] == Part("R1", "resistor", ("in", "b"), 2200.0)
    assert changed["V1"] is circuit["V1"]  # the rest is shared, not rebuilt
    assert circuit["R1"].value == 4700.0
    with pytest.raises(CircuitError, match="R1: a resistor cannot be replaced by a capacitor"):
        circuit.replaced([Part("R1", "capacitor", ("in", "a"), "1n")])
    with pytest.raises(ValueParseError, match="R2 value"):
        circuit.replaced([Part("R2", "resistor", ("a", GROUND), "4k7k")])
    with pytest.raises(CircuitError, match="no part named 'R9'"):
        circuit.replaced([Part("R9", "resistor", ("a", GROUND), 1)])


def test_same_names_holds_through_replacements_and_copies_until_a_part_is_added(
        circuit: Circuit) -> None:
    changed = circuit.replaced([Part("R1", "resistor", ("in", "b"), "2k2")]).with_value("R2", 1)
    assert changed.same_names(circuit) and circuit.same_names(changed)
    grown = changed.copy()
    assert grown.same_names(circuit)
    grown.resistor("R3", "b", GROUND, "1k")
    assert not grown.same_names(circuit) and not grown.same_names(changed)
    assert not Circuit(circuit).same_names(circuit)  # built afresh: not known to be alike


def _rows_as_parts(c: Circuit) -> list[tuple[str, str, tuple[str, ...], complex, bool]]:
    """What the columns say of each part, in names (for comparing with the parts)."""
    cols = c.columns()
    return [(name, list(KINDS)[kind], tuple(cols.nets[i] for i in ids if i >= 0), value, flag)
            for name, kind, ids, value, flag in zip(cols.names, cols.kinds.tolist(),
                                                   cols.nodes.tolist(), cols.values.tolist(),
                                                   cols.complex_valued.tolist(), strict=True)]


def _as_parts(c: Circuit) -> list[tuple[str, str, tuple[str, ...], complex, bool]]:
    return [(p.name, p.kind, p.nets, complex(p.value), isinstance(p.value, complex)) for p in c]


def test_columns_follow_every_add_and_replacement(circuit: Circuit) -> None:
    # The arrays an analysis reads are kept as parts are added: they always say what the
    # parts say, and an add or a replacement never changes columns already handed out.
    first = circuit.columns()
    assert circuit.columns() is first  # kept while nothing is added
    assert _rows_as_parts(circuit) == _as_parts(circuit)
    circuit.impedance("Z1", "b", "new", 3 + 4j)
    assert circuit.columns() is not first and len(first) == 7
    assert _rows_as_parts(circuit) == _as_parts(circuit)
    edited = circuit.replaced([Part("R1", "resistor", ("in", "far"), 1), Part("Z1", "impedance",
                                                                          ("b", "new"), 5)])
    assert _rows_as_parts(edited) == _as_parts(edited)
    assert _rows_as_parts(circuit) == _as_parts(circuit)  # the original is untouched
    value_only = circuit.with_value("R2", "1k")
    assert value_only.columns().nodes is circuit.columns().nodes  # shared, not copied
    for derived in (edited.copy(), value_only.without(["U1"]), value_only.subcircuit(["R1"])):
        assert _rows_as_parts(derived) == _as_parts(derived)
    edited.resistor("R7", "far", GROUND, 1)  # a replaced circuit grows like any other
    assert _rows_as_parts(edited) == _as_parts(edited)
    assert _rows_as_parts(circuit) == _as_parts(circuit)


def test_rows_of_a_region(circuit: Circuit) -> None:
    assert circuit.rows_of(set(circuit.names)) is None  # the whole circuit
    assert circuit.rows_of({"U1", "R1", "nothing"}).tolist() == [1, 6]


# -- refusals -----------------------------------------------------------------------------------
def test_duplicate_name(circuit: Circuit) -> None:
    with pytest.raises(CircuitError, match=r"^R1: a part of that name is already in the circuit"):
        circuit.capacitor("R1", "x", "y", "1n")


@pytest.mark.parametrize("name", ["", "   ", 5, None])
def test_part_name_must_be_text(name: object) -> None:
    with pytest.raises(CircuitError, match=r"a part name must be non-empty text"):
        Circuit().resistor(name, "a", "b", 1)  # type: ignore[arg-type]


@pytest.mark.parametrize(("part", "message"), [
    (Part("R9", "resistor", ("a",), 1), r"^R9: a resistor takes 2 nets \(a, b\), got 1"),
    (Part("E9", "vcvs", ("a", "b", "c"), 1), r"^E9: a vcvs takes 4 nets \(p, n, cp, cn\), got 3"),
    (Part("U9", "opamp", ("a", "b"), 0), r"^U9: a opamp takes 3 nets \(inp, inn, out\), got 2"),
    (Part("CP9", "coupling", ("a",), 0.1, ("L1", "L2")), r"takes 0 nets \(none\), got 1"),
])
def test_wrong_node_count(part: Part, message: str) -> None:
    with pytest.raises(CircuitError, match=message):
        Circuit().add(part)


@pytest.mark.parametrize("net", ["", "  ", None])
def test_empty_net_name(net: object) -> None:
    with pytest.raises(CircuitError, match=rf"^R1: net 'b' must be a non-empty name, not {net!r}"):
        Circuit().resistor("R1", "a", net, 1)  # type: ignore[arg-type]


def test_unknown_kind() -> None:
    with pytest.raises(CircuitError, match=r"^X1: unknown part kind 'diode'; known kinds: "):
        Circuit().add(Part("X1", "diode", ("a", "b"), 1))


@pytest.mark.parametrize("k", [1.5, -1.01, "2"])
def test_coupling_coefficient_outside_minus_one_to_one(circuit: Circuit, k: object) -> None:
    with pytest.raises(CircuitError, match=r"^CP2: coupling coefficient .* must lie in \[-1, 1\]"):
        circuit.coupling("CP2", "L1", "L2", k)


@pytest.mark.parametrize("k", [1, -1, 0, "0.999"])
def test_coupling_coefficient_at_the_limits_is_accepted(circuit: Circuit, k: object) -> None:
    assert -1 <= circuit.coupling("CP2", "L1", "L2", k).value <= 1


def test_complex_coupling_coefficient(circuit: Circuit) -> None:
    with pytest.raises(CircuitError, match=r"^CP2: a coupling takes a real value, not 0.5j"):
        circuit.coupling("CP2", "L1", "L2", 0.5j)


def test_coupling_of_a_non_inductor(circuit: Circuit) -> None:
    with pytest.raises(CircuitError, match=r"^CP2: couples R1, which is a resistor, not an"):
        circuit.coupling("CP2", "L1", "R1", 0.5)


def test_coupling_of_a_missing_inductor(circuit: Circuit) -> None:
    with pytest.raises(CircuitError, match=r"^CP2: couples 'L9', which is not in the circuit; add"):
        circuit.coupling("CP2", "L9", "L1", 0.5)


def test_coupling_of_an_inductor_with_itself(circuit: Circuit) -> None:
    with pytest.raises(CircuitError, match=r"^CP2: a coupling names two different inductors, got"):
        circuit.coupling("CP2", "L1", "L1", 0.5)


def test_removing_a_coupled_inductor_is_refused_by_name(circuit: Circuit) -> None:
    with pytest.raises(CircuitError, match=r"^CP1: couples 'L2', which is not in the circuit"):
        circuit.without(["L2"])


@pytest.mark.parametrize("builder", ["resistor", "capacitor", "inductor"])
def test_complex_value_on_a_real_part(builder: str) -> None:
    with pytest.raises(CircuitError, match=r"^X1: a \w+ takes a real value, not \(1\+2j\); use an "
                                           "impedance part"):
        getattr(Circuit(), builder)("X1", "a", "b", 1 + 2j)


def test_zero_impedance_points_to_the_wire() -> None:
    with pytest.raises(CircuitError, match=r"^Z1: an impedance part must be non-zero; use a 0 Ω"):
        Circuit().impedance("Z1", "a", "b", 0)


def test_unreadable_value_names_the_part_and_quotes_the_text() -> None:
    with pytest.raises(ValueParseError, match=r"^R1 value: cannot read '4x7'"):
        Circuit().resistor("R1", "a", "b", "4x7")


def test_phase_with_a_complex_value() -> None:
    with pytest.raises(CircuitError, match=r"^V1: give either a complex value or a magnitude"):
        Circuit().voltage_source("V1", "a", "gnd", 1 + 1j, phase_deg=30)


@pytest.mark.parametrize(("phase", "message"), [
    ("x", "^I1: phase_deg 'x' is not a number of degrees"),
    (math.inf, "^I1: phase_deg inf is not finite"),
    (math.nan, "^I1: phase_deg nan is not finite"),
])
def test_phase_must_be_a_finite_number_of_degrees(phase: object, message: str) -> None:
    with pytest.raises(CircuitError, match=message):
        Circuit().current_source("I1", "gnd", "a", 1, phase_deg=phase)  # type: ignore[arg-type]


def test_current_controlled_source_cannot_sense_itself() -> None:
    with pytest.raises(CircuitError, match=r"^H1: a source cannot be controlled by its own"):
        Circuit().ccvs("H1", "a", "b", "H1", 10)


@pytest.mark.parametrize("control", ["U1", "CP1"])
def test_current_controlled_source_needs_a_branch_current(circuit: Circuit, control: str) -> None:
    with pytest.raises(CircuitError, match=rf"^F1: {control} has no single branch current"):
        circuit.cccs("F1", "a", "b", control, 2)


def test_unknown_part_names_are_refused_by_name(circuit: Circuit) -> None:
    for call in (lambda: circuit["R9"], lambda: circuit.without(["R9"]),
                 lambda: circuit.subcircuit(["R1", "R9"]), lambda: circuit.with_value("R9", 1)):
        with pytest.raises(CircuitError, match=r"^there is no part named 'R9' in the circuit"):
            call()


def test_new_value_is_validated_as_on_creation(circuit: Circuit) -> None:
    with pytest.raises(CircuitError, match=r"^R1: a resistor takes a real value"):
        circuit.with_value("R1", 2j)
    with pytest.raises(CircuitError, match=r"^CP1: coupling coefficient 2.0 must lie in \[-1, 1\]"):
        circuit.with_value("CP1", 2)


@pytest.mark.parametrize(("part", "message"), [
    # A hand-made Part reaches add() without the builders' signatures; it must still be refused
    # with a CircuitError that names it, never with a bare Python error.
    (Part("H9", "ccvs", ("a", "b"), 1), "^H9: "),
    (Part("F9", "cccs", ("a", "b"), 1, ("R1", "R2")), "^F9: "),
    (Part("R9", "resistor", None, 1), "^R9: "),  # type: ignore[arg-type]
    (Part("R9", "resistor", "ab", 1), "^R9: "),  # text is not a tuple of net names
    (Part("CP9", "coupling", (), 0.5, None), "^CP9: "),  # type: ignore[arg-type]
    (Part("X9", ["resistor"], ("a", "b"), 1), "^X9: "),  # type: ignore[arg-type]
])
def test_malformed_part_is_refused_with_a_circuit_error(part: Part, message: str) -> None:
    with pytest.raises(CircuitError, match=message):
        Circuit().add(part)
