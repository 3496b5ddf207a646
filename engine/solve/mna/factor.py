"""One sparse LU factorization per frequency, its solves, and the error bound of a solution."""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu

from .diagnosis import singular
from .system import System

__all__ = ["EPS", "ORDERING", "Factor", "bound", "rounding"]

EPS = float(np.finfo(float).eps)
#: Column ordering handed to SuperLU: minimum degree on the pattern of A + A^T suits MNA, whose
#: pattern is symmetric but for the few controlled-source entries (about half the fill of COLAMD
#: on an RC mesh; see docs/performance.md).
ORDERING = "MMD_AT_PLUS_A"


class Factor:
    """One sparse LU factorization of ``A(j 2 pi freq)``, solving many right-hand sides.

    Raises :class:`~engine.errors.SingularCircuitError` where SuperLU finds the matrix exactly
    singular and where a solution is not finite (a matrix singular to working precision). Any
    other exception is a defect of the caller (a right-hand side of the wrong shape, say) and
    passes through as it is.
    """

    def __init__(self, system: System, freq: float) -> None:
        self.system, self.freq = system, freq
        self.matrix = system.matrix(freq)
        try:
            self._lu = splu(self.matrix, permc_spec=ORDERING)
        except RuntimeError as exc:
            # SuperLU reports a zero pivot as RuntimeError("Factor is exactly singular"); its
            # other RuntimeErrors (out of memory, say) are no property of the circuit
            if "singular" not in str(exc):
                raise
            raise singular(system, freq, self.matrix) from None

    def solve(self, rhs: np.ndarray, transposed: bool = False) -> np.ndarray:
        """``A^{-1} rhs`` (or ``A^{-T} rhs``); rhs of shape (n,) or (n, k); refined by one step
        where the system is in the wide form."""
        data = rhs.astype(self.matrix.dtype if not np.iscomplexobj(rhs) else complex)
        if np.iscomplexobj(data) and not np.iscomplexobj(self.matrix.data):
            # SuperLU solves in the factor's own dtype: real factor, complex rhs in two parts
            return self.solve(data.real, transposed) + 1j * self.solve(data.imag, transposed)
        trans = "T" if transposed else "N"
        # (a factor found is never singular to SuperLU's solve: what it raises is a defect)
        x = self._lu.solve(data, trans=trans)
        if self.system.refined:
            # One step of refinement with the residual: the wide form's rows mix scales,
            # where the pivots SuperLU picks can leave an error well above the rounding
            # of the data; one step brings it back (docs/method.md).
            a = self.matrix.T if transposed else self.matrix
            with np.errstate(all="ignore"):
                x = x + self._lu.solve(data - a @ x, trans=trans)
        if not np.isfinite(x).all():
            raise singular(self.system, self.freq, self.matrix)
        return x

    def error_bound(self, x: np.ndarray, rhs: np.ndarray, adjoint: np.ndarray) -> float:
        """Bound on ``|c.x_true - c.x|`` for the linear functional c with ``A^T adjoint = c``.

        ``x`` solves ``A x = rhs`` in floating point. The exact solution differs by
        ``A^{-1} r`` with the residual ``r = rhs - A x``, so ``c.x`` is off by ``adjoint . r``;
        ``r`` is itself computed with an error below ``gamma (|A||x| + |rhs|)``, with
        ``gamma = (nz + 1) eps`` and nz the most non-zeros in one row (the same rounding that a
        perturbation of the part values by one unit in the last place would cause).
        """
        a = self.matrix
        with np.errstate(all="ignore"):
            residual = rhs - a @ x
            per_entry = np.abs(a.data) * np.repeat(np.abs(x), np.diff(a.indptr))
            abs_ax = np.bincount(a.indices, per_entry, a.shape[0])
        return float(bound(adjoint, residual, abs_ax, rhs, rounding(a)))


def rounding(matrix: sp.spmatrix) -> float:
    """``gamma = (nz + 1) eps``, nz the most non-zeros in one row of ``matrix``."""
    nz = np.bincount(matrix.indices).max(initial=0) if matrix.nnz else 0
    return float(nz + 1) * EPS


def bound(adjoint: np.ndarray, residual: np.ndarray, abs_ax: np.ndarray, rhs: np.ndarray,
          gamma: float) -> np.ndarray:
    """``sum |adjoint| (|residual| + gamma (|A||x| + |rhs|))`` over the last axis."""
    with np.errstate(all="ignore"):
        weight = np.abs(residual) + gamma * (abs_ax + np.abs(rhs))
        return np.sum(np.abs(adjoint) * weight, axis=-1)
