"""Part tolerances and what they do to a region's port: worst case and Monte Carlo.

A tolerance t (a fraction: 0.01 for ±1 %) lets a part's value v range over v (1 + d), |d| <= t.
The figures followed are |Voc| (V), |Isc| (A), |Z| (Ω) and the angle of Z (degrees). Samples and
corners are solved batched: the region's open-port equations at the nominal values are made
dense once, each sample adds its value changes (engine/solve/stamps.py) and NumPy solves a stack of
them at a time. The methods and their limits: docs/method.md.
"""

from __future__ import annotations

import itertools
import math
import re
from collections.abc import Collection, Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from ..errors import CircuitError, ValueParseError
from . import topology
from .adjoint import port_solution, port_stamps
from .limits import board_yield
from .sensitivity import sensitivity, valued_parts
from .units import parse_frequency

__all__ = ["ALL_CORNERS_LIMIT", "FIGURES", "TOLERANCE_CODES", "MonteCarlo", "WorstCase",
           "format_tolerance", "monte_carlo", "parse_tolerance", "worst_case"]

#: IEC 60062 tolerance letters, as fractions.
TOLERANCE_CODES = {"B": 0.001, "C": 0.0025, "D": 0.005, "F": 0.01, "G": 0.02, "J": 0.05,
                   "K": 0.10, "M": 0.20}
#: The figures followed, with their units.
FIGURES = {"voc": "V", "isc": "A", "z": "Ω", "z_deg": "°"}
#: Up to this many toleranced parts every corner is tried; beyond, those the signs point to.
ALL_CORNERS_LIMIT = 12
#: Systems of at most this many unknowns are solved as dense stacks.
DENSE_LIMIT = 400
_CHUNK_BYTES = 1 << 22
_PERCENT = re.compile(r"^\s*±?\s*([0-9]*\.?[0-9]+(?:[eE][-+]?[0-9]+)?)\s*%?\s*$")


def parse_tolerance(text: str | float) -> float:
    """A tolerance as a fraction: an IEC 60062 letter (B C D F G J K M), or a percentage such
    as "1 %", "±0.5%" or "2" (per cent). A number is taken as a fraction already."""
    if isinstance(text, int | float) and not isinstance(text, bool):
        t = float(text)
    else:
        raw = str(text).strip()
        if raw.upper() in TOLERANCE_CODES and len(raw) == 1:
            return TOLERANCE_CODES[raw.upper()]
        found = _PERCENT.match(raw)
        if not found:
            letters = " ".join(TOLERANCE_CODES)
            raise ValueParseError(f"tolerance {raw!r} is neither a letter code ({letters}) nor "
                                  "a percentage such as 1 % or 0.5")
        t = float(found.group(1)) / 100
    if not (math.isfinite(t) and 0 <= t < 1):
        raise ValueParseError(f"tolerance {text!r} must be at least 0 and under 100 %")
    return t


def format_tolerance(t: float) -> str:
    """``"±1 %"``; the letter code follows where one matches (``"±1 % (F)"``)."""
    letter = next((k for k, v in TOLERANCE_CODES.items() if math.isclose(v, t)), None)
    text = f"±{t * 100:g} %"
    return f"{text} ({letter})" if letter else text


@dataclass(frozen=True, slots=True)
class WorstCase:
    """Extremes of each figure of FIGURES under the tolerances.

    ``nominal`` per figure; ``linear`` (low, high) the first-order bound from the sensitivities
    (valid for small tolerances; a magnitude's low end is never below 0); ``extremes`` (low,
    high) over the corners evaluated exactly;
    ``method`` says which corners: "all corners" (``corners`` of them) or "sensitivity signs"
    (the two corners each figure's sensitivity signs point to).
    """

    port: tuple[str, str]
    freq: float
    nominal: dict[str, float]
    linear: dict[str, tuple[float, float]]
    extremes: dict[str, tuple[float, float]]
    method: str
    corners: int


@dataclass(frozen=True, slots=True, eq=False)
class MonteCarlo:
    """``n`` random boards: ``samples`` per figure (arrays), their ``mean`` and ``std``
    (sample standard deviation); ``yield_pct`` the share within ``limits`` (None without
    limits). ``distribution`` "uniform" (within the tolerance) or "normal" (tolerance = 3 σ)."""

    port: tuple[str, str]
    freq: float
    n: int
    distribution: str
    seed: int
    samples: dict[str, np.ndarray]
    mean: dict[str, float]
    std: dict[str, float]
    limits: dict[str, tuple[float | None, float | None]]
    yield_pct: float | None


class _Batch:
    """The region's port figures at many sets of part values, solved as dense stacks."""

    def __init__(self, cut: topology.Cut, f: float, tolerances: Mapping[str, float]) -> None:
        solved = port_solution(cut, f, "tolerance figures")
        system, self.eq = solved.system, solved.eq
        if system.size > DENSE_LIMIT:
            raise CircuitError(f"tolerance analysis solves regions of up to {DENSE_LIMIT} "
                               f"unknowns; this one has {system.size}")
        self.stamps, self.s = port_stamps(cut, system, f == 0), 2j * math.pi * f
        names = [p.name for p in self.stamps.parts]
        self.columns = np.array([names.index(n) for n in tolerances], dtype=np.intp)
        self.size = system.size
        self.k = int(system.unknown_of_net[system.netlist.index[cut.port[0]]])
        self.a = system.matrix(f).toarray().astype(complex)
        self.rhs = np.column_stack((system.b, system.rhs(cut.port[0]))).astype(complex)

    def figures(self, deltas: np.ndarray) -> dict[str, np.ndarray]:
        """Per figure, its value at each row of ``deltas`` (relative changes of the
        toleranced parts, in ``tolerances`` order)."""
        n = self.size
        step = max(1, _CHUNK_BYTES // (16 * n * n))
        voc = np.empty(deltas.shape[0], dtype=complex)
        z = np.empty(deltas.shape[0], dtype=complex)
        for start in range(0, deltas.shape[0], step):
            part = deltas[start:start + step]
            values = np.repeat(self.stamps.values[None, :], part.shape[0], axis=0)
            values[:, self.columns] *= 1 + part
            da, db = self.stamps.changes(values, n, self.s)
            rhs = np.repeat(self.rhs[None], part.shape[0], axis=0)
            rhs[:, :, 0] += db
            try:
                x = np.linalg.solve(self.a + da, rhs)
            except np.linalg.LinAlgError:
                raise CircuitError("a combination of part values within the tolerances makes "
                                   "the region's equations singular") from None
            voc[start:start + step], z[start:start + step] = x[:, self.k, 0], x[:, self.k, 1]
        with np.errstate(all="ignore"):
            isc = voc / z
        return {"voc": np.abs(voc), "isc": np.abs(isc), "z": np.abs(z),
                "z_deg": np.degrees(np.angle(z))}


def _checked(cut: topology.Cut, tolerances: Mapping[str, float | str]) -> dict[str, float]:
    valued = {p.name for p in valued_parts(cut)}
    out = {}
    for name, t in tolerances.items():
        if name not in valued:
            raise CircuitError(f"{name} carries a tolerance but is not a valued part of the "
                               "region")
        out[name] = parse_tolerance(t)
    return {n: t for n, t in out.items() if t > 0}


def worst_case(circuit, region: Collection[str], tolerances: Mapping[str, float | str],
               port: Sequence[str] | None = None, freq: float | str = 0.0) -> WorstCase:
    """Worst case of the figures for parts of ``region`` within ``tolerances`` ({part name:
    tolerance}, as :func:`parse_tolerance` reads it)."""
    f = parse_frequency(freq)
    cut = topology.cut(circuit, region, port)
    tol = _checked(cut, tolerances)
    batch = _Batch(cut, f, tol)
    nominal = {k: float(v[0]) for k, v in batch.figures(np.zeros((1, len(tol)))).items()}
    slopes = _slopes(sensitivity(circuit, region, cut.port, f), tol, batch)
    t = np.array(list(tol.values()))
    linear = {}
    for k, s in slopes.items():
        spread = float(np.abs(s) @ t)
        low = nominal[k] - spread
        linear[k] = (max(low, 0.0) if k != "z_deg" else low, nominal[k] + spread)  # |X| >= 0
    if len(tol) <= ALL_CORNERS_LIMIT:
        signs = np.array(list(itertools.product((-1.0, 1.0), repeat=len(tol))))
        method = "all corners"
    else:
        signs = np.concatenate([np.sign(s) * d for s in slopes.values() for d in (-1, 1)])
        signs = signs.reshape(-1, len(tol))
        method = "sensitivity signs"
    got = batch.figures(signs * t)
    extremes = {k: (min(float(v.min()), nominal[k]), max(float(v.max()), nominal[k]))
                for k, v in got.items()}
    return WorstCase(cut.port, f, nominal, linear, extremes, method, signs.shape[0])


def _slopes(sens, tol: Mapping[str, float], batch: _Batch) -> dict[str, np.ndarray]:
    """Per figure, its derivative in each toleranced part's relative change d (p dF/dp)."""
    eq_voc, eq_z = batch.eq.voc, batch.eq.z
    out = {k: np.zeros(len(tol)) for k in FIGURES}
    for i, name in enumerate(tol):
        s = sens[name]
        dvoc, dz = s.value * s.dvoc, s.value * s.dz
        disc = (dvoc - eq_voc / eq_z * dz) / eq_z
        isc = eq_voc / eq_z
        out["voc"][i] = _magnitude_slope(eq_voc, dvoc)
        out["isc"][i] = _magnitude_slope(isc, disc)
        out["z"][i] = _magnitude_slope(eq_z, dz)
        out["z_deg"][i] = math.degrees((dz / eq_z).imag)
    return out


def _magnitude_slope(x: complex, dx: complex) -> float:
    """d|X| = Re(conj(X) dX) / |X|."""
    return (x.conjugate() * dx).real / abs(x) if x != 0 else abs(dx)


def monte_carlo(circuit, region: Collection[str], tolerances: Mapping[str, float | str],
                n: int = 10_000, distribution: str = "uniform", seed: int = 0,
                limits: Mapping[str, tuple[float | None, float | None]] | None = None,
                port: Sequence[str] | None = None, freq: float | str = 0.0) -> MonteCarlo:
    """``n`` random boards with each toleranced part drawn independently: "uniform" within
    ±t, or "normal" with σ = t / 3. ``limits`` {figure: (low, high)} (None: open) give the
    yield; ``seed`` makes a run repeat exactly."""
    if distribution not in ("uniform", "normal"):
        raise CircuitError(f"distribution must be 'uniform' or 'normal', not {distribution!r}")
    if not (isinstance(n, int) and n >= 2):
        raise CircuitError(f"Monte Carlo needs at least 2 samples, not {n!r}")
    limits = dict(limits or {})
    unknown = sorted(set(limits) - set(FIGURES))
    if unknown:
        raise CircuitError(f"no figure {unknown[0]!r} to limit; choose from {', '.join(FIGURES)}")
    f = parse_frequency(freq)
    cut = topology.cut(circuit, region, port)
    tol = _checked(cut, tolerances)
    t = np.array(list(tol.values()))
    rng = np.random.default_rng(seed)
    if distribution == "uniform":
        deltas = rng.uniform(-1.0, 1.0, size=(n, t.size)) * t
    else:
        deltas = rng.standard_normal(size=(n, t.size)) * (t / 3)
    samples = _Batch(cut, f, tol).figures(deltas)
    for a in samples.values():
        a.flags.writeable = False
    yield_pct = board_yield(samples, limits).overall if limits else None
    return MonteCarlo(cut.port, f, n, distribution, seed, samples,
                      {k: float(v.mean()) for k, v in samples.items()},
                      {k: float(v.std(ddof=1)) for k, v in samples.items()}, limits, yield_pct)

