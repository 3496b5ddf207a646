"""Executed instructions of one engine call on the 213-part circuit, which host load cannot move.

Run under callgrind, which starts with instrumentation off; the script switches it on for the
timed loop only, and callgrind's "Collected" total divided by N is the cost of one call:

    valgrind --tool=callgrind --instr-atstart=no --collect-atstart=no \\
        --toggle-collect=map_next --callgrind-out-file=/dev/null \\
        .venv/bin/python benchmarks/instructions.py first 30

Cases as in ``engine.cli.bench``: ``first`` (nothing kept), ``edit`` (after a value edit of one
resistor), ``again`` (the same parts). Without valgrind it simply runs the calls.
"""

from __future__ import annotations

import argparse
import os
import shutil
import subprocess
from dataclasses import replace

from portcut.engine.cli.bench import FREQ, mixed_circuit
from portcut.engine.solve.equivalent import equivalent
from portcut.engine.solve.topology import forget_netlists


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("case", choices=("first", "edit", "again"))
    parser.add_argument("count", type=int, nargs="?", default=30)
    args = parser.parse_args()
    circuit, region, port = mixed_circuit()
    edits = [circuit.replaced([replace(circuit["RB0"], value=1e4 * (1 + i * 1e-6))])
             for i in range(args.count + 3)]

    def one(_: int) -> None:
        if args.case == "first":
            forget_netlists()
        equivalent(edits.pop() if args.case == "edit" else circuit, region, port, FREQ)

    for i in range(3):  # warm: imports, first-call caches
        one(i)
    control = shutil.which("callgrind_control")
    if control:
        subprocess.run([control, "-i", "on", str(os.getpid())], capture_output=True, check=False)
    list(map(one, range(args.count)))  # callgrind collects inside map's calls only


if __name__ == "__main__":
    main()
