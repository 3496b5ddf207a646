"""Two right-hand sides of one system solved at many frequencies, with an error bound on the
unknown read: one SuperLU factorization per frequency, or batched dense stacks for small systems."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from ...errors import SingularCircuitError
from .. import mna

__all__ = ["DENSE_SWEEP_LIMIT"]

#: Systems of at most this many unknowns are swept as one dense stack solved batched by NumPy;
#: larger ones are factorized per frequency with SuperLU (crossover measured, docs/method.md).
DENSE_SWEEP_LIMIT = 90
#: Bytes of dense matrices per batched solve: small enough to stay in cache (docs/method.md).
_CHUNK_BYTES = 1 << 20
_NAN = complex(math.nan, math.nan)


@dataclass(frozen=True, slots=True, eq=False)
class _Solved:
    """Two solutions at F frequencies, read at one unknown: ``x[:, 0]`` for the sources,
    ``x[:, 1]`` for the unit excitation; ``bound[:, j]`` is the error bound on ``x[:, j]``."""

    x: np.ndarray
    bound: np.ndarray
    ok: np.ndarray
    failure: SingularCircuitError | None


def _solve(system: mna.System, freqs: np.ndarray, rhs: np.ndarray, k: int) -> _Solved:
    if freqs.size > 1 and system.size <= DENSE_SWEEP_LIMIT and freqs[0] != 0:
        return _solve_dense(system, freqs, rhs, k)
    return _solve_sparse(system, freqs, rhs, k)


def _solve_sparse(system: mna.System, freqs: np.ndarray, rhs: np.ndarray, k: int) -> _Solved:
    """One SuperLU factorization per frequency, solving both right-hand sides."""
    x = np.full((freqs.size, 2), _NAN)
    bound = np.full((freqs.size, 2), math.inf)
    ok = np.zeros(freqs.size, dtype=bool)
    failure = None
    both = np.column_stack((system.b, rhs))
    for i, f in enumerate(freqs.tolist()):
        try:
            factor = mna.Factor(system, f)
            sol = factor.solve(both)
            adjoint = sol[:, 1] if system.symmetric else factor.solve(rhs, transposed=True)
        except SingularCircuitError as exc:
            failure = exc
            continue
        x[i] = sol[k]
        bound[i] = [factor.error_bound(sol[:, j], both[:, j], adjoint) for j in (0, 1)]
        ok[i] = True
    return _Solved(x, bound, ok, failure)


def _solve_dense(system: mna.System, freqs: np.ndarray, rhs: np.ndarray, k: int) -> _Solved:
    """All frequencies as dense stacks solved batched by NumPy, a cache-sized chunk per call."""
    n = system.size
    g, m = system.parts()
    m = m.tocoo()
    dense_g = g.toarray()
    both = np.column_stack((system.b, rhs)).astype(complex)
    s = 2j * np.pi * freqs
    x = np.empty((freqs.size, n, 2), dtype=complex)
    adjoint = None if system.symmetric else np.empty((freqs.size, n), dtype=complex)
    ok = np.ones(freqs.size, dtype=bool)
    step = max(1, _CHUNK_BYTES // (16 * n * n))
    for start in range(0, freqs.size, step):
        part = slice(start, start + step)
        stack = np.empty((s[part].size, n, n), dtype=complex)
        stack[:] = dense_g
        stack[:, m.row, m.col] += s[part, None] * m.data
        try:
            with np.errstate(all="ignore"):
                x[part] = _dense_solve(stack, both, system.refined)
                if adjoint is not None:
                    adjoint[part] = _dense_solve(stack.transpose(0, 2, 1), rhs[:, None],
                                                 system.refined)[..., 0]
        except np.linalg.LinAlgError:
            ok[part] = False
        if mna.reads_pivots(system):
            ok[part] &= ~_near_singular(stack)
    ok &= np.isfinite(x).all(axis=(1, 2))
    if adjoint is not None:
        ok &= np.isfinite(adjoint).all(axis=1)
    gamma = mna.rounding((g + m).tocsc())
    bound = np.empty((freqs.size, 2))
    for j, b in enumerate(both.T):
        col = x[:, :, j]
        with np.errstate(all="ignore"):
            residual = _residual(g, m, s, col, b, system.refined)
            abs_ax = (abs(g) @ np.abs(col).T).T + np.abs(s)[:, None] * (abs(m) @ np.abs(col).T).T
        bound[:, j] = mna.bound(x[:, :, 1] if adjoint is None else adjoint, residual, abs_ax, b,
                                gamma)
    solved = _Solved(x[:, k, :], np.where(ok[:, None], bound, math.inf), ok, None)
    if ok.all():
        return solved
    # A chunk with a singular matrix: those frequencies again, one factorization each
    redo = _solve_sparse(system, freqs[~ok], rhs, k)
    solved.x[~ok], solved.bound[~ok], solved.ok[~ok] = redo.x, redo.bound, redo.ok
    return _Solved(solved.x, solved.bound, solved.ok, redo.failure)


def _near_singular(stack: np.ndarray) -> np.ndarray:
    """Per matrix of ``stack``: True where, rows and then columns scaled to a largest entry of
    1, its singular values span so much that the sparse factorization's pivot test might find
    it singular; those frequencies are left to that test, so that a sweep decides as the
    single-frequency calls do. (A triangular factor's smallest pivot is at least its smallest
    singular value, and ``A = P L U`` with ``|L| <= 1`` gives ``sigma_min(A) <= n
    sigma_min(U)``; ``n`` more covers the growth of the largest pivot.)"""
    n = stack.shape[1]
    with np.errstate(all="ignore"):
        scaled = stack / np.abs(stack).max(axis=2, keepdims=True)
        scaled = scaled / np.abs(scaled).max(axis=1, keepdims=True)
    usable = np.isfinite(scaled).all(axis=(1, 2))  # an empty row or an overflow: not here
    near = ~usable
    if usable.any():
        values = np.linalg.svd(scaled[usable], compute_uv=False)
        near[usable] = values[:, -1] <= n * n * mna.singular_pivot(n) * values[:, 0]
    return near


def _residual(g: sp.spmatrix, m: sp.spmatrix, s: np.ndarray, x: np.ndarray, b: np.ndarray,
              precise: bool) -> np.ndarray:
    """``b - (G + s M) x`` per frequency (rows of ``x``); ``precise``: in extended precision,
    as :meth:`engine.solve.mna.Factor.error_bound` computes it for the wide form."""
    if not precise:
        return b - (g @ x.T).T - s[:, None] * (m @ x.T).T
    wide = np.clongdouble
    across = x.T.astype(wide)
    return (b[:, None].astype(wide) - g.astype(wide) @ across
            - s.astype(wide)[None, :] * (m.astype(wide) @ across)).T.astype(complex)


def _dense_solve(stack: np.ndarray, rhs: np.ndarray, refined: bool) -> np.ndarray:
    """``stack^{-1} rhs`` for a stack of matrices and one (n, k) right-hand side; refined by
    one step with the residual as :meth:`engine.solve.mna.Factor.solve` does."""
    x = np.linalg.solve(stack, rhs)
    if refined:
        x = x + np.linalg.solve(stack, rhs - stack @ x)
    return x
