"""The two-terminal cut check, islands and loop diagnosis (engine/solve/topology.py).

The refusals themselves, message by message, are in test_errors.py; here: what is accepted and
what the checks conclude.
"""

from __future__ import annotations

import cmath
from dataclasses import replace

import numpy as np
import pytest
from test_errors import REGION, divider

from portcut.engine import GROUND, Circuit, CutError, SingularCircuitError, check_cut, equivalent
from portcut.engine.solve.circuit import REFERRING
from portcut.engine.solve.mna import Netlist
from portcut.engine.solve.topology import (
    NETLISTS,
    check_voltage_loops,
    circuit_graph,
    cut,
    forget_netlists,
    islands,
    netlist_of,
)


def transformer(grounded_secondary: bool) -> Circuit:
    """A source driving a coupled pair; the secondary floats, tied to ground outside by RB."""
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, 10)
    c.resistor("R1", "in", "p", 50)
    c.inductor("L1", "p", GROUND, "1m")
    c.inductor("L2", "t", "u", "4m")
    c.coupling("CP1", "L1", "L2", 0.9)
    c.resistor("RL", "t", "u", 330)
    if grounded_secondary:
        c.resistor("RB", "u", GROUND, "1M")
    return c


def test_port_is_inferred_with_ground_as_minus() -> None:
    assert check_cut(divider(), REGION) == ("a", GROUND)


def test_port_without_ground_takes_the_sorted_names() -> None:
    c = Circuit()
    c.voltage_source("V1", "top", GROUND, 5)
    c.resistor("R1", "top", "b", "1k")
    c.resistor("R2", "b", GROUND, "2k")
    c.resistor("R3", "top", "a", "3k")
    c.resistor("R4", "a", GROUND, "4k")
    c.resistor("RG", "a", "b", 100)  # the detector, outside
    assert check_cut(c, {"V1", "R1", "R2", "R3", "R4"}) == ("a", "b")


def test_given_port_may_include_an_inner_net() -> None:
    # The region (R5, R6) meets the rest at "a" only; the user looks in between a and its
    # inner net y: the boundary {a} is a subset of the port.
    c = divider()
    c.resistor("R5", "a", "x", 100)
    c.resistor("R6", "x", "y", 200)
    assert check_cut(c, {"R5", "R6"}, port=("a", "y")) == ("a", "y")
    assert equivalent(c, {"R5", "R6"}, port=("a", "y")).z == pytest.approx(300)


def test_a_coupling_follows_its_inductors() -> None:
    c = transformer(grounded_secondary=False)
    listed_without_k = {"V1", "R1", "L1", "L2"}
    assert "CP1" in {p.name for p in cut(c, listed_without_k, ("t", "u")).parts}
    c.inductor("L3", "t", "u", "1m")
    c.inductor("L4", "v", GROUND, "1m")
    c.coupling("CP2", "L3", "L4", 0.2)
    with_k_but_not_its_inductors = {"V1", "R1", "L1", "L2", "CP1", "CP2"}
    parts = {p.name for p in cut(c, with_k_but_not_its_inductors, ("t", "u")).parts}
    assert "CP2" not in parts


def test_a_piece_meeting_the_rest_at_one_net_is_not_a_terminal() -> None:
    # The primary (V1, R1, L1) meets the rest only at ground; no current can flow there, since
    # nothing conducts from the primary to the secondary inside the region (KCL, common
    # practice). So the cut is two-terminal at (t, u).
    c = transformer(grounded_secondary=True)
    region = {"V1", "R1", "L1", "L2", "CP1"}
    assert check_cut(c, region) == ("t", "u")
    assert check_cut(c, region, ("u", "t")) == ("u", "t")


def test_an_isolated_winding_gets_its_own_reference() -> None:
    c = transformer(grounded_secondary=False)
    netlist = Netlist(list(c.subcircuit({"V1", "R1", "L1", "L2", "CP1"})))
    found = islands(netlist, dc=False, references=("u",))
    assert len(found.pinned) == 2  # u, and one net of the primary
    assert found.joined("t")
    assert not found.joined("p")
    assert found.problem(found.island("p")) is None


def test_transformer_region_matches_the_reflected_impedance() -> None:
    # Coupled inductors (common practice): seen from the secondary, with the primary loop
    # R1 + j w L1 and its source V1, z = j w L2 + (w M)^2 / (R1 + j w L1) and
    # voc = j w M V1 / (R1 + j w L1), with M = k sqrt(L1 L2), dots at the first nodes.
    c = transformer(grounded_secondary=False)
    f = 5e3
    w = 2 * cmath.pi * f
    m = 0.9 * (1e-3 * 4e-3) ** 0.5
    primary = 50 + 1j * w * 1e-3
    eq = equivalent(c, {"V1", "R1", "L1", "L2", "CP1"}, ("t", "u"), f)
    assert eq.z == pytest.approx(1j * w * 4e-3 + (w * m) ** 2 / primary, rel=1e-12)
    assert eq.voc == pytest.approx(1j * w * m * 10 / primary, rel=1e-12)


def test_an_island_fixed_by_controlled_sources_is_solved_with_the_rest() -> None:
    # An ideal cascode: net x touches only two transconductors, and DS2 senses V(b) - V(x).
    # KCL at x gives g2 (Vb - Vx) = g1 Vin, so the output is a pure current g1 Vin (common
    # practice for ideal transconductors): no Thevenin form, isc = -g1 Vin flows back through
    # the short since DS2 draws g1 Vin out of the output net.
    g1, g2, vin = 2e-3, 5e-3, 0.3
    c = Circuit()
    c.voltage_source("VIN", "in", GROUND, vin)
    c.voltage_source("VB", "b", GROUND, 2)
    c.vccs("DS1", "x", GROUND, "in", GROUND, g1)
    c.vccs("DS2", "out", "x", "b", "x", g2)
    c.resistor("RL", "out", GROUND, "1k")
    netlist = Netlist(list(c.subcircuit({"VIN", "VB", "DS1", "DS2"})))
    found = islands(netlist, dc=True, references=(GROUND,))
    assert found.island("x") in found.solved
    eq = equivalent(c, {"VIN", "VB", "DS1", "DS2"}, ("out", GROUND))
    assert (eq.has_thevenin, eq.has_norton) == (False, True)
    assert cmath.isinf(eq.z)
    assert eq.isc == pytest.approx(-g1 * vin)


def test_voltage_loops_name_their_parts() -> None:
    c = Circuit()
    c.voltage_source("V1", "a", GROUND, 1)
    c.resistor("W1", "a", "b", 0)
    c.inductor("L1", "b", GROUND, "1m")
    c.resistor("R1", "a", GROUND, 1)
    netlist = Netlist(list(c))
    check_voltage_loops(netlist, dc=False)  # the inductor has an impedance at AC
    with pytest.raises(SingularCircuitError,
                       match=r"(?=.*V1)(?=.*W1)(?=.*L1).*inductors are shorts at DC"):
        check_voltage_loops(netlist, dc=True)


@pytest.mark.parametrize("wires", [5, 1200])  # a few, and more than the small-graph path takes
def test_a_chain_of_wires_is_no_loop_until_it_closes(wires: int) -> None:
    # graph theory: a path has one edge fewer than vertices; one more edge between its ends
    # closes a cycle (common practice for loops of ideal wires)
    c = Circuit()
    c.voltage_source("V1", "w0", GROUND, 1)
    for i in range(wires):
        c.resistor(f"W{i}", f"w{i}", f"w{i + 1}", 0)
    check_voltage_loops(Netlist(list(c)), dc=True)
    c.resistor("WX", f"w{wires}", GROUND, 0)
    with pytest.raises(SingularCircuitError, match=r"(?=.*V1)(?=.*WX).*loop of voltage-defined"):
        check_voltage_loops(Netlist(list(c)), dc=True)


def test_a_source_loop_whose_current_controls_another_source_is_allowed() -> None:
    # V(a) = 1 V is also set by DS1 = 2 Ω * I(V1): that fixes I(V1) = 0.5 A, so the parallel
    # pair has a unique solution (KCL at a then fixes I(DS1)).
    c = Circuit()
    c.voltage_source("V1", "a", GROUND, 1)
    c.ccvs("DS1", "a", GROUND, "V1", 2)
    c.resistor("R1", "a", "b", 1)
    c.resistor("RL", "b", GROUND, 1)
    check_voltage_loops(Netlist(list(c)), dc=True)
    eq = equivalent(c, {"V1", "DS1", "R1"}, ("b", GROUND))
    assert eq.voc == pytest.approx(1.0)
    assert eq.z == pytest.approx(1.0)


def test_circuit_graph_marks_conducting_edges() -> None:
    c = Circuit()
    c.resistor("R1", "a", GROUND, 1)
    c.capacitor("C1", "a", "b", "1u")
    c.current_source("I1", GROUND, "b", 1)
    c.opamp("U1", "a", "b", "o")
    edges = {key: data for _u, _v, key, data in circuit_graph(c).edges(keys=True, data=True)}
    assert edges["R1"]["conducting"] and not edges["C1"]["conducting"]
    assert not edges["I1"]["conducting"]
    assert edges["U1"]["kind"] == "opamp"
    assert circuit_graph(c, freq=1e3).edges["a", "b", "C1"]["conducting"]


def test_refusals_carry_the_nets_and_parts_they_name():
    # what a view highlights must be what the message names
    c = divider()
    with pytest.raises(CutError) as three:
        check_cut(c, {"R1", "R2"})
    assert set(three.value.nets) == {"in", "a", GROUND}
    assert all(n in str(three.value) for n in three.value.nets)
    c.ccvs("DS1", "x", GROUND, "R1", 100)
    c.resistor("RX", "x", GROUND, "1k")
    with pytest.raises(CutError) as controlled:
        check_cut(c, {"DS1", "RX"})
    assert set(controlled.value.parts) == {"DS1", "R1"}
    with pytest.raises(CutError) as coupled:
        check_cut(transformer(True), {"V1", "R1", "L1", "L2", "CP1"} - {"L2"})
    assert {"CP1", "L1", "L2"} <= set(coupled.value.parts)


def test_a_value_edit_patches_the_kept_netlist() -> None:
    # A kept netlist is reused for the same parts, patched where only values changed, and
    # rebuilt where a part moved; each result equals a netlist built from scratch.
    c = divider()
    c.resistor("W1", "a", "w", 1)
    c.resistor("RW", "w", GROUND, "1k")
    region = REGION | {"W1", "RW"}
    first = cut(c, region, ("a", GROUND)).netlist
    assert cut(c, region, ("a", GROUND)).netlist is first
    found, _ = islands(first, False, (GROUND,)), first.branches()
    edited = c.replaced([replace(c["R2"], value="2k2"), replace(c["W1"], value=0)])
    patched = cut(edited, region, ("a", GROUND)).netlist
    assert patched is not first and patched.nets == first.nets
    # which parts conduct where is kept; what the values decide is not
    assert islands(patched, False, (GROUND,)) is found
    assert "branches" not in patched.memo
    fresh = Netlist(list(edited.subcircuit(region)))
    for kind, group in fresh.groups.items():
        assert np.array_equal(patched[kind].values, group.values)
        assert patched[kind].names == group.names
    assert "W1" in patched.branches().offset_of  # now a 0 Ω wire with a branch current
    assert equivalent(edited, region, ("a", GROUND)).z == pytest.approx(1 / (1 / 1e3 + 1 / 2.2e3
                                                                             + 1 / 1e3))
    moved = edited.replaced([replace(edited["RW"], nodes=("w", "in"))])
    rebuilt = cut(moved, region, ("a", GROUND)).netlist
    assert np.array_equal(rebuilt["resistor"].nodes,
                          Netlist(list(moved.subcircuit(region)))["resistor"].nodes)
    assert not np.array_equal(rebuilt["resistor"].nodes, patched["resistor"].nodes)


def referred_names(netlist: Netlist, kind: str) -> list[list[str | None]]:
    """The names of the parts each part of ``kind`` names (None: no such part)."""
    names = netlist.columns.names
    return [[names[r] if r >= 0 else None for r in pair]
            for pair in netlist.referred(kind).tolist()]


def test_an_edit_of_what_a_controlled_source_senses_is_not_taken_for_a_value_edit() -> None:
    # A 3 V source across R1 = 1 kOhm and R2 = 3 kOhm in parallel: 3 mA in R1, 1 mA in R2. A
    # CCCS senses one of them and drives the load RL at the port, so with the port open
    # voc = gain * I(sensed) * RL (common practice: Ohm's law). Edits of plain values keep the
    # references; pointing the CCCS at the other resistor must not, and must give its answer.
    c = Circuit()
    c.voltage_source("V1", "s", GROUND, 3)
    c.resistor("R1", "s", GROUND, "1k")
    c.resistor("R2", "s", GROUND, "3k")
    c.cccs("DS24", GROUND, "o", "R1", 2)
    c.resistor("RL", "o", GROUND, "500")
    region = set(c.names)
    assert equivalent(c, region, ("o", GROUND)).voc == pytest.approx(2 * 3e-3 * 500)
    valued = c.replaced([replace(c["RL"], value=250)])
    assert valued.columns().shares_references(c.columns())
    assert equivalent(valued, region, ("o", GROUND)).voc == pytest.approx(2 * 3e-3 * 250)
    resensed = valued.replaced([replace(valued["DS24"], refs=("R2",), value=3)])
    assert not resensed.columns().shares_references(valued.columns())
    assert equivalent(resensed, region, ("o", GROUND)).voc == pytest.approx(3 * 1e-3 * 250)


def test_a_region_netlist_from_the_columns_equals_one_built_from_its_parts() -> None:
    # The netlist of a region is read from the circuit's columns; it must number the nets and
    # group the parts exactly as one built part by part from the same parts.
    c = transformer(True)
    c.opamp("U1", "p", "t", "o")
    c.cccs("DS24", "o", GROUND, "RL", 2)
    c.impedance("Z1", "o", GROUND, 1 + 2j)
    for region in (set(c.names), {"L1", "L2", "CP1", "RL", "U1", "DS24"}, {"Z1"}):
        kept = netlist_of(c.columns(), c.rows_of(region))
        built = Netlist([p for p in c if p.name in region])
        assert kept.nets == built.nets and dict(kept.index) == dict(built.index)
        assert kept.groups.keys() == built.groups.keys()
        for kind, group in built.groups.items():
            assert np.array_equal(kept[kind].nodes, group.nodes)
            assert np.array_equal(kept[kind].values, group.values)
            assert kept[kind].values.dtype == group.values.dtype
            assert kept[kind].names == group.names
            assert np.array_equal(kept.controlling(kind), built.controlling(kind))
        for kind in REFERRING:
            assert referred_names(kept, kind) == referred_names(built, kind)
        assert kept.parts == built.parts


def test_dropped_netlists_free_what_they_kept_without_a_garbage_collection() -> None:
    # A kept system refers back to its netlist; dropping the netlist must free it at once, not
    # leave the cycle (and its arrays) to a later collection.
    import gc
    import weakref

    c = divider()
    equivalent(c, REGION, ("a", GROUND))
    netlist = cut(c, REGION, ("a", GROUND)).netlist
    kept = [weakref.ref(v) for k, v in netlist.memo.items() if isinstance(k, tuple)
            and k[0] == "port"]
    assert kept
    gc.disable()
    try:
        forget_netlists()
        assert all(ref() is None for ref in kept)
    finally:
        gc.enable()


def test_netlists_set_aside_come_back_and_those_built_meanwhile_go() -> None:
    # A benchmark times a first analysis inside set_aside(); the netlists a live session kept
    # before must be the ones it finds afterwards, the ones built within gone.
    before = divider()
    kept = cut(before, REGION, ("a", GROUND)).netlist
    with NETLISTS.set_aside():
        again = divider()
        equivalent(again, REGION, ("a", GROUND))
        within = cut(again, REGION, ("a", GROUND)).netlist
        assert within is not kept and within.memo  # nothing from before was found
    assert cut(before, REGION, ("a", GROUND)).netlist is kept
    assert not within.memo  # dropped, what it kept freed
