"""Edits of the sheet as values: the elements an operation takes off and puts on, applied in one
notification and undone exactly; expanding a collapsed block back into its region."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

from ..errors import DocumentError
from .connectivity import _natural_key
from .document import Document
from .model import Block, Element, PlacedPart

__all__ = ["Edit", "expand_block"]


@dataclass(frozen=True)
class Edit:
    """Elements to remove (by value, so the edit can be undone) and elements to add."""

    removed: tuple[Element, ...] = ()
    added: tuple[Element, ...] = ()

    def apply(self, doc: Document) -> None:
        """Perform the edit as one change notification. Elements coming back (an expand, an
        undo) return to their places in the document's order, so the file is as it was."""
        with doc.batch():
            for element in self.removed:
                doc.remove(element.id)
            kept = list(doc)
            for element in self.added:
                doc.add(element)
            doc.arrange(_merged(kept, self.added))

    def inverse(self) -> Edit:
        return Edit(removed=self.added, added=self.removed)


def _merged(kept: list[Element], added: Iterable[Element]) -> list[str]:
    """The ids of ``kept`` (in their order) with each of ``added`` placed among the elements of
    its own type by id in natural order: ids are handed out in increasing order, so that is
    where it stood."""
    out = list(kept)
    for element in sorted(added, key=lambda e: _natural_key(e.id)):
        key, at = _natural_key(element.id), None
        for i, other in enumerate(out):
            if type(other) is type(element):
                if _natural_key(other.id) > key:
                    at = i
                    break
                at = i + 1
        out.insert(len(out) if at is None else at, element)
    return [e.id for e in out]


def expand_block(doc: Document, block_id: str) -> Edit:
    """The edit that puts a block's region back exactly as it was before the collapse."""
    block = doc[block_id]
    if not isinstance(block, Block):
        raise DocumentError(f"{block_id} is a {type(block).__name__}, not a collapsed block")
    restored: tuple[Element, ...] = (*block.contents.parts, *block.contents.blocks,
                                     *block.contents.wires, *block.contents.junctions,
                                     *block.contents.labels, block.region)
    stubs = tuple(doc[s] for s in block.stubs if s in doc)
    leaving = {block.id, *(s.id for s in stubs)}
    for element in restored:
        if element.id in doc and element.id not in leaving:
            raise DocumentError(f"cannot expand {block.designator}: element id {element.id} is "
                                "used on the sheet again")
        if isinstance(element, PlacedPart | Block):
            other = doc.by_designator(element.designator)
            if other is not None and other.id not in leaving:
                raise DocumentError(f"cannot expand {block.designator}: {element.designator} "
                                    "inside it clashes with a part of that name on the sheet; "
                                    "rename one of them")
    return Edit(removed=(block, *stubs), added=restored)
