"""What a reduce or sweep works on (a drawn region, or the parts named with --parts) and its
equivalent, with the safety note where a voltage exceeds extra-low voltage."""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TextIO

from portcut import assets

from ..errors import CircuitError
from ..schematic.captions import SAFETY_CAUTION, above_extra_low_voltage
from ..schematic.connectivity import build_circuit
from ..schematic.document import Document
from ..schematic.fileformat import load
from ..schematic.model import Region
from ..schematic.reduction import region_part_names, swapped
from ..solve.circuit import Circuit
from ..solve.equivalent import Equivalent, equivalent

__all__ = ["Selection", "Solved", "caution", "document", "drawn_region", "is_stdout",
           "selection", "solve"]


@dataclass(frozen=True)
class Selection:
    """What a reduce or sweep works on: a drawn region, or a scratch one holding --parts."""

    region: Region
    label: str  # "region 'src'" or "parts R1, R2", for messages and headings
    drawn: bool


def document(path: Path | None) -> Document:
    if path is not None:
        return load(path)
    demo = assets.example_path()
    sys.stderr.write(f"portcut: no FILE given, so this is the bundled demo ({demo.name})\n")
    return load(demo)


def is_stdout(path: Path) -> bool:
    return str(path) == "-"


def drawn_region(doc: Document, name: str | None) -> Region:
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


def selection(doc: Document, args: argparse.Namespace) -> Selection:
    if not args.parts:
        region = drawn_region(doc, args.region)
        return Selection(region, f"region {region.name!r}", True)
    ids = []
    for designator in args.parts:
        element = doc.by_designator(designator)
        if element is None:
            raise CircuitError(f"--parts: there is no part {designator!r} in the document")
        ids.append(element.id)
    scratch = Region(id="--parts", name="", members=frozenset(ids))
    return Selection(scratch, f"parts {', '.join(args.parts)}", False)


@dataclass(frozen=True)
class Solved:
    """One reduction: the equivalent, the circuit part names reduced and the whole circuit."""

    eq: Equivalent
    names: frozenset[str]
    circuit: Circuit


def solve(doc: Document, sel: Selection, port: tuple[str, str] | None,
           freq: float) -> Solved:
    """The equivalent at ``freq`` hertz. Without a ``port`` the region's chosen port is taken,
    and failing that the cut chooses it, exchanged where the region says so."""
    circuit = build_circuit(doc, freq=freq)
    names = region_part_names(doc, sel.region, circuit)
    if not names:
        raise CircuitError(f"{sel.label}: holds no parts to reduce")
    port = port or sel.region.port
    eq = equivalent(circuit, region=set(names), port=port, freq=freq)
    return Solved(swapped(eq) if port is None and sel.region.swap else eq, names, circuit)


def caution(circuit: Circuit, eqs: Sequence[Equivalent], basis: str, err: TextIO) -> None:
    """The safety note, once, where a source or the port voltage exceeds extra-low voltage."""
    sources = [p.value for p in circuit if p.kind == "voltage_source"]
    if any(above_extra_low_voltage([*sources, eq.voc], eq.freq, basis) for eq in eqs):
        err.write(f"{SAFETY_CAUTION}\n")
