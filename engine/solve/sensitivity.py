"""Sensitivities of a region's port quantities to every part value, by the adjoint method.

With the port open the region's equations are ``A x = b``; ``voc`` is ``x[k]`` (k the port's
plus unknown, minus the reference) and ``z`` is ``x_e[k]`` with ``A x_e = e_k`` (1 A into plus,
sources zeroed). One transposed solve ``A^T lam = e_k`` on the factorization already made serves
both: for a part value p, ``d voc/dp = lam . (db/dp - dA/dp x)`` and ``dz/dp = -lam . dA/dp x_e``;
``isc = voc / z`` gives ``d isc/dp = (d voc/dp - isc dz/dp) / z``. ``dA/dp`` is each part's
own stamp differentiated in p (engine/solve/stamps.py, docs/method.md). The normalised sensitivity
``(p / X) dX/dp`` is the per-cent change of X per per-cent change of p. Units: dvoc V per unit
of p, disc A, dz Ω. The solutions and the adjoint, in the formulation the equivalent takes,
come from engine/solve/adjoint.py (batched over a sweep).
"""

from __future__ import annotations

import math
from collections.abc import Collection, Iterable, Sequence
from typing import NamedTuple

import numpy as np

from . import topology
from .adjoint import port_solution, port_stamps, port_sweep
from .circuit import Part
from .equivalent import _frequencies
from .stamps import PARAMETER_KINDS, ValueStamps
from .units import parse_frequency

__all__ = ["Sensitivity", "influence", "sensitivity", "sensitivity_sweep", "valued_parts"]

_NAN = complex(math.nan, math.nan)


class Sensitivity(NamedTuple):
    """Derivatives of the port quantities with respect to one part's value.

    ``value`` is the part's value p; ``dvoc``, ``disc``, ``dz`` are dX/dp (complex; nan where X
    does not exist); ``svoc``, ``sisc``, ``sz`` are (p / X) dX/dp (nan where X is 0). Over a
    sweep every figure is an array, one entry per frequency. (A named tuple: a region of many
    parts makes one per part, and a tuple is made several times faster than a frozen class.)
    """

    name: str
    kind: str
    value: complex
    dvoc: complex
    disc: complex
    dz: complex
    svoc: complex
    sisc: complex
    sz: complex


def influence(s: Sensitivity) -> float:
    """The larger of |svoc| and |sz| (largest over a sweep), nan ignored: a ranking key."""
    figures = np.abs(np.concatenate([np.ravel(s.svoc), np.ravel(s.sz)]))
    figures = figures[np.isfinite(figures)]
    return float(figures.max()) if figures.size else 0.0


def sensitivity(circuit, region: Collection[str], port: Sequence[str] | None = None,
                freq: float | str = 0.0) -> dict[str, Sensitivity]:
    """{part name: :class:`Sensitivity`} for every valued part of ``region`` at ``freq`` Hz.

    The port and region are checked as by :func:`engine.solve.equivalent`. Raises CircuitError
    where the region has no Thevenin form (the open-port equations the method differentiates).
    """
    f = parse_frequency(freq)
    cut = topology.cut(circuit, region, port)
    solved = port_solution(cut, f, "sensitivities")
    stamps = port_stamps(cut, solved.system, f == 0)
    eq = solved.eq
    columns = _figures(stamps, solved.lam[None], solved.x[None], *(
        np.array([v]) for v in (f, eq.voc, eq.isc, eq.z, eq.has_norton)))[..., 0]
    make = Sensitivity._make
    return {part.name: make((part.name, part.kind, *figures))
            for part, *figures in zip(stamps.parts, *(c.tolist() for c in columns),
                                      strict=True)}


def sensitivity_sweep(circuit, region: Collection[str], freqs: Iterable[float],
                      port: Sequence[str] | None = None) -> dict[str, Sensitivity]:
    """:func:`sensitivity` at every frequency of ``freqs``; each figure an array over them.

    The region is checked once, its open-port equations solved batched over the frequencies
    (engine/solve/adjoint.py) and each formulation's value stamps made once."""
    f = _frequencies(freqs)
    cut = topology.cut(circuit, region, port)
    columns, parts = None, ()
    for where, solved in port_sweep(cut, f, "sensitivities"):
        stamps = port_stamps(cut, solved.system, bool(solved.freqs[0] == 0))
        parts = stamps.parts
        if columns is None:
            columns = np.empty((7, len(parts), f.size), dtype=complex)
        columns[:, :, where] = _figures(stamps, solved.lam, solved.x, solved.freqs, solved.voc,
                                        solved.isc, solved.z, solved.norton)
    return {part.name: Sensitivity(part.name, part.kind, *columns[:, i])
            for i, part in enumerate(parts)}


def _figures(stamps: ValueStamps, lam: np.ndarray, x: np.ndarray, freqs: np.ndarray,
             voc: np.ndarray, isc: np.ndarray, z: np.ndarray, norton: np.ndarray) -> np.ndarray:
    """Per valued part and frequency, ``value, dvoc, disc, dz, svoc, sisc, sz`` (a (7, parts,
    F) complex array) from the open port's solutions ``x`` (F, n, 2), adjoints ``lam`` (F, n)
    and equivalent (``voc``, ``isc``, ``z``, ``norton``: (F,)) at ``freqs`` (F,) Hz: the
    stamps' derivatives gathered for all parts and frequencies at once."""
    d_a, d_b = stamps.derivative_terms(lam, x, 2j * math.pi * freqs)
    dvoc, dz = (d_b - d_a[..., 0]).T, -d_a[..., 1].T  # (parts, F)
    p = np.broadcast_to(stamps.values[:, None], dvoc.shape)
    with np.errstate(all="ignore"):
        disc = np.where(norton & (z != 0), (dvoc - isc * dz) / z, _NAN)
    return np.array([p, dvoc, disc, dz, _normalised(p, voc, dvoc), _normalised(p, isc, disc),
                     _normalised(p, z, dz)])


def valued_parts(cut: topology.Cut) -> list[Part]:
    """The region's parts with a value the port quantities depend on, in circuit order."""
    return [p for p in cut.parts if p.kind in PARAMETER_KINDS]


def _normalised(p: np.ndarray, x: np.ndarray, dx: np.ndarray) -> np.ndarray:
    """(p / x) dx, nan where x is 0 or not finite, or dx not finite (x: (F,), p and dx:
    (parts, F))."""
    with np.errstate(all="ignore"):
        out = p / x * dx
    return np.where((x == 0) | ~np.isfinite(x) | ~np.isfinite(dx), _NAN, out)
