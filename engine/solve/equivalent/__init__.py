"""Thevenin and Norton equivalents of a two-terminal region: one frequency, sweeps, collapse, and
the check that a collapsed circuit behaves as the original.

Conventions (docs/method.md, engine/solve/circuit.py): ``voc = V(plus) - V(minus)`` with the port
open; ``isc`` flows out of plus, through an outside short, into minus; ``z`` is the voltage across
the port for 1 A driven into plus with the independent sources zeroed (dependent sources kept),
so ``voc = z * isc`` whenever both forms exist. ``z`` is 0 where there is no Norton form and
infinite where there is no Thevenin form; a quantity that does not exist is ``nan`` (0/0) or
infinite. Source phasors are amplitudes (peak values) unless the caller means rms throughout;
:meth:`Equivalent.max_power` takes the basis. The method is in docs/method.md.

The package: :mod:`.results` (the result objects), :mod:`.solvers` (solves over frequency with
error bounds), :mod:`.port` (deciding the forms), :mod:`.reduce` (the public calls and collapse)
and :mod:`.check` (the equivalence check).
"""

# (The underscored names are not public: the port problem the sensitivities reuse, and the two
# solvers the benchmark times one against the other.)
from .check import check_equivalence
from .reduce import _equivalent_of as _equivalent_of
from .reduce import _frequencies as _frequencies
from .reduce import _port_of as _port_of
from .reduce import collapse, equivalent, sweep
from .results import EquivalenceReport, Equivalent, Forms, PowerTransfer, Realisation, Sweep
from .solvers import DENSE_SWEEP_LIMIT
from .solvers import _solve_dense as _solve_dense
from .solvers import _solve_sparse as _solve_sparse

__all__ = [
    "DENSE_SWEEP_LIMIT",
    "EquivalenceReport",
    "Equivalent",
    "Forms",
    "PowerTransfer",
    "Realisation",
    "Sweep",
    "check_equivalence",
    "collapse",
    "equivalent",
    "sweep",
]
