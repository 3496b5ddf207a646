"""One sparse LU factorization per frequency, its solves, and the error bound of a solution."""

from __future__ import annotations

import math

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu

from .diagnosis import singular
from .system import System

__all__ = [
    "EPS", "ORDERING", "Factor", "bound", "equilibration", "precise_residual",
    "reads_pivots", "rounding", "singular_pivot",
]

EPS = float(np.finfo(float).eps)
#: Column ordering handed to SuperLU: minimum degree on the pattern of A + A^T suits MNA, whose
#: pattern is symmetric but for the few controlled-source entries (about half the fill of COLAMD
#: on an RC mesh; see docs/performance.md).
ORDERING = "MMD_AT_PLUS_A"
_SINGULAR_REPORTS = ("Factor is exactly singular", "failed to factorize matrix")


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
        # Rows that mix scales (the wide form) and pivots read to tell a singular system
        # (dependent sources) call for the matrix equilibrated first (docs/method.md).
        dependent = system.netlist.has_dependent
        self._scales = equilibration(self.matrix) if system.refined or dependent else None
        scaled = self.matrix if self._scales is None else _scaled(self.matrix, *self._scales)
        try:
            self._lu = splu(scaled, permc_spec=ORDERING)
        except RuntimeError as exc:
            # SuperLU's two reports of a singular matrix: a zero pivot, and (SciPy's guard for
            # singular matrices on which its pivoting fails) an aborted supernode update; its
            # other errors (out of memory, say) are no property of the circuit
            if not str(exc).startswith(_SINGULAR_REPORTS):
                raise
            raise singular(system, freq, self.matrix) from None
        if reads_pivots(system) and _singular_pivots(self._lu):
            raise singular(system, freq, self.matrix)

    def solve(self, rhs: np.ndarray, transposed: bool = False) -> np.ndarray:
        """``A^{-1} rhs`` (or ``A^{-T} rhs``); rhs of shape (n,) or (n, k); refined by one step
        where the system is in the wide form."""
        data = rhs.astype(self.matrix.dtype if not np.iscomplexobj(rhs) else complex)
        if np.iscomplexobj(data) and not np.iscomplexobj(self.matrix.data):
            # SuperLU solves in the factor's own dtype: real factor, complex rhs in two parts
            return self.solve(data.real, transposed) + 1j * self.solve(data.imag, transposed)
        # (a factor found is never singular to SuperLU's solve: what it raises is a defect)
        x = self._solved(data, transposed)
        if self.system.refined:
            # One step of refinement with the residual: the wide form's rows mix scales,
            # where the pivots SuperLU picks can leave an error well above the rounding
            # of the data; one step brings it back (docs/method.md).
            a = self.matrix.T if transposed else self.matrix
            with np.errstate(all="ignore"):
                x = x + self._solved(data - a @ x, transposed)
        if not np.isfinite(x).all():
            raise singular(self.system, self.freq, self.matrix)
        return x

    def _solved(self, data: np.ndarray, transposed: bool) -> np.ndarray:
        """One solve through the factor of the (equilibrated) matrix: with ``R A C`` factored,
        ``A x = b`` is ``x = C (R A C)^{-1} R b`` and ``A^T z = d`` is
        ``z = R (R A C)^{-T} C d``."""
        trans = "T" if transposed else "N"
        if self._scales is None:
            return self._lu.solve(data, trans=trans)
        rows, cols = self._scales
        first, last = (cols, rows) if transposed else (rows, cols)
        if data.ndim == 2:
            first, last = first[:, None], last[:, None]
        with np.errstate(all="ignore"):  # values past double range: caught as not finite
            return last * self._lu.solve(first * data, trans=trans)

    def error_bound(self, x: np.ndarray, rhs: np.ndarray, adjoint: np.ndarray) -> float:
        """Bound on ``|c.x_true - c.x|`` for the linear functional c with ``A^T adjoint = c``.

        ``x`` solves ``A x = rhs`` in floating point. The exact solution differs by
        ``A^{-1} r`` with the residual ``r = rhs - A x``, so ``c.x`` is off by ``adjoint . r``
        (to first order in the adjoint's own error). In the wide form ``r`` is computed
        in extended precision (:data:`PRECISE`), so that it is the error really left in ``x``,
        not the rounding of the residual's own sums; the matrix and right-hand side carry
        their own rounding (each part value to one unit in the last place, each sum of
        stamps to its terms), below
        ``gamma (|A||x| + |rhs|)``, ``gamma = (nz + 1) eps``, nz the most non-zeros in one row.
        """
        a = self.matrix
        with np.errstate(all="ignore"):
            # (in the nodal form the entries' own rounding dominates the bound, so the
            # residual's rounding at working precision costs it at most a factor 2)
            residual = precise_residual(a, x, rhs) if self.system.refined else rhs - a @ x
            per_entry = np.abs(a.data) * np.repeat(np.abs(x), np.diff(a.indptr))
            abs_ax = np.bincount(a.indices, per_entry, a.shape[0])
        return float(bound(adjoint, residual, abs_ax, rhs, rounding(a)))


#: The extended precision residuals are computed in (80-bit on x86; where the platform has
#: none it is double precision, and the residual carries its own rounding too).
PRECISE = np.longdouble


def precise_residual(matrix: sp.spmatrix, x: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """``rhs - matrix @ x`` computed in :data:`PRECISE`, returned at working precision; ``x``
    and ``rhs`` of shape (n,) or (n, k)."""
    kind = np.clongdouble if np.iscomplexobj(matrix.data) or np.iscomplexobj(x) \
        or np.iscomplexobj(rhs) else PRECISE
    out = rhs.astype(kind) - matrix.astype(kind) @ x.astype(kind)
    return out.astype(complex if kind is np.clongdouble else float)


def equilibration(matrix: sp.csc_matrix) -> tuple[np.ndarray, np.ndarray]:
    """Row scales ``r`` and column scales ``c``, powers of two, with which the largest entry of
    every row and then of every column of ``diag(r) A diag(c)`` lies in [0.5, 1): exact in
    floating point, so the scaled system has the same solution to the last bit; rows or
    columns without a finite non-zero entry keep the scale 1."""
    n = matrix.shape[0]
    magnitude = np.abs(matrix.data)
    rows = np.zeros(n)
    np.maximum.at(rows, matrix.indices, magnitude)
    row_scale = _power_of_two(rows)
    scaled = magnitude * row_scale[matrix.indices]
    cols = np.zeros(n)
    filled = np.diff(matrix.indptr) > 0
    if scaled.size:
        cols[filled] = np.maximum.reduceat(scaled, matrix.indptr[:-1][filled])
    return row_scale, _power_of_two(cols)


def _power_of_two(largest: np.ndarray) -> np.ndarray:
    """``2**-e`` with ``largest = m 2**e``, 0.5 <= m < 1; 1 where ``largest`` is 0 or not
    finite. A subnormal ``largest`` gets at most ``2**1023``, the largest finite power of two."""
    ok = np.isfinite(largest) & (largest > 0)
    _, exponent = np.frexp(np.where(ok, largest, 1.0))
    return np.where(ok, np.ldexp(1.0, np.minimum(-exponent, 1023)), 1.0)


def _scaled(matrix: sp.csc_matrix, rows: np.ndarray, cols: np.ndarray) -> sp.csc_matrix:
    """``diag(rows) matrix diag(cols)``, in CSC form with the same structure."""
    per_column = np.repeat(cols, np.diff(matrix.indptr))
    with np.errstate(all="ignore"):  # entries past double range stay inf or nan
        data = matrix.data * (rows[matrix.indices] * per_column)
    return sp.csc_matrix((data, matrix.indices, matrix.indptr), shape=matrix.shape)


def reads_pivots(system: System) -> bool:
    """Whether a singular system is also told by its pivots (:func:`singular_pivot`): with
    dependent sources, in the nodal form. The wide form's rows make well-posed high-gain
    stages as ill conditioned as a singular system looks (an inverting stage of gain 1e9 with
    1 mΩ parts leaves 930 ``sqrt(n) eps``), so there the bounds alone decide, as for passive
    regions."""
    return system.netlist.has_dependent and not system.refined


def singular_pivot(size: int) -> float:
    """The pivot, relative to the largest, below which the factor of an equilibrated matrix of
    ``size`` unknowns is taken as singular: ``1000 sqrt(size) eps``. Elimination leaves a
    singular matrix a pivot at the rounding of its sums, some ``sqrt(size) eps`` (3 to 130 in
    the degenerate op-amp circuits found in testing); a well-posed op-amp stage with a gain of
    1e8 in the wide form keeps its smallest at 9,000 of them."""
    return 1000 * math.sqrt(size) * EPS


def _singular_pivots(lu: object) -> bool:
    """Whether the factor of an equilibrated matrix has a pivot below :func:`singular_pivot`."""
    pivots = np.abs(lu.U.diagonal())
    return bool(pivots.size) and bool(pivots.min() <= singular_pivot(pivots.size)
                                      * pivots.max())


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
