"""Undo commands: every edit of the document is one of these on the window's QUndoStack.

Commands call Document methods only (add, remove, replace, set_title, set_analysis), never canvas
items. Each command and all its children run inside one ``doc.batch()``, so the views see one
Change per undo step. Compositions are parent commands with children (redone in order, undone
in reverse).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import replace

from PySide6.QtGui import QUndoCommand

from portcut.engine.schematic import Analysis, Block, Document, Element, PlacedPart, Region
from portcut.engine.schematic.reduction import Edit

from .editing import Deletion

__all__ = [
    "AddElements",
    "ApplyEdit",
    "DocumentCommand",
    "MoveElements",
    "RemoveElements",
    "ReplaceElements",
    "SetAnalysis",
    "SetTitle",
    "delete_command",
    "edit_command",
]

#: QUndoCommand.id() of a move; moves of the same elements in a row merge into one step.
MOVE_ID = 1


def _add_order(elements: Iterable[Element]) -> list[Element]:
    """Regions name their members, so they go in after everything else."""
    return sorted(elements, key=lambda e: isinstance(e, Region))


class DocumentCommand(QUndoCommand):
    """A command on a document: its own step (``_apply``/``_revert``) and then its children's,
    all inside one batch; undo runs the children in reverse first. A command with only children
    is a composition. Children are kept on the Python side (``children``) rather than as Qt
    child commands, whose ownership PySide does not hand over to the parent."""

    def __init__(self, doc: Document, text: str, parent: DocumentCommand | None = None) -> None:
        super().__init__(text)
        self.doc = doc
        self.children: list[DocumentCommand] = []
        if parent is not None:
            parent.children.append(self)

    def redo(self) -> None:
        with self.doc.batch():
            self._apply()
            for child in self.children:
                child.redo()

    def undo(self) -> None:
        with self.doc.batch():
            for child in reversed(self.children):
                child.undo()
            self._revert()

    def _apply(self) -> None:
        """This command's own change (none for a pure composition)."""

    def _revert(self) -> None:
        """Undo :meth:`_apply`."""


class AddElements(DocumentCommand):
    """Add new elements."""

    def __init__(self, doc: Document, elements: Iterable[Element], text: str,
                 parent: DocumentCommand | None = None) -> None:
        super().__init__(doc, text, parent)
        self.elements = tuple(_add_order(elements))

    def _apply(self) -> None:
        for e in self.elements:
            self.doc.add(e)

    def _revert(self) -> None:
        for e in reversed(self.elements):
            self.doc.remove(e.id)


class RemoveElements(DocumentCommand):
    """Remove elements by id; undo puts the same elements back."""

    def __init__(self, doc: Document, ids: Iterable[str], text: str,
                 parent: DocumentCommand | None = None) -> None:
        super().__init__(doc, text, parent)
        self.elements = tuple(_add_order(doc[i] for i in dict.fromkeys(ids)))

    def _apply(self) -> None:
        for e in reversed(self.elements):
            self.doc.remove(e.id)

    def _revert(self) -> None:
        for e in self.elements:
            self.doc.add(e)


class ReplaceElements(DocumentCommand):
    """Put new versions of existing elements; undo restores the versions the first redo found
    (so a command that runs after its siblings restores what they left, not what was there when
    it was built)."""

    def __init__(self, doc: Document, elements: Iterable[Element], text: str,
                 parent: DocumentCommand | None = None) -> None:
        super().__init__(doc, text, parent)
        self.after = {e.id: e for e in elements}
        self.before: dict[str, Element] = {}

    def _take_before(self, ids: Iterable[str]) -> None:
        """Keep the versions of ``ids`` that the first redo finds."""
        if not self.before:
            self.before = {i: self.doc[i] for i in ids}

    def _apply(self) -> None:
        self._take_before(self.after)
        for e in self.after.values():
            self.doc.replace(e)

    def _revert(self) -> None:
        for e in self.before.values():
            self.doc.replace(e)


class MoveElements(ReplaceElements):
    """A move, rotation or mirror of ``key`` (the ids the user chose) and of the wires that
    followed; the next such command on the same ids merges into this one."""

    def __init__(self, doc: Document, key: Iterable[str], elements: Iterable[Element],
                 text: str) -> None:
        elements = list(elements)
        # link wires that keep a moved pin joined to what stayed behind are new
        self.added = frozenset(e.id for e in elements if e.id not in doc)
        super().__init__(doc, [e for e in elements if e.id not in self.added], text)
        self.after.update((e.id, e) for e in elements if e.id in self.added)
        self.key = frozenset(key)

    def _apply(self) -> None:
        self._take_before(i for i in self.after if i not in self.added)
        for e in self.after.values():
            if e.id in self.added:
                self.doc.add(e)
            else:
                self.doc.replace(e)

    def _revert(self) -> None:
        for element_id in self.added:
            self.doc.remove(element_id)
        super()._revert()

    def id(self) -> int:
        return MOVE_ID

    def mergeWith(self, other: QUndoCommand) -> bool:
        if not isinstance(other, MoveElements) or other.key != self.key:
            return False
        for element_id, old in other.before.items():
            if element_id not in self.added:
                self.before.setdefault(element_id, old)
        self.after.update(other.after)
        self.added |= other.added
        # a link that a later step folded back onto its start joins nothing: it goes
        folded = [i for i in self.added if len(set(self.after[i].points)) < 2]
        with self.doc.batch():
            for element_id in folded:
                self.doc.remove(element_id)
                del self.after[element_id]
        self.added -= set(folded)
        return True


class SetTitle(DocumentCommand):
    """Change the sheet title."""

    def __init__(self, doc: Document, title: str) -> None:
        super().__init__(doc, f"Set title to “{title}”")
        self.title, self.old = title, doc.title

    def _apply(self) -> None:
        self.doc.set_title(self.title)

    def _revert(self) -> None:
        self.doc.set_title(self.old)


class ApplyEdit(DocumentCommand):
    """An engine-planned edit (a collapse into a block, an expand back): redo applies it,
    undo applies its exact inverse."""

    def __init__(self, doc: Document, edit: Edit, text: str,
                 parent: DocumentCommand | None = None) -> None:
        super().__init__(doc, text, parent)
        self.edit = edit

    def _apply(self) -> None:
        self.edit.apply(self.doc)

    def _revert(self) -> None:
        self.edit.inverse().apply(self.doc)


class SetAnalysis(DocumentCommand):
    """Change the analysis settings (frequency, equivalent form, peak or rms)."""

    def __init__(self, doc: Document, analysis: Analysis, text: str) -> None:
        super().__init__(doc, text)
        self.analysis, self.old = analysis, doc.analysis

    def _apply(self) -> None:
        self.doc.set_analysis(self.analysis)

    def _revert(self) -> None:
        self.doc.set_analysis(self.old)


def delete_command(doc: Document, plan: Deletion, text: str) -> DocumentCommand:
    """One undo step for a delete: a parent whose children shrink the regions, remove the
    chosen elements and remove the wires that were left dangling."""
    parent = DocumentCommand(doc, text)
    if plan.regions:
        ReplaceElements(doc, plan.regions, "Update regions", parent)
    RemoveElements(doc, plan.removed, "Remove elements", parent)
    if plan.dangling:
        RemoveElements(doc, plan.dangling, "Remove dangling wires", parent)
    return parent


def edit_command(doc: Document, edit: Edit, text: str) -> DocumentCommand:
    """One undo step for an engine edit (collapse, expand) that keeps the other regions'
    members in the document: a region naming an element the edit takes away lets go of it
    first, and afterwards names the parts or blocks the edit put there instead (the block a
    collapse made, the parts an expand restored), so a nested region follows its block."""
    parent = DocumentCommand(doc, text)
    gone = {e.id for e in edit.removed}
    touched = [r for r in doc.regions() if r.id not in gone and r.members & gone]
    shrunk = [replace(r, members=r.members - gone) for r in touched]
    if shrunk:
        ReplaceElements(doc, shrunk, "Update regions", parent)
    ApplyEdit(doc, edit, text, parent)
    held = frozenset(e.id for e in edit.added if isinstance(e, PlacedPart | Block))
    if shrunk and held:
        ReplaceElements(doc, [replace(r, members=r.members | held) for r in shrunk],
                        "Update regions", parent)
    return parent
