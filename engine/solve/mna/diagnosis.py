"""Why a system has no unique solution, in words a user can act on."""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import maximum_bipartite_matching

from ...errors import SingularCircuitError
from ..units import format_eng
from .system import System

__all__ = ["describe_freq", "singular"]


def describe_freq(freq: float) -> str:
    """``"DC"`` or the frequency in engineering notation (``"1 kHz"``), for messages."""
    return "DC" if freq == 0 else format_eng(freq, "Hz")


def singular(system: System, freq: float, matrix: sp.spmatrix | None = None
             ) -> SingularCircuitError:
    """The error for ``system`` having no unique solution at ``freq`` Hz, naming the likely
    culprits (read from ``matrix``, the system's matrix there, where given)."""
    return SingularCircuitError(f"the circuit equations have no unique solution at "
                                f"{describe_freq(freq)}{_culprits(system, matrix)}")


def _culprits(system: System, matrix: sp.spmatrix | None) -> str:
    """Undetermined unknowns (from a structural matching) and the parts that usually cause it."""
    hints = []
    if matrix is not None and not np.isfinite(matrix.data).all():
        return (": some part impedances overflow double precision at this frequency; "
                "analyse at a frequency nearer the parts' own scale")
    if matrix is not None and matrix.shape[0]:
        rows, cols = matrix.nonzero()
        pattern = sp.csr_matrix((np.ones(rows.size), (rows, cols)), shape=matrix.shape)
        matched = maximum_bipartite_matching(pattern, perm_type="row")
        loose = np.flatnonzero(matched < 0)
        if loose.size:
            names = system.unknown_names()
            listed = ", ".join(names[i] for i in loose[:5])
            more = f" and {loose.size - 5} more" if loose.size > 5 else ""
            hints.append(f"no equation determines {listed}{more}")
    netlist = system.netlist
    opamps = netlist["opamp"].names
    if opamps:
        hints.append(f"check that op-amp{'s' if len(opamps) > 1 else ''} "
                     f"{', '.join(opamps[:5])} {'have' if len(opamps) > 1 else 'has'} negative "
                     "feedback from output to input")
    controlled = [n for kind in ("vcvs", "vccs", "ccvs", "cccs") for n in netlist[kind].names]
    if controlled:
        hints.append(f"check the gains of the controlled sources {', '.join(controlled[:5])} "
                     "(a loop gain that cancels a part exactly makes the equations singular)")
    if not hints:
        hints.append("a part value cancels another exactly (e.g. a resonance or a negative "
                     "value), so two equations coincide")
    return ": " + "; ".join(hints)
