"""The ``portcut`` command line: reduce, sweep and export documents without a window.

``main(argv)`` takes the arguments after the program name, the first being the command, and
returns the exit code: 0 on success, 1 for a circuit or file problem (one line on stderr, never a
traceback), 2 for a usage mistake. Without a FILE a command reads the bundled demo document.
Frequencies and values accept the engine's syntax: SI prefixes (``1k``, ``10 kHz``, ``2.2M``),
IEC 60062 codes (``4k7``) and ``DC``.
"""

from __future__ import annotations

import argparse
import cmath
import json
import math
import sys
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any, TextIO

import numpy as np

from portcut import assets

from ..drawing.svg import document_svg
from ..errors import CircuitError
from ..schematic.atomic import write_atomically
from ..schematic.captions import SAFETY_CAUTION, above_extra_low_voltage
from ..schematic.connectivity import build_circuit
from ..schematic.document import Document
from ..schematic.fileformat import load
from ..schematic.model import Region
from ..schematic.reduction import collapse_region, region_part_names, swapped
from ..schematic.wording import forms_text, power_text, realisation_text
from ..solve import measured
from ..solve.circuit import Circuit
from ..solve.equivalent import Equivalent, equivalent, sweep
from ..solve.mna import describe_freq
from ..solve.sensitivity import Sensitivity, influence, sensitivity
from ..solve.tables import sweep_csv
from ..solve.units import denoised, format_complex, format_eng, parse_frequency

__all__ = ["COMMANDS", "COMMAND_SUMMARIES", "Writer", "main"]

#: Each headless command with its one-line summary, in the order help lists them.
COMMAND_SUMMARIES = {
    "reduce": "the equivalent of a region seen from its two port nets, at one frequency",
    "sweep": "the same over a log-spaced frequency range, as a table or a CSV file",
    "export": "the sheet as an SVG drawing (or PNG, where the window's libraries are installed)",
    "fit": "a measured source's Thevenin values fitted to bench readings in a CSV file",
    "bench": "the performance benchmark",
}
COMMANDS = frozenset(COMMAND_SUMMARIES)

#: Writes a drawing's SVG text to a path in another format (``-`` is standard output).
Writer = Callable[[str, Path], None]

_DESCRIPTION = "Portcut: Thevenin and Norton equivalents of a region of a schematic.\n\n" \
    "commands:\n" + "".join(f"  {n:<8} {s}\n" for n, s in COMMAND_SUMMARIES.items()) + """
Run "portcut COMMAND --help" for a command's options. Without FILE a command reads the
bundled demo sheet (and says so on stderr). Results go to stdout; status lines to stderr.
"""


class _UsageError(Exception):
    """A mistake in the arguments: reported with the usage, exit code 2."""


class _Parser(argparse.ArgumentParser):
    """argparse that raises instead of exiting, so main() returns every exit code."""

    def error(self, message: str) -> None:  # type: ignore[override]
        raise _UsageError(f"{self.format_usage()}{self.prog}: {message}")

    def exit(self, status: int = 0, message: str | None = None) -> None:  # type: ignore[override]
        if message:
            sys.stderr.write(message)
        raise _Exit(status)


class _Exit(Exception):
    def __init__(self, status: int) -> None:
        self.status = status


# -- arguments -----------------------------------------------------------------------------------
def _frequency(text: str) -> float:
    try:
        return parse_frequency(text)
    except CircuitError as e:
        raise argparse.ArgumentTypeError(str(e)) from None


def _names(text: str) -> list[str]:
    names = [n.strip() for n in text.split(",")]
    if not all(names):
        raise argparse.ArgumentTypeError(f"{text!r}: give names separated by commas, e.g. R1,R2")
    return names


def _port(text: str) -> tuple[str, str]:
    names = _names(text)
    if len(names) != 2 or names[0] == names[1]:
        raise argparse.ArgumentTypeError(f"{text!r}: give two different nets, plus first, "
                                         "e.g. out,0")
    return names[0], names[1]


def _count(text: str) -> int:
    try:
        n = int(text)
    except ValueError:
        n = 0
    if n < 2:
        raise argparse.ArgumentTypeError(f"{text!r}: give a whole number of points, 2 or more")
    return n


def _add_file(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", nargs="?", metavar="FILE", type=Path,
                   help="a Portcut document (.json); default: the bundled demo")


def _add_selection(p: argparse.ArgumentParser) -> None:
    which = p.add_mutually_exclusive_group()
    which.add_argument("--region", metavar="NAME",
                       help="the region of the document to reduce (default: its only region)")
    which.add_argument("--parts", metavar="R1,R2,...", type=_names,
                       help="reduce these parts (designators) instead of a drawn region")
    p.add_argument("--port", metavar="NET,NET", type=_port,
                   help="the port nets, plus first (default: the port chosen for the region, "
                        "else the two nets where it meets the rest, ground as minus)")


def _parser() -> tuple[_Parser, dict[str, _Parser]]:
    """The top parser and each command's parser (for usage messages that name the command)."""
    top = _Parser(prog="portcut", description=_DESCRIPTION,
                  formatter_class=argparse.RawDescriptionHelpFormatter)
    commands = top.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    commands.required = True

    reducing = commands.add_parser("reduce", help="equivalent at one frequency",
                                   description="Print the Thevenin and Norton equivalent of a "
                                               "region at one frequency.")
    _add_file(reducing)
    _add_selection(reducing)
    reducing.add_argument("--freq", metavar="VALUE", type=_frequency,
                          help="analysis frequency in hertz, e.g. 1k or DC "
                               "(default: the document's)")
    reducing.add_argument("--form", choices=("thevenin", "norton"),
                          help="the form to list first (default: the document's)")
    reducing.add_argument("--json", action="store_true",
                          help="print one JSON object instead of the table")
    reducing.add_argument("--sensitivity", action="store_true",
                          help="also list how much each part's value moves Voc, Isc and Z")

    sweeping = commands.add_parser("sweep", help="equivalent over a frequency range",
                                   description="Evaluate the equivalent of a region at "
                                               "log-spaced frequencies.")
    _add_file(sweeping)
    _add_selection(sweeping)
    sweeping.add_argument("--from", dest="start", metavar="F1", type=_frequency, required=True,
                          help="first frequency, above 0, e.g. 10")
    sweeping.add_argument("--to", dest="stop", metavar="F2", type=_frequency, required=True,
                          help="last frequency, e.g. 100k")
    sweeping.add_argument("--points", metavar="N", type=_count, default=31,
                          help="number of frequencies, log-spaced, both ends included "
                               "(default 31)")
    sweeping.add_argument("--csv", metavar="OUT", type=Path,
                          help="write a CSV file instead of printing a table; - for stdout")

    exporting = commands.add_parser("export", help="SVG drawing of the document",
                                    description="Write the document as an SVG 1.1 drawing, or "
                                                "as a PNG image where the window's libraries "
                                                "are installed.")
    _add_file(exporting)
    exporting.add_argument("-o", "--output", metavar="OUT.svg", type=Path, required=True,
                           help="the file to write: .svg, or .png; - writes SVG to stdout")
    exporting.add_argument("--style", choices=("iec", "ieee"), default="iec",
                           help="symbol style: IEC 60617 (default) or IEEE 315")
    exporting.add_argument("--no-regions", dest="regions", action="store_false",
                           help="leave region outlines out")
    exporting.add_argument("--freq", metavar="VALUE", type=_frequency,
                           help="frequency at which collapsed blocks are evaluated "
                                "(default: the document's)")
    exporting.add_argument("--reduced", action="store_true",
                           help="draw the region collapsed into its equivalent block (the "
                                "document file is not changed)")
    exporting.add_argument("--region", metavar="NAME",
                           help="with --reduced: the region to collapse (default: the "
                                "document's only region)")
    exporting.add_argument("--form", choices=("thevenin", "norton"),
                           help="with --reduced: the block's form (default: the document's)")

    fitting = commands.add_parser("fit", help="Thevenin values of a source from measurements",
                                  description="Fit Voc and R of a measured source to (load "
                                              "ohms, volts) readings in a CSV file by least "
                                              "squares; a load of inf or open is an "
                                              "open-circuit reading.")
    fitting.add_argument("csv", metavar="CSV", type=Path,
                         help="two columns: load in ohms, voltage in volts (a header line "
                              "is skipped)")
    fitting.add_argument("--json", action="store_true",
                         help="print one JSON object instead of the table")

    commands.add_parser("bench", help="performance benchmark", add_help=False)
    return top, {"reduce": reducing, "sweep": sweeping, "export": exporting, "fit": fitting}


# -- selecting what to reduce --------------------------------------------------------------------
@dataclass(frozen=True)
class _Selection:
    """What a reduce or sweep works on: a drawn region, or a scratch one holding --parts."""

    region: Region
    label: str  # "region 'src'" or "parts R1, R2", for messages and headings
    drawn: bool


def _document(path: Path | None) -> Document:
    if path is not None:
        return load(path)
    demo = assets.example_path()
    sys.stderr.write(f"portcut: no FILE given, so this is the bundled demo ({demo.name})\n")
    return load(demo)


def _is_stdout(path: Path) -> bool:
    return str(path) == "-"


def _drawn_region(doc: Document, name: str | None) -> Region:
    """The region called ``name``, or the document's only region when no name is given."""
    regions = doc.regions()
    known = ", ".join(sorted(r.name for r in regions))
    if name is not None:
        chosen = [r for r in regions if r.name == name]
        if not chosen:
            raise CircuitError(f"--region: no region named {name!r}; the document has: "
                               f"{known or 'none'}")
        return chosen[0]
    if len(regions) == 1:
        return regions[0]
    if not regions:
        raise CircuitError("the document has no region; draw one, or name the parts with "
                           "--parts R1,R2")
    raise CircuitError(f"the document has several regions ({known}); choose one with "
                       "--region NAME")


def _selection(doc: Document, args: argparse.Namespace) -> _Selection:
    if not args.parts:
        region = _drawn_region(doc, args.region)
        return _Selection(region, f"region {region.name!r}", True)
    ids = []
    for designator in args.parts:
        element = doc.by_designator(designator)
        if element is None:
            raise CircuitError(f"--parts: there is no part {designator!r} in the document")
        ids.append(element.id)
    scratch = Region(id="--parts", name="", members=frozenset(ids))
    return _Selection(scratch, f"parts {', '.join(args.parts)}", False)


@dataclass(frozen=True)
class _Solved:
    """One reduction: the equivalent, the circuit part names reduced and the whole circuit."""

    eq: Equivalent
    names: frozenset[str]
    circuit: Circuit


def _solve(doc: Document, sel: _Selection, port: tuple[str, str] | None,
           freq: float) -> _Solved:
    """The equivalent at ``freq`` hertz. Without a ``port`` the region's chosen port is taken,
    and failing that the cut chooses it, exchanged where the region says so."""
    circuit = build_circuit(doc, freq=freq)
    names = region_part_names(doc, sel.region, circuit)
    if not names:
        raise CircuitError(f"{sel.label}: holds no parts to reduce")
    port = port or sel.region.port
    eq = equivalent(circuit, region=set(names), port=port, freq=freq)
    return _Solved(swapped(eq) if port is None and sel.region.swap else eq, names, circuit)


def _caution(circuit: Circuit, eqs: Sequence[Equivalent], basis: str, err: TextIO) -> None:
    """The safety note, once, where a source or the port voltage exceeds extra-low voltage."""
    sources = [p.value for p in circuit if p.kind == "voltage_source"]
    if any(above_extra_low_voltage([*sources, eq.voc], eq.freq, basis) for eq in eqs):
        err.write(f"{SAFETY_CAUTION}\n")


# -- reduce --------------------------------------------------------------------------------------
def _json_complex(z: complex) -> dict[str, float] | None:
    z = denoised(z)  # full precision, but no rounding noise and never -0.0
    return {"re": z.real, "im": z.imag} if cmath.isfinite(z) else None


def _reduce_json(eq: Equivalent, sel: _Selection, names: frozenset[str]) -> dict[str, Any]:
    """The stable --json object: port [plus, minus]; freq_hz; voc, isc, z as {"re", "im"} in
    volts, amperes and ohms, each null where it is undefined or infinite (no Thevenin form: z
    and voc are null; no Norton form: isc is null); has_thevenin, has_norton; region (its name,
    or null for --parts) and parts (the circuit part names reduced, sorted)."""
    return {
        "port": list(eq.port),
        "freq_hz": eq.freq,
        "voc": _json_complex(eq.voc) if eq.has_thevenin else None,
        "isc": _json_complex(eq.isc) if eq.has_norton else None,
        "z": _json_complex(eq.z) if eq.has_thevenin else None,
        "has_thevenin": bool(eq.has_thevenin),
        "has_norton": bool(eq.has_norton),
        "region": sel.region.name if sel.drawn else None,
        "parts": sorted(names),
    }


def _reduce_table(eq: Equivalent, sel: _Selection, form: str, basis: str) -> str:
    rect, polar = eq.rectangular(), eq.polar()
    at = describe_freq(eq.freq)
    out = [f"{sel.label} seen from port ({eq.port[0]}, {eq.port[1]}), plus first, at {at}", "",
           f"  {'':4} {'rectangular':<28} polar"]
    for name, defined, r, p in (("Voc", eq.has_thevenin, rect.voc, polar.voc),
                                ("Isc", eq.has_norton, rect.isc, polar.isc),
                                ("Z", True, rect.z, polar.z)):
        out.append(f"  {name:4} {r:<28} {p}" if defined else f"  {name:4} undefined")
    out.append("")
    out.extend(forms_text(eq, form))
    out.extend((realisation_text(eq), power_text(eq, basis)))
    return "\n".join(out)


_UNIT = {"resistor": "Ω", "impedance": "Ω", "capacitor": "F", "inductor": "H",
         "voltage_source": "V", "current_source": "A", "vccs": "S", "ccvs": "Ω"}
_FIGURES = ("value", "dvoc", "disc", "dz", "svoc", "sisc", "sz")


def _sensitivity_json(table: dict[str, Sensitivity]) -> dict[str, dict[str, Any]]:
    """Per part: its value and the seven figures of :class:`engine.Sensitivity` as
    {"re", "im"} (null where undefined): dX/dp in V, A or Ω per unit of the value, and the
    normalised (p / X) dX/dp."""
    return {name: {"kind": s.kind, **{k: _json_complex(getattr(s, k)) for k in _FIGURES}}
            for name, s in sorted(table.items())}


def _ratio_text(x: complex) -> str:
    """A normalised sensitivity: real where its imaginary part is rounding, else a + j b."""
    if cmath.isnan(x):
        return "-"
    if abs(x.imag) <= 1e-9 * abs(x):
        return f"{x.real:+.4f}"
    return f"{x.real:+.3f}{x.imag:+.3f}j"


def _sensitivity_table(table: dict[str, Sensitivity]) -> str:
    """The parts by influence, most first, with the % change of each figure per % of the part."""
    out = ["", "Sensitivity: % change of each figure per % change of the part, most "
           "influential first", f"  {'Part':8} {'Value':>14} {'Voc':>16} {'Isc':>16} {'Z':>16}"]
    for s in sorted(table.values(), key=lambda s: (-influence(s), s.name)):
        unit = _UNIT.get(s.kind, "")
        value = format_complex(s.value, unit) if s.value.imag else format_eng(s.value.real, unit,
                                                                              4)
        out.append(f"  {s.name:8} {value:>14} {_ratio_text(s.svoc):>16} "
                   f"{_ratio_text(s.sisc):>16} {_ratio_text(s.sz):>16}")
    return "\n".join(out)


def _run_reduce(args: argparse.Namespace, out: TextIO) -> int:
    doc = _document(args.file)
    freq = parse_frequency(doc.analysis.freq) if args.freq is None else args.freq
    sel = _selection(doc, args)
    solved = _solve(doc, sel, args.port, freq)
    table = sensitivity(solved.circuit, solved.names, solved.eq.port, freq) \
        if args.sensitivity else None
    if args.json:
        data = _reduce_json(solved.eq, sel, solved.names)
        if table is not None:
            data["sensitivity"] = _sensitivity_json(table)
        out.write(json.dumps(data, ensure_ascii=False) + "\n")
    else:
        form = args.form or doc.analysis.form
        out.write(_reduce_table(solved.eq, sel, form, doc.analysis.basis) + "\n")
        if table is not None:
            out.write(_sensitivity_table(table) + "\n")
    _caution(solved.circuit, [solved.eq], doc.analysis.basis, sys.stderr)
    return 0


# -- sweep ---------------------------------------------------------------------------------------
def _frequencies(start: float, stop: float, points: int) -> np.ndarray:
    if not 0 < start < stop:
        raise _UsageError(f"portcut sweep: --from must be above 0 and below --to, got "
                          f"{format_eng(start, 'Hz')} to {format_eng(stop, 'Hz')}")
    return np.geomspace(start, stop, points)


def _sweep_rows(doc: Document, sel: _Selection, port: tuple[str, str] | None,
                freqs: np.ndarray) -> tuple[Circuit, list[Equivalent]]:
    """The circuit and the equivalents at every frequency, all for the port chosen at the
    first one. A document with collapsed blocks is rebuilt per frequency, since each block's
    values depend on it."""
    first = _solve(doc, sel, port, float(freqs[0]))
    plus_minus = first.eq.port
    if doc.blocks():
        rest = [_solve(doc, sel, plus_minus, float(f)).eq for f in freqs[1:]]
        return first.circuit, [first.eq, *rest]
    swept = sweep(first.circuit, first.names, freqs, port=plus_minus)
    return first.circuit, [swept[i] for i in range(len(swept))]


def _run_sweep(args: argparse.Namespace, out: TextIO) -> int:
    freqs = _frequencies(args.start, args.stop, args.points)
    doc = _document(args.file)
    sel = _selection(doc, args)
    circuit, rows = _sweep_rows(doc, sel, args.port, freqs)
    _caution(circuit, rows, doc.analysis.basis, sys.stderr)
    port = rows[0].port
    if args.csv is not None:
        if _is_stdout(args.csv):
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
    if _is_stdout(path) or suffix == ".svg":
        return None
    if suffix in writers:
        return writers[suffix]
    formats = ", ".join([".svg", *sorted(writers)])
    raise _UsageError(f"portcut export: -o {path}: cannot write {suffix or 'suffix-less'} "
                      f"files; give a file name ending in {formats} (or - for SVG on stdout)")


def _run_export(args: argparse.Namespace, out: TextIO,
                writers: Mapping[str, Writer]) -> int:
    if not args.reduced and (args.region is not None or args.form is not None):
        raise _UsageError("portcut export: --region and --form go with --reduced")
    writer = _output_writer(args.output, writers)
    doc = _document(args.file)
    if args.reduced:
        region = _drawn_region(doc, args.region)
        collapse_region(doc, region.id, args.form).apply(doc)
    text = document_svg(doc, style=args.style, show_regions=args.regions, freq=args.freq)
    if writer is not None:
        writer(text, args.output)
    elif _is_stdout(args.output):
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


_RUN = {"reduce": _run_reduce, "sweep": _run_sweep, "fit": _run_fit}


def main(argv: Sequence[str], writers: Mapping[str, Writer] | None = None) -> int:
    """Run one command (``argv[0]``) with its arguments; returns the exit code. ``writers`` adds
    export formats by suffix (the window's libraries add PNG)."""
    argv = list(argv)
    if argv and argv[0] == "bench":
        from . import bench

        return bench.main(argv[1:])
    try:
        top, commands = _parser()
        args, extra = top.parse_known_args(argv)
        if extra:
            commands[args.command].error(f"unrecognized arguments: {' '.join(extra)}")
        if args.command == "export":
            return _run_export(args, sys.stdout, writers or {})
        return _RUN[args.command](args, sys.stdout)
    except _Exit as e:
        return e.status
    except _UsageError as e:
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
