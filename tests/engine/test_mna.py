"""The MNA assembly, factorization and error bound (engine/solve/mna/), entry by entry.

Stamps are checked against the modified nodal form of Ho, Ruehli and Brennan, "The modified
nodal approach to network analysis", IEEE Trans. Circuits and Systems CAS-22 (1975): node rows
hold KCL (currents leaving the net), group-2 branches add a current unknown and a branch row.
Signs follow engine/solve/circuit.py.
"""

from __future__ import annotations

import math
import warnings
from fractions import Fraction
from functools import partial

import numpy as np
import pytest
import scipy.sparse as sp
from circuits import divider as shared_divider

from portcut.engine import GROUND, Circuit, SingularCircuitError
from portcut.engine.cli.bench import mixed_circuit
from portcut.engine.solve import mna
from portcut.engine.solve.mna import EPS, Factor, Netlist, System, assemble
from portcut.engine.solve.mna.factor import equilibration


def build(c: Circuit, reference: str = GROUND) -> System:
    netlist = Netlist(list(c))
    return assemble(netlist, [netlist.index[reference]])


def entry(system: System, matrix: np.ndarray, row: str, col: str) -> complex:
    """A matrix entry by unknown names: ``"net"`` for a voltage, ``"I:part"`` for a current."""
    return matrix[index(system, row), index(system, col)]


def index(system: System, name: str) -> int:
    if name.startswith("I:"):
        return system.branch_of[name[2:]]
    return int(system.unknown_of_net[system.netlist.index[name]])


#: 5 V behind 1 kΩ into 2 kΩ at net "a", unloaded.
divider = partial(shared_divider, 5, 1e3, 2e3, load=None, out="a")


def test_resistor_and_voltage_source_stamps() -> None:
    # Ho et al. (1975): conductance stamp in the node block, +1/-1 incidence column and row
    # for the source's branch current, its value on the right-hand side.
    s = build(divider())
    a = s.matrix(0).toarray()
    g1, g2 = 1 / 1e3, 1 / 2e3
    expected = {("in", "in"): g1, ("in", "a"): -g1, ("a", "in"): -g1, ("a", "a"): g1 + g2,
                ("in", "I:V1"): 1, ("I:V1", "in"): 1}
    for (row, col), value in expected.items():
        assert entry(s, a, row, col) == pytest.approx(value)
    assert np.count_nonzero(a) == len(expected)
    assert s.b[index(s, "I:V1")] == 5
    # common practice: the divider gives V(a) = 5 * 2k / 3k
    x = Factor(s, 0).solve(s.b)
    assert x[index(s, "a")] == pytest.approx(10 / 3)
    assert x[index(s, "I:V1")] == pytest.approx(-5 / 3e3)  # current from p to n inside: negative


def test_a_real_factor_solves_a_complex_right_hand_side() -> None:
    s = build(divider())
    factor = Factor(s, 0)
    assert not np.iscomplexobj(factor.matrix.data)
    x = factor.solve(s.b * (1 - 2j))
    assert x[index(s, "a")] == pytest.approx(10 / 3 * (1 - 2j))


def test_current_source_pushes_into_its_to_net() -> None:
    # engine/solve/circuit.py: a current source (n_from, n_to) drives its value into n_to.
    c = Circuit()
    c.current_source("I1", GROUND, "a", "2m")
    c.resistor("R1", "a", GROUND, "1k")
    s = build(c)
    assert Factor(s, 0).solve(s.b)[index(s, "a")] == pytest.approx(2.0)


def test_capacitor_is_open_at_dc_and_stamps_s_c() -> None:
    c = Circuit()
    c.capacitor("C1", "a", GROUND, "1u")
    c.resistor("R1", "a", GROUND, "1k")
    s = build(c)
    assert entry(s, s.matrix(0).toarray(), "a", "a") == pytest.approx(1e-3)
    w = 2 * math.pi * 50
    assert entry(s, s.matrix(50).toarray(), "a", "a") == pytest.approx(1e-3 + 1j * w * 1e-6)


def test_inductor_rows_and_mutual_terms() -> None:
    # V(a) - V(b) - s L I - s M I' = 0 with M = k sqrt(L1 L2) (common practice, dots at the
    # first nodes); at DC the row reads V(a) - V(b) = 0, a short.
    c = Circuit()
    c.inductor("L1", "a", GROUND, "1m")
    c.inductor("L2", "b", GROUND, "4m")
    c.coupling("CP1", "L1", "L2", 0.5)
    s = build(c)
    w = 2 * math.pi * 1e3
    a = s.matrix(1e3).toarray()
    assert entry(s, a, "I:L1", "a") == 1
    assert entry(s, a, "I:L1", "I:L1") == pytest.approx(-1j * w * 1e-3)
    assert entry(s, a, "I:L1", "I:L2") == pytest.approx(-1j * w * 0.5 * 2e-3)
    assert entry(s, a, "I:L2", "I:L1") == pytest.approx(-1j * w * 0.5 * 2e-3)
    dc = s.matrix(0).toarray()
    assert entry(s, dc, "I:L1", "I:L1") == 0
    assert entry(s, dc, "I:L1", "I:L2") == 0


def test_zero_ohm_resistor_is_a_zero_volt_branch() -> None:
    c = divider()
    c.resistor("W1", "a", "b", 0)
    c.resistor("R3", "b", GROUND, 1e3)
    s = build(c)
    a = s.matrix(0).toarray()
    assert entry(s, a, "I:W1", "a") == 1
    assert entry(s, a, "I:W1", "b") == -1
    assert entry(s, a, "I:W1", "I:W1") == 0
    x = Factor(s, 0).solve(s.b)
    assert x[index(s, "a")] == pytest.approx(x[index(s, "b")])


def test_opamp_is_a_nullor() -> None:
    # Ideal op-amp: row V(inp) - V(inn) = 0, a free output current entering ``out`` and
    # returning through ground (pinned here, so only the ``out`` entry remains).
    c = Circuit()
    c.opamp("U1", "p", "n", "o")
    s = build(c)
    a = s.matrix(0).toarray()
    assert entry(s, a, "I:U1", "p") == 1
    assert entry(s, a, "I:U1", "n") == -1
    assert entry(s, a, "o", "I:U1") == -1
    assert np.count_nonzero(a) == 3


def test_controlled_sources_stamp_their_gains() -> None:
    c = Circuit()
    c.resistor("R1", "a", GROUND, 100)
    c.vcvs("DS21", "e", GROUND, "a", GROUND, 3)
    c.vccs("DS22", "f", GROUND, "a", GROUND, "2m")
    c.ccvs("DS23", "h", GROUND, "R1", 50)
    c.cccs("DS24", "k", GROUND, "R1", 4)
    s = build(c)
    a = s.matrix(0).toarray()
    assert entry(s, a, "I:DS21", "a") == -3
    assert entry(s, a, "f", "a") == pytest.approx(2e-3)
    # R1 controls DS23 and DS24, so it carries a branch row V(a) - R I = 0
    assert entry(s, a, "I:R1", "a") == 1
    assert entry(s, a, "I:R1", "I:R1") == -100
    assert entry(s, a, "I:DS23", "I:R1") == -50
    assert entry(s, a, "k", "I:R1") == 4
    assert not s.symmetric


def test_current_source_controller_gets_a_current_row() -> None:
    c = Circuit()
    c.current_source("I1", GROUND, "a", "1m")
    c.resistor("R1", "a", GROUND, "1k")
    c.cccs("DS24", GROUND, "b", "I1", 2)
    c.resistor("R2", "b", GROUND, "1k")
    s = build(c)
    x = Factor(s, 0).solve(s.b)
    assert x[index(s, "I:I1")] == pytest.approx(1e-3)
    assert x[index(s, "b")] == pytest.approx(2.0)  # 2 mA into 1 kΩ


def test_passive_systems_are_complex_symmetric() -> None:
    c = divider()
    c.inductor("L1", "a", "b", "1m")
    c.capacitor("C1", "b", GROUND, "1u")
    s = build(c)
    a = s.matrix(1e3).toarray()
    assert s.symmetric
    assert np.array_equal(a, a.T)


def test_a_singular_system_raises_without_warnings() -> None:
    # Two sources fixing one voltage: the factorization must fail as a SingularCircuitError.
    c = Circuit()
    c.voltage_source("V1", "a", GROUND, 1)
    c.voltage_source("V2", "a", GROUND, 2)
    s = build(c)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(SingularCircuitError, match="no unique solution at DC"):
            Factor(s, 0)


def test_singular_message_names_undetermined_unknowns_and_op_amps() -> None:
    c = Circuit()
    c.voltage_source("V1", "p", GROUND, 1)
    c.opamp("U1", "p", GROUND, "o")  # no feedback: nothing fixes the output
    s = build(c)
    with pytest.raises(SingularCircuitError,
                       match=r"no equation determines .*U1.*negative feedback"):
        Factor(s, 0)


def test_a_defect_is_not_reported_as_a_singular_circuit() -> None:
    # A right-hand side of the wrong shape is the caller's bug: it must surface as the error
    # SciPy raises, not as "no unique solution".
    s = build(divider())
    factor = Factor(s, 0)
    with pytest.raises(ValueError) as raised:
        factor.solve(np.ones(s.size + 1))
    assert not isinstance(raised.value, SingularCircuitError)


def test_only_superlus_singular_report_becomes_a_circuit_error(monkeypatch: pytest.MonkeyPatch
                                                                ) -> None:
    # Any other failure of the factorization (here a stand-in for running out of memory) is no
    # property of the circuit and passes through unchanged.
    def failing(*_args: object, **_kwargs: object) -> None:
        raise RuntimeError("not enough memory")

    monkeypatch.setattr(mna.factor, "splu", failing)
    with pytest.raises(RuntimeError, match="not enough memory"):
        Factor(build(divider()), 0)


def test_error_bound_covers_the_actual_error() -> None:
    # A ladder of resistors spanning nine decades; the exact driving-point resistance by
    # series/parallel reduction in rational arithmetic (common practice):
    # Z_i = RS_i + RP_i || Z_(i+1), the far end open.
    sections = [(10.0 ** (i % 10 - 3), 10.0 ** ((7 * i) % 10 - 3)) for i in range(20)]
    c = Circuit()
    for i, (rs, rp) in enumerate(sections):
        c.resistor(f"RS{i}", f"n{i}", f"n{i + 1}", rs)
        c.resistor(f"RP{i}", f"n{i + 1}", GROUND, rp)
    tail: Fraction | None = None
    for rs, rp in reversed(sections):
        shunt = Fraction(rp) if tail is None else Fraction(rp) * tail / (Fraction(rp) + tail)
        tail = Fraction(rs) + shunt
    s = build(c)
    factor = Factor(s, 0)
    rhs = s.rhs("n0")
    x = factor.solve(rhs)
    z = x[index(s, "n0")]
    bound = factor.error_bound(x, rhs, x)  # passive: A is symmetric, the adjoint is x itself
    assert abs(z - float(tail)) <= bound
    assert bound <= 1e6 * EPS * abs(z)


@pytest.mark.parametrize("freq", [0.0, 1e3])
def test_small_matrices_compressed_here_equal_scipys_conversion(monkeypatch: pytest.MonkeyPatch,
                                                                freq: float) -> None:
    # SciPy's COO conversion (reference library) sums duplicate entries; the compression done
    # here for small matrices must give the same matrix, in canonical CSC and CSR form.
    c, region, _ = mixed_circuit(4)
    netlist = Netlist([p for p in c if p.name in region])
    pinned = [netlist.index[GROUND]] + [netlist.index[f"t{i}"] for i in range(4)]
    here = assemble(netlist, pinned)
    monkeypatch.setattr(mna.system, "_SMALL_MATRIX", -1)
    by_scipy = assemble(netlist, pinned)
    for mine, theirs in ((here.matrix(freq), by_scipy.matrix(freq)),
                         *zip(here.parts(), by_scipy.parts(), strict=True)):
        assert mine.format == theirs.format and mine.has_canonical_format
        assert np.array_equal(mine.indptr, theirs.indptr)
        assert np.array_equal(mine.indices, theirs.indices)
        assert np.array_equal(mine.data, theirs.data)


def test_equilibration_of_a_subnormal_entry_stays_finite() -> None:
    # IEEE 754 binary64 (common practice): the largest finite power of two is 2**1023, while
    # 1 / 5.6e-309 would need 2**1024; the scale must stop there, not overflow.
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        rows, cols = equilibration(sp.csc_matrix(np.diag([5.56268465e-309, 0.5])))
    assert np.isfinite(rows).all() and np.isfinite(cols).all()
    assert rows[0] == 2.0 ** 1023 and rows[1] == 1.0
