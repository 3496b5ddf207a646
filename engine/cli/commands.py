"""The ``portcut`` command line: reduce, sweep and export documents without a window.

``main(argv)`` takes the arguments after the program name, the first being the command, and
returns the exit code: 0 on success, 1 for a circuit or file problem (one line on stderr, never a
traceback), 2 for a usage mistake. Without a FILE a command reads the bundled demo document.
Frequencies and values accept the engine's syntax: SI prefixes (``1k``, ``10 kHz``, ``2.2M``),
IEC 60062 codes (``4k7``) and ``DC``.
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from collections.abc import Callable, Mapping, Sequence
from pathlib import Path
from typing import TextIO

import numpy as np

from ..drawing.svg import document_svg
from ..errors import CircuitError
from ..schematic.atomic import write_atomically
from ..schematic.document import Document
from ..schematic.reduction import collapse_region
from ..solve import measured
from ..solve.circuit import Circuit
from ..solve.equivalent import Equivalent, sweep
from ..solve.mna import describe_freq
from ..solve.tables import sweep_csv
from ..solve.units import format_eng
from .arguments import COMMAND_SUMMARIES, COMMANDS, Exit, UsageError, parser
from .reduce import run_reduce
from .selection import Selection, caution, document, drawn_region, is_stdout, selection, solve

# The arguments are read in arguments.py, what to reduce is chosen in selection.py and reduce
# writes its results in reduce.py; sweep, export and fit are here with main.
__all__ = ["COMMANDS", "COMMAND_SUMMARIES", "Writer", "main"]

#: Writes a drawing's SVG text to a path in another format (``-`` is standard output).
Writer = Callable[[str, Path], None]

# -- sweep ---------------------------------------------------------------------------------------
def _frequencies(start: float, stop: float, points: int) -> np.ndarray:
    if not 0 < start < stop:
        raise UsageError(f"portcut sweep: --from must be above 0 and below --to, got "
                          f"{format_eng(start, 'Hz')} to {format_eng(stop, 'Hz')}")
    return np.geomspace(start, stop, points)


def _sweep_rows(doc: Document, sel: Selection, port: tuple[str, str] | None,
                freqs: np.ndarray) -> tuple[Circuit, list[Equivalent]]:
    """The circuit and the equivalents at every frequency, all for the port chosen at the
    first one. A document with collapsed blocks is rebuilt per frequency, since each block's
    values depend on it."""
    first = solve(doc, sel, port, float(freqs[0]))
    plus_minus = first.eq.port
    if doc.blocks():
        rest = [solve(doc, sel, plus_minus, float(f)).eq for f in freqs[1:]]
        return first.circuit, [first.eq, *rest]
    swept = sweep(first.circuit, first.names, freqs, port=plus_minus)
    return first.circuit, [swept[i] for i in range(len(swept))]


def _run_sweep(args: argparse.Namespace, out: TextIO) -> int:
    freqs = _frequencies(args.start, args.stop, args.points)
    doc = document(args.file)
    sel = selection(doc, args)
    circuit, rows = _sweep_rows(doc, sel, args.port, freqs)
    caution(circuit, rows, doc.analysis.basis, sys.stderr)
    port = rows[0].port
    if args.csv is not None:
        if is_stdout(args.csv):
            out.write(sweep_csv(rows))
            return 0
        write_atomically(args.csv, sweep_csv(rows))
        sys.stderr.write(f"wrote {len(rows)} frequencies for port ({port[0]}, {port[1]}) "
                         f"to {_path_text(args.csv)}\n")
        return 0
    out.write(f"{sel.label} seen from port ({port[0]}, {port[1]}), plus first\n\n")
    out.write(f"{'f':>10}  {'Voc':<22}  {'Isc':<22}  Z\n")
    for eq in rows:
        polar = eq.polar()
        out.write(f"{describe_freq(eq.freq):>10}  {polar.voc:<22}  {polar.isc:<22}  "
                  f"{eq.rectangular().z}\n")
    return 0


# -- export --------------------------------------------------------------------------------------
def _output_writer(path: Path, writers: Mapping[str, Writer]) -> Writer | None:
    """How ``path`` is written: None for SVG text, else a writer for its suffix."""
    suffix = path.suffix.lower()
    if is_stdout(path) or suffix == ".svg":
        return None
    if suffix in writers:
        return writers[suffix]
    formats = ", ".join([".svg", *sorted(writers)])
    raise UsageError(f"portcut export: -o {path}: cannot write {suffix or 'suffix-less'} "
                      f"files; give a file name ending in {formats} (or - for SVG on stdout)")


def _run_export(args: argparse.Namespace, out: TextIO,
                writers: Mapping[str, Writer]) -> int:
    if not args.reduced and (args.region is not None or args.form is not None):
        raise UsageError("portcut export: --region and --form go with --reduced")
    writer = _output_writer(args.output, writers)
    doc = document(args.file)
    if args.reduced:
        region = drawn_region(doc, args.region)
        collapse_region(doc, region.id, args.form).apply(doc)
    text = document_svg(doc, style=args.style, show_regions=args.regions, freq=args.freq)
    if writer is not None:
        writer(text, args.output)
    elif is_stdout(args.output):
        out.write(text)
        return 0
    else:
        write_atomically(args.output, text)
    sys.stderr.write(f"wrote {_path_text(args.output)}\n")
    return 0


def _run_fit(args: argparse.Namespace, out: TextIO) -> int:
    fit = measured.fit_table(measured.read_csv(args.csv), name=str(args.csv))
    if args.json:
        def number(x: float) -> float | None:
            return None if math.isnan(x) else x
        json.dump({"voc": fit.voc, "r": fit.r, "points": fit.points,
                   "residual": fit.residual, "u_voc": number(fit.u_voc),
                   "u_r": number(fit.u_r)}, out)
        out.write("\n")
        return 0
    for line in fit_lines(fit):
        out.write(line + "\n")
    return 0


def fit_lines(fit: measured.Fit) -> list[str]:
    """The fit as text lines: Voc and R with their standard uncertainties, the residual."""
    def pm(value: float, u: float, unit: str) -> str:
        shown = format_eng(value, unit, 5)
        return shown if math.isnan(u) else f"{shown} ± {format_eng(u, unit, 2)}"
    lines = [f"Voc = {pm(fit.voc, fit.u_voc, 'V')}", f"R   = {pm(fit.r, fit.u_r, 'Ω')}",
             f"from {fit.points} readings"]
    if fit.points > 2:
        lines.append(f"residual (rms) = {format_eng(fit.residual, 'V', 3)}")
    else:
        lines.append("two readings: an exact fit, no residual or uncertainty")
    return lines


_RUN = {"reduce": run_reduce, "sweep": _run_sweep, "fit": _run_fit}


def main(argv: Sequence[str], writers: Mapping[str, Writer] | None = None) -> int:
    """Run one command (``argv[0]``) with its arguments; returns the exit code. ``writers`` adds
    export formats by suffix (the window's libraries add PNG)."""
    argv = list(argv)
    if argv and argv[0] == "bench":
        from . import bench

        return bench.main(argv[1:])
    try:
        top, commands = parser()
        args, extra = top.parse_known_args(argv)
        if extra:
            commands[args.command].error(f"unrecognized arguments: {' '.join(extra)}")
        if args.command == "export":
            return _run_export(args, sys.stdout, writers or {})
        return _RUN[args.command](args, sys.stdout)
    except Exit as e:
        return e.status
    except UsageError as e:
        sys.stderr.write(f"{e}\n")
        return 2
    except (CircuitError, OSError) as e:
        command = argv[0] if argv else "portcut"
        sys.stderr.write(f"portcut {command}: {_one_line(e)}\n")
        return 1


def _path_text(path: Path) -> str:
    """A path as printable text: bytes of a name that are not UTF-8 (which Python holds as lone
    surrogates) shown as escapes, which every terminal encoding can print."""
    return str(path).encode("utf-8", "backslashreplace").decode("utf-8")


def _one_line(error: BaseException) -> str:
    if isinstance(error, OSError) and error.filename is not None:
        return f"{error.filename}: {error.strerror or error}"
    return " ".join(str(error).split())
