"""Design-insight benchmark: Monte Carlo and all sensitivities, each against a floor measured in
the same run on the same machine.

* Monte Carlo: 10,000 boards of a 30-part region (an RC ladder of 14 cells fed by a source, every
  part toleranced) at 1 kHz, against NumPy's batched solve of the same 10,000 dense systems made
  beforehand (the work no method can skip). Target: under 1 s.
* Sensitivities: every part's d/dp of a 500-part region (an RC ladder of 250 cells at 1 kHz),
  against one engine.equivalent() of it. Target: within 3x.
* The sweep view's curves: every part's sensitivities, and the noise densities, of the 30-part
  region at 200 log-spaced frequencies (10 Hz to 1 MHz), each against engine.sweep() of the same
  points. Target: within 5x (the sweep view redraws both beside the equivalent's own sweep).

Times are CPU time of this process (medians of N runs). Run from the repository root:
``python3 benchmarks/insight.py [--repeat N]``.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import numpy as np

from portcut.engine import (
    GROUND,
    Circuit,
    equivalent,
    monte_carlo,
    noise_sweep,
    sensitivity,
    sensitivity_sweep,
    sweep,
)
from portcut.engine.solve import tolerance, topology
from portcut.engine.solve.topology import forget_netlists

SAMPLES = 10_000


def ladder(cells: int) -> tuple[Circuit, set[str]]:
    """A 1 V source, then ``cells`` of a series resistor and a shunt capacitor, and a load."""
    c = Circuit()
    c.voltage_source("V1", "n0", GROUND, 1)
    for i in range(cells):
        c.resistor(f"R{i + 1}", f"n{i}", f"n{i + 1}", 1e3 * (1 + i % 7))
        c.capacitor(f"C{i + 1}", f"n{i + 1}", GROUND, 1e-8 * (1 + i % 5))
    c.resistor("RL", f"n{cells}", GROUND, "10k")
    return c, {p.name for p in c} - {"RL"}


def _median(fn, repeat: int) -> float:
    """The median CPU time of ``fn`` (this process, all its threads) over ``repeat`` runs, each
    from a cold netlist cache: on a shared machine other work stretches wall-clock times by
    several times and unevenly, CPU time far less."""
    times = []
    for _ in range(repeat):
        forget_netlists()
        start = time.process_time()
        fn()
        times.append(time.process_time() - start)
    return statistics.median(times)


def thirty_parts() -> tuple[Circuit, set[str]]:
    """The ladder of 14 cells with a 47 kΩ shunt at its end: 30 parts in the region."""
    c, region = ladder(14)
    c.resistor("RS", "n14", GROUND, "47k")
    return c, region | {"RS"}


def bench_monte_carlo(repeat: int) -> tuple[float, float]:
    c, region = thirty_parts()
    tol = dict.fromkeys(sorted(region), 0.05)
    # the floor: the very systems the run solves, made beforehand, solved in one batched call
    cut = topology.cut(c, region)
    batch = tolerance._Batch(cut, 1e3, tol)
    deltas = np.random.default_rng(0).uniform(-0.05, 0.05, (SAMPLES, len(tol)))
    values = np.repeat(batch.stamps.values[None, :], SAMPLES, axis=0)
    values[:, batch.columns] *= 1 + deltas
    da, db = batch.stamps.changes(values, batch.size, batch.s)
    stack = batch.a + da
    rhs = np.repeat(batch.rhs[None], SAMPLES, axis=0)
    rhs[:, :, 0] += db
    engine = _median(lambda: monte_carlo(c, region, tol, n=SAMPLES, freq=1e3), repeat)
    floor = _median(lambda: np.linalg.solve(stack, rhs), repeat)
    return engine, floor


def bench_sensitivities(repeat: int) -> tuple[float, float]:
    c, region = ladder(250)
    port = ("n250", GROUND)
    engine = _median(lambda: sensitivity(c, region, port, 1e3), repeat)
    floor = _median(lambda: equivalent(c, region, port, 1e3), repeat)
    return engine, floor


def bench_sweeps(repeat: int) -> tuple[float, float, float]:
    c, region = thirty_parts()
    freqs = np.geomspace(10, 1e6, 200)
    floor = _median(lambda: sweep(c, region, freqs), repeat)
    sens = _median(lambda: sensitivity_sweep(c, region, freqs), repeat)
    noisy = _median(lambda: noise_sweep(c, region, freqs), repeat)
    return sens, noisy, floor


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args(argv)
    mc, mc_floor = bench_monte_carlo(args.repeat)
    s, s_floor = bench_sensitivities(args.repeat)
    ss, ns, sweep_floor = bench_sweeps(args.repeat)
    print(f"{'figure':44} {'engine':>10} {'floor':>10} {'ratio':>7} target")
    print(f"{'Monte Carlo, 10,000 boards of 30 parts':44} {mc * 1e3:8.1f} ms "
          f"{mc_floor * 1e3:7.1f} ms {mc / mc_floor:7.2f} under 1 s: "
          f"{'met' if mc < 1 else 'missed'}")
    print(f"{'all sensitivities, 500 parts':44} {s * 1e3:8.1f} ms {s_floor * 1e3:7.1f} ms "
          f"{s / s_floor:7.2f} within 3x: {'met' if s / s_floor <= 3 else 'missed'}")
    for label, t in (("sensitivities over 200 points, 30 parts", ss),
                     ("noise densities over 200 points, 30 parts", ns)):
        print(f"{label:44} {t * 1e3:8.1f} ms {sweep_floor * 1e3:7.1f} ms "
              f"{t / sweep_floor:7.2f} within 5x: {'met' if t / sweep_floor <= 5 else 'missed'}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
