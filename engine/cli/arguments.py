"""The command line's arguments: each command's options and how each value is read, with a
parser that raises instead of exiting so that ``main`` returns every exit code."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from ..errors import CircuitError
from ..solve.units import parse_frequency

__all__ = ["COMMANDS", "COMMAND_SUMMARIES", "Exit", "Parser", "UsageError", "parser"]

#: Each headless command with its one-line summary, in the order help lists them.
COMMAND_SUMMARIES = {
    "reduce": "the equivalent of a region seen from its two port nets, at one frequency",
    "sweep": "the same over a log-spaced frequency range, as a table or a CSV file",
    "export": "the sheet as an SVG drawing (or PNG, where the window's libraries are installed)",
    "fit": "a measured source's Thevenin values fitted to bench readings in a CSV file",
    "bench": "the performance benchmark",
}
COMMANDS = frozenset(COMMAND_SUMMARIES)

_DESCRIPTION = "Portcut: Thevenin and Norton equivalents of a region of a schematic.\n\n" \
    "commands:\n" + "".join(f"  {n:<8} {s}\n" for n, s in COMMAND_SUMMARIES.items()) + """
Run "portcut COMMAND --help" for a command's options. Without FILE a command reads the
bundled demo sheet (and says so on stderr). Results go to stdout; status lines to stderr.
"""


class UsageError(Exception):
    """A mistake in the arguments: reported with the usage, exit code 2."""


class Parser(argparse.ArgumentParser):
    """argparse that raises instead of exiting, so main() returns every exit code."""

    def error(self, message: str) -> None:  # type: ignore[override]
        raise UsageError(f"{self.format_usage()}{self.prog}: {message}")

    def exit(self, status: int = 0, message: str | None = None) -> None:  # type: ignore[override]
        if message:
            sys.stderr.write(message)
        raise Exit(status)


class Exit(Exception):
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


def parser() -> tuple[Parser, dict[str, Parser]]:
    """The top parser and each command's parser (for usage messages that name the command)."""
    top = Parser(prog="portcut", description=_DESCRIPTION,
                  formatter_class=argparse.RawDescriptionHelpFormatter)
    commands = top.add_subparsers(dest="command", metavar="COMMAND", parser_class=Parser)
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
