"""Sparse complex Modified Nodal Analysis: ``A(s) x = b`` with ``s = j 2 pi f``.

The matrix is assembled once as ``A(s) = G + s M`` (SciPy sparse, COO triplets -> CSC), so one
assembly serves every frequency of a sweep, and factorized once per frequency (SuperLU) to solve
several right-hand sides.

Unknowns, in this order:

* the voltage of every net except the *pinned* ones (one reference net per galvanically separate
  island, chosen by the caller from :func:`engine.solve.topology.islands`);
* one branch current per group-2 part: voltage sources, VCVS, CCVS, inductors, 0 Ω wires
  (a 0 V branch, so an ideal wire costs no conditioning), the output current of every op-amp
  (a nullor: its row holds V(inp) - V(inn) = 0, its current is free, injected at ``out`` and
  returned through ground), an optional port short, and any part whose current controls a CCVS or
  CCCS (so that I(control) is an unknown whatever the controlling part is).

Sign conventions (those of :mod:`engine.solve.circuit`): a branch current flows from the part's
first node
to its second node inside the part; row *i* of a net states that the currents leaving the net
through its parts sum to the current injected into it (the right-hand side); a current source
``(n_from, n_to)`` carries its value from ``n_from`` through itself into ``n_to``. Inductor rows
read ``V(a) - V(b) - s L I - s M I' = 0`` with ``M = k sqrt(L1 L2)`` for a coupled partner, so at
DC an inductor is a short; a capacitor stamps ``s C`` and is open at DC.

A matrix that SuperLU finds exactly singular, or a solution that is not finite, raises
:class:`~engine.errors.SingularCircuitError` naming the likely culprits; any other exception is a
defect and passes through.

The package: :mod:`.netlist` (the parts as arrays, the branch unknowns), :mod:`.stamping` (each
kind's entries), :mod:`.system` (assembly), :mod:`.factor` (factorization, solves, error bounds)
and :mod:`.diagnosis` (why a system is singular).
"""

from .diagnosis import describe_freq, singular
from .factor import (
    EPS,
    ORDERING,
    Factor,
    bound,
    equilibration,
    precise_residual,
    reads_pivots,
    rounding,
    singular_pivot,
)
from .netlist import WIDE_SPAN, Branches, Group, Netlist
from .system import System, assemble

__all__ = [
    "EPS", "ORDERING", "WIDE_SPAN", "Branches", "Factor", "Group", "Netlist",
    "System", "assemble", "bound", "describe_freq", "equilibration", "precise_residual",
    "reads_pivots", "rounding", "singular", "singular_pivot",
]
