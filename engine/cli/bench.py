"""Engine benchmark: each figure is printed as a ratio against a floor measured in the same run.

``python3 -m engine.cli.bench`` (or ``portcut bench``) times, on generated circuits:

* ``equivalent()`` of an RC mesh region of 10,000 and 100,000 nets at 1 kHz, against the floor
  of SciPy's own work on the same system assembled here directly: one SuperLU factorization
  (same column ordering as the engine) and the two solves; target at most 1.3x. SuperLU with
  its default ordering on the same system is printed alongside, for context;
* a 1,000-point ``sweep()`` of a 50-net region, against one batched ``numpy.linalg.solve`` of
  the same dense stack; target at most 1.5x;
* ``equivalent()`` of a 200-part circuit of every part kind: median time, target under 2 ms;
  printed with its ratio to SciPy's own work on the same equations (the factorization and the
  plain and transposed solves), which shows how much of a slow run is the machine's.

Times are wall-clock (CPU time would count the BLAS threads' spinning); engine and floor run
alternately, each engine run followed by a floor run, and a ratio is the median over those pairs (a
shared machine's load drifts between pairs far more than within one); times printed are medians,
and the small circuit's figure is its median time. "first" clears the netlists the engine keeps
(engine.solve.topology.netlist_of), "after a value edit" changes one resistor first (as a live view
sees an edit), "again" re-analyses the same parts. Figures go to docs/performance.md.
"""

from __future__ import annotations

import argparse
import importlib
import math
import statistics
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from functools import partial

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu

from ..solve import topology
from ..solve.circuit import GROUND, Circuit
from ..solve.equivalent import equivalent, sweep
from ..solve.mna import ORDERING
from ..solve.topology import forget_netlists

#: The module (its name is shadowed by the function in the package), for its two sweep solvers.
_SOLVERS = importlib.import_module("..solve.equivalent", __package__)

__all__ = ["Row", "main", "mesh", "mixed_circuit", "run"]

FREQ = 1e3
R_MESH, C_MESH, R_SOURCE = 1e3, 1e-9, 50.0


def mesh(rows: int, cols: int) -> Circuit:
    """An RC mesh: rows x cols nets ``m<r>_<c>``, 1 kΩ between neighbours, 1 nF from each net to
    ground, and a 1 V source behind 50 Ω into the first corner. All of it is the region; the
    port is the far corner against ground. Each net's name is one string shared by the parts on
    it, as a schematic's connectivity gives it."""
    c = Circuit()
    net = [[f"m{r}_{k}" for k in range(cols)] for r in range(rows)]
    c.voltage_source("V1", "src", GROUND, 1.0)
    c.resistor("RS", "src", net[0][0], R_SOURCE)
    for r in range(rows):
        for k in range(cols):
            if k + 1 < cols:
                c.resistor(f"RH{r}_{k}", net[r][k], net[r][k + 1], R_MESH)
            if r + 1 < rows:
                c.resistor(f"RV{r}_{k}", net[r][k], net[r + 1][k], R_MESH)
            c.capacitor(f"C{r}_{k}", net[r][k], GROUND, C_MESH)
    return c


def _mesh_floor_system(rows: int, cols: int, freq: float) -> tuple[sp.csc_matrix, np.ndarray]:
    """The MNA matrix of :func:`mesh` built directly from the grid, and its two right-hand sides.

    Unknowns: the mesh nets in row-major order, the source net, the source's branch current.
    """
    n = rows * cols
    grid = np.arange(n).reshape(rows, cols)
    a = np.concatenate((grid[:, :-1].ravel(), grid[:-1, :].ravel()))
    b = np.concatenate((grid[:, 1:].ravel(), grid[1:, :].ravel()))
    g = np.full(a.size, 1 / R_MESH)
    src, branch = n, n + 1
    y_cap = np.full(n, 2j * math.pi * freq * C_MESH)
    gs = 1 / R_SOURCE
    rows_ = np.concatenate((a, b, a, b, grid.ravel(), [0, src, 0, src, src, branch]))
    cols_ = np.concatenate((a, b, b, a, grid.ravel(), [0, src, src, 0, branch, src]))
    vals = np.concatenate((g, g, -g, -g, y_cap, [gs, gs, -gs, -gs, 1, 1]))
    matrix = sp.csc_matrix((vals.astype(complex), (rows_, cols_)), shape=(n + 2, n + 2))
    rhs = np.zeros((n + 2, 2), dtype=complex)
    rhs[branch, 0] = 1.0
    rhs[n - 1, 1] = 1.0
    return matrix, rhs


def mixed_circuit(stages: int = 20) -> tuple[Circuit, set[str], tuple[str, str]]:
    """About ten parts per stage, every part kind: a chain of RLC sections with controlled
    sources, couplings and op-amp buffers; the region is all but a load at the far end."""
    c = Circuit()
    c.voltage_source("V1", "s0", GROUND, 1.0, phase_deg=15)
    for i in range(stages):
        a, m, b = f"s{i}", f"m{i}", f"s{i + 1}"
        c.resistor(f"RA{i}", a, m, 100 + i)
        c.inductor(f"LA{i}", m, b, 1e-3)
        c.capacitor(f"CA{i}", b, GROUND, 10e-9)
        c.resistor(f"RB{i}", b, GROUND, 10e3)
        c.inductor(f"LB{i}", f"t{i}", GROUND, 1e-3)
        c.coupling(f"K{i}", f"LA{i}", f"LB{i}", 0.5)
        c.resistor(f"RT{i}", f"t{i}", GROUND, 1e3)
        c.vccs(f"DG{i}", GROUND, f"t{i}", b, GROUND, 1e-4)
        c.impedance(f"Z{i}", m, GROUND, 1e3 + 200j)
        if i % 4 == 3:
            c.opamp(f"U{i}", b, f"o{i}", f"o{i}")
            c.resistor(f"RO{i}", f"o{i}", GROUND, 10e3)
            c.cccs(f"DF{i}", GROUND, b, f"RO{i}", 0.01)
        if i % 5 == 4:
            c.current_source(f"I{i}", GROUND, b, 1e-4)
            c.vcvs(f"DE{i}", f"e{i}", GROUND, b, GROUND, 0.5)
            c.ccvs(f"DH{i}", f"h{i}", GROUND, f"RT{i}", 10.0)
            c.resistor(f"RE{i}", f"e{i}", f"h{i}", 1e3)
    out = f"s{stages}"
    region = set(c.names)
    c.resistor("RLOAD", out, GROUND, 1e3)
    return c, region, (out, GROUND)


def _timed(fn: Callable[[], object], before: Callable[[], object] | None = None) -> float:
    if before is not None:
        before()
    start = time.perf_counter()
    fn()
    return time.perf_counter() - start


def _paired(engine: Callable[[], object], floor: Callable[[], object], repeat: int,
            before: Callable[[], object] | None = None) -> tuple[float, float, float]:
    """Median times of engine and floor, run alternately so that both see the same load, and
    the median of the ratios of each engine run to the floor run right after it (a shared
    machine's load drifts between pairs far more than within one)."""
    engine(), floor()  # warm imports and caches once
    pairs = [(_timed(engine, before), _timed(floor)) for _ in range(repeat)]
    return (statistics.median(e for e, _ in pairs), statistics.median(f for _, f in pairs),
            statistics.median(e / f for e, f in pairs))


@dataclass(frozen=True, slots=True)
class Row:
    """One benchmark line: engine time and floor time (s, medians), the median ratio of paired
    runs and the target."""

    case: str
    engine: float
    floor: float | None
    ratio: float | None
    target: float
    unit: str  # "x" (a ratio to the floor) or "ms" (an absolute time)
    reference: float | None = None  # SuperLU with its default column ordering, for context

    @property
    def figure(self) -> float:
        """What the target bounds: the ratio ("x") or the engine's time in ms ("ms")."""
        return self.ratio if self.unit == "x" and self.ratio is not None else self.engine * 1e3

    @property
    def met(self) -> bool:
        return self.figure <= self.target if self.unit == "x" else self.figure < self.target


def _three_ways(circuit: Circuit, region: set[str], port: tuple[str, str], resistor: str,
               floor: Callable[[], object], repeat: int, label: str, target: float, unit: str,
               reference: float | None = None) -> list[Row]:
    """The region's equivalent beside ``floor`` at its first analysis (nothing kept), after a
    value edit of ``resistor`` (as a live view sees one), and analysed again unchanged."""
    current = [circuit]

    def engine() -> None:
        equivalent(current[0], region, port, FREQ)

    def edit() -> None:
        c = current[0]
        current[0] = c.replaced([replace(c[resistor], value=c[resistor].value * 1.001)])

    timed = {"first": _paired(engine, floor, repeat, before=forget_netlists),
             "after a value edit": _paired(engine, floor, repeat, before=edit),
             "again": _paired(engine, floor, repeat)}
    return [Row(f"{label}, {case}", *figures, target, unit, reference)
            for case, figures in timed.items()]


def bench_mesh(nets: int, repeat: int) -> list[Row]:
    """The mesh three ways (:func:`_three_ways`) against SciPy on the same system; SuperLU's
    default ordering is timed alongside, for context."""
    side = round(math.sqrt(nets))
    circuit = mesh(side, side)
    matrix, rhs = _mesh_floor_system(side, side, FREQ)

    def floor() -> None:
        splu(matrix, permc_spec=ORDERING).solve(rhs)

    def default_floor() -> None:
        splu(matrix).solve(rhs)

    default = _paired(default_floor, floor, max(3, repeat // 2))[0]
    return _three_ways(circuit, set(circuit.names), (f"m{side - 1}_{side - 1}", GROUND),
                       "RH0_0", floor, repeat, f"equivalent(), RC mesh of {side * side:,} nets",
                       1.3, "x", default)


def bench_sweep(points: int, repeat: int) -> Row:
    circuit = mesh(5, 10)
    region = set(circuit.names)
    port = ("m4_9", GROUND)
    freqs = np.logspace(1, 7, points)
    at_one_hertz, rhs = _mesh_floor_system(5, 10, 1.0)
    g = _mesh_floor_system(5, 10, 0.0)[0].toarray()
    stack = g[None] + freqs[:, None, None] * (at_one_hertz.toarray() - g)[None]

    def floor() -> None:
        np.linalg.solve(stack, rhs)

    def engine() -> None:
        sweep(circuit, region, freqs, port)

    timed = _paired(engine, floor, repeat, before=forget_netlists)
    return Row(f"sweep(), {points:,} points of a 50-net region", *timed, 1.5, "x")


def bench_small(repeat: int) -> list[Row]:
    """The mixed circuit three ways (:func:`_three_ways`); the floor is SciPy's own work on
    the same equations (the engine's open-port matrix at the same frequency): one
    factorization and the solves, plain and transposed."""
    circuit, region, port = mixed_circuit()
    cut = topology.cut(circuit, region, port)
    system = _SOLVERS._port_of(cut, False).open(bool(cut.netlist.wide(np.array([FREQ]))[0]))
    matrix = system.matrix(FREQ).copy()
    both = np.column_stack((system.b, system.rhs(port[0]))).astype(complex)

    def floor() -> None:
        lu = splu(matrix, permc_spec=ORDERING)
        lu.solve(both)
        lu.solve(both[:, 1].copy(), trans="T")

    return _three_ways(circuit, region, port, "RB0", floor, repeat,
                       f"equivalent(), {len(circuit)} parts of every kind", 2.0, "ms")


def crossover(sizes: Sequence[int] = (10, 20, 40, 60, 80, 100, 120, 160, 200, 300),
              points: int = 200) -> list[tuple[int, float, float]]:
    """Per-point sweep time (s) of the batched dense and the per-frequency sparse solution,
    for RC meshes of about ``sizes`` unknowns (rows of 10 nets): where DENSE_SWEEP_LIMIT sits."""
    freqs = np.logspace(1, 7, points)
    table = []
    for size in sizes:
        cols = min(size, 10)
        rows = max(1, size // cols)
        circuit = mesh(rows, cols)
        cut = topology.cut(circuit, set(circuit.names), (f"m{rows - 1}_{cols - 1}", GROUND))
        system = _SOLVERS._port_of(cut, False).open(False)  # the mesh's span is narrow
        rhs = system.rhs(cut.port[0])
        k = int(system.unknown_of_net[cut.netlist.index[cut.port[0]]])
        dense, sparse = (min(_timed(partial(solve, system, freqs, rhs, k)) for _ in range(3))
                         for solve in (_SOLVERS._solve_dense, _SOLVERS._solve_sparse))
        table.append((system.size, dense / points, sparse / points))
    return table


def run(quick: bool = False) -> list[Row]:
    """All the benchmark rows (``quick``: skip the 100,000-net mesh, fewer repeats)."""
    rows = bench_mesh(10_000, 9 if quick else 15)
    if not quick:
        rows += bench_mesh(100_000, 5)
    rows.append(bench_sweep(1000, 9 if quick else 15))
    rows += bench_small(51 if quick else 201)
    return rows


def format_table(rows: Sequence[Row]) -> str:
    """The rows as a text table; the last column is SuperLU's default ordering, for context."""
    width = max(len(r.case) for r in rows)
    lines = [f"{'case':<{width}} {'engine':>10} {'floor':>10} {'ratio':>7} {'target':>8}  met"
             f"  {'default order':>13}", "-" * (width + 60)]
    for r in rows:
        floor = f"{r.floor * 1e3:8.2f} ms" if r.floor else f"{'-':>10}"
        ratio = f"{r.ratio:6.2f}x" if r.ratio is not None else f"{'-':>7}"
        target = f"<={r.target:.1f}x" if r.unit == "x" else f"<{r.target:.1f}ms"
        reference = f"{r.reference * 1e3:10.2f} ms" if r.reference else ""
        lines.append(f"{r.case:<{width}} {r.engine * 1e3:8.2f} ms {floor} {ratio} {target:>8}  "
                     f"{'yes' if r.met else 'NO ':<3}  {reference}")
    return "\n".join(lines)


def main(argv: Sequence[str] | None = None) -> int:
    """Run the benchmark and print the table; exit status 0 when every target is met."""
    parser = argparse.ArgumentParser(prog="portcut bench", description=__doc__.split("\n")[0])
    parser.add_argument("--quick", action="store_true",
                        help="skip the 100,000-net mesh and repeat less")
    parser.add_argument("--crossover", action="store_true",
                        help="instead, time dense batched against per-frequency sparse sweeps")
    args = parser.parse_args(argv)
    if args.crossover:
        print(f"{'unknowns':>8} {'dense us/pt':>12} {'sparse us/pt':>13}")
        for size, dense, sparse in crossover():
            print(f"{size:8d} {dense * 1e6:12.1f} {sparse * 1e6:13.1f}")
        return 0
    rows = run(quick=args.quick)
    print(format_table(rows))
    return 0 if all(r.met for r in rows) else 1


if __name__ == "__main__":
    raise SystemExit(main())
