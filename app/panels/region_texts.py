"""What the equivalent panel says about a region or block beyond its values: for a refused cut,
the parts on each side of every net it names; what a collapsed block stands for; and the undo
command that expands a block."""

from __future__ import annotations

from PySide6.QtGui import QUndoCommand

from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Block, Document
from portcut.engine.schematic.captions import block_caption, drawn_form
from portcut.engine.schematic.connectivity import block_equivalent
from portcut.engine.schematic.reduction import RegionAnalysis, expand_block
from portcut.engine.solve.names import listing

from ..commands import edit_command

__all__ = ["block_text", "boundary_text", "expand_command"]


def boundary_text(analysis: RegionAnalysis) -> list[str]:
    """For each net a refused cut names, the parts on it inside and outside the region (a
    collapsed block by its designator), so the user sees which part to take in or leave out."""
    if analysis.circuit is None:
        return []
    lines = []
    for net in sorted(analysis.bad_nets):
        sides: tuple[set[str], set[str]] = (set(), set())
        for part in analysis.circuit:
            if net in part.nets:
                # a block's parts and a device's members by their designator
                sides[part.name not in analysis.part_names].add(
                    part.name.split(".")[0].split(":")[0])
        inside, outside = (sorted(side) for side in sides)
        lines.append(f"On {net}: {listing(inside)} inside, {listing(outside)} outside")
    return lines


def block_text(block: Block, freq: float) -> list[str]:
    """What a collapsed block stands for: the region it replaced, the form drawn and its values
    at ``freq`` hertz (as the canvas captions them), or why it has none."""
    try:
        eq = block_equivalent(block, freq)
    except CircuitError as exc:
        return [f"{block.designator} has no equivalent: {exc}"]
    form = drawn_form(eq, block.form)
    source, z, at = block_caption(eq, form, freq)
    return [f"{block.designator} stands for the collapsed region “{block.region.name}”, "
            f"drawn in {form.title()} form.", f"{source}, {z} {at}."]


def expand_command(doc: Document, block: Block) -> QUndoCommand:
    """The undo command that puts the parts ``block`` stands for back exactly (raises
    CircuitError saying why it cannot)."""
    return edit_command(doc, expand_block(doc, block.id), f"Expand {block.designator}")
