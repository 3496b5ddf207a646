"""The schematic document: the one source of truth that every view reads and every edit changes.

All mutations go through :meth:`Document.add`, :meth:`Document.remove`, :meth:`Document.replace`,
:meth:`Document.set_analysis` and :meth:`Document.set_title`; the undo layer calls exactly these.
Each mutation (or each outermost :meth:`Document.batch`) notifies the subscribers once with a
:class:`Change`.
"""

from __future__ import annotations

import itertools
import re
from collections.abc import Callable, Iterable, Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass, field, fields, replace
from typing import TypeVar

from ..errors import CircuitError, DocumentError
from ..solve.kinds import TABLE as KIND_TABLE
from ..solve.units import parse_frequency
from .model import (
    ANALYSIS_FORMS,
    ROTATIONS,
    Analysis,
    Block,
    Element,
    Junction,
    NetLabel,
    PlacedPart,
    Region,
    Wire,
    port_problem,
)
from .text import text_problem

__all__ = ["DESIGNATOR_PREFIX", "Change", "Document"]

#: Reference designator prefix per part kind (engine.solve.kinds), and EQ for a collapsed block.
DESIGNATOR_PREFIX: dict[str, str] = {**{k.name: k.prefix for k in KIND_TABLE}, "block": "EQ"}
T = TypeVar("T")
_ID_PREFIX = {PlacedPart: "p", Wire: "w", Junction: "j", NetLabel: "n", Region: "r", Block: "b"}
#: The kinds listed by their own index: few on any sheet, asked for after every edit.
_LISTED = (Region, Block)


@dataclass(frozen=True)
class Change:
    """What one notification covers: element ids added, removed and replaced, and whether the
    analysis settings or the title changed."""

    added: frozenset[str] = frozenset()
    removed: frozenset[str] = frozenset()
    updated: frozenset[str] = frozenset()
    analysis: bool = False
    title: bool = False

    def merged(self, other: Change) -> Change:
        """The net effect of this change followed by ``other``: an element added and then
        removed was never there, one removed and then added again was replaced, one replaced
        and then removed is removed, one added and then replaced is added."""
        transient = self.added & other.removed
        returned = self.removed & other.added
        added = (self.added | other.added) - transient - returned
        removed = (self.removed | other.removed) - transient - returned
        updated = (self.updated | other.updated | returned) - added - removed - transient
        return Change(frozenset(added), frozenset(removed), frozenset(updated),
                      self.analysis or other.analysis, self.title or other.title)


@dataclass
class _Pending:
    depth: int = 0
    change: Change = field(default_factory=Change)


Listener = Callable[[Change], None]


class Document:
    """Elements by id, analysis settings and a title; observers are told of every change."""

    def __init__(self, title: str = "Untitled") -> None:
        self._elements: dict[str, Element] = {}
        # indexes kept beside the elements so that checks on add stay O(1) on large sheets,
        # and the few regions and blocks are listed without a pass over every element
        self._listed: dict[type, dict[str, None]] = {kind: {} for kind in _LISTED}  # ordered
        self._designators: dict[str, str] = {}
        self._analysis = Analysis()
        self._title = _title(title)
        self._listeners: list[Listener] = []
        self._pending = _Pending()
        self._counter = itertools.count(1)

    # -- reading ------------------------------------------------------------------------------
    @property
    def title(self) -> str:
        return self._title

    @property
    def analysis(self) -> Analysis:
        return self._analysis

    def frequency(self) -> float:
        """The analysis frequency in hertz; 0 (DC) while the field does not read as a
        frequency (the field's own check says why)."""
        try:
            return parse_frequency(self._analysis.freq)
        except CircuitError:
            return 0.0

    def __iter__(self) -> Iterator[Element]:
        return iter(self._elements.values())

    def __len__(self) -> int:
        return len(self._elements)

    def __contains__(self, element_id: object) -> bool:
        return element_id in self._elements

    def __getitem__(self, element_id: str) -> Element:
        try:
            return self._elements[element_id]
        except KeyError:
            raise DocumentError(f"no element with id {element_id!r} in the document") from None

    def __eq__(self, other: object) -> bool:
        return (isinstance(other, Document) and self._elements == other._elements
                and self._analysis == other._analysis and self._title == other._title)

    __hash__ = None  # mutable

    def snapshot(self) -> Document:
        """A copy that later mutations of this document do not reach, with no subscribers:
        the elements are frozen, so copying the indexes is enough (a background analysis
        reads one while the document is edited)."""
        copy = Document.__new__(Document)
        copy.__dict__.update(self.__dict__)
        copy._elements = dict(self._elements)
        copy._listed = {kind: dict(ids) for kind, ids in self._listed.items()}
        copy._designators, copy._listeners, copy._pending = dict(self._designators), [], _Pending()
        return copy

    def of_type(self, cls: type[T]) -> list[T]:
        return [e for e in self._elements.values() if isinstance(e, cls)]

    def parts(self) -> list[PlacedPart]:
        return self.of_type(PlacedPart)

    def wires(self) -> list[Wire]:
        return self.of_type(Wire)

    def junctions(self) -> list[Junction]:
        return self.of_type(Junction)

    def labels(self) -> list[NetLabel]:
        return self.of_type(NetLabel)

    def regions(self) -> list[Region]:
        return [self._elements[r] for r in self._listed[Region]]

    def blocks(self) -> list[Block]:
        return [self._elements[b] for b in self._listed[Block]]

    def by_designator(self, designator: str) -> PlacedPart | Block | None:
        element_id = self._designators.get(designator)
        return None if element_id is None else self._elements[element_id]

    # -- naming -------------------------------------------------------------------------------
    def new_id(self, cls: type) -> str:
        """A fresh element id for an element of type ``cls`` (e.g. ``"p12"``)."""
        prefix = _ID_PREFIX[cls]
        while True:
            candidate = f"{prefix}{next(self._counter)}"
            if candidate not in self._elements and candidate not in self._collapsed_ids():
                return candidate

    def collapsed(self) -> Iterator[Element]:
        """Every element kept inside a collapsed block (at any depth of nesting), the region it
        was collapsed from included; their ids and designators stay reserved so that expanding a
        block can always put them back."""
        stack = self.blocks()
        while stack:
            block = stack.pop()
            contents = block.contents
            yield block.region
            for group in (contents.parts, contents.wires, contents.junctions, contents.labels,
                          contents.blocks):
                yield from group
            stack.extend(contents.blocks)

    def _collapsed_ids(self) -> set[str]:
        return {e.id for e in self.collapsed()} if self._listed[Block] else set()

    def next_designator(self, kind: str, reserved: Iterable[str] = ()) -> str:
        """The lowest free designator for ``kind``: R1, R2, ... (DS for dependent sources).

        ``reserved`` designators count as taken (names handed out but not yet added).
        """
        prefix = DESIGNATOR_PREFIX[kind]
        taken = {e.designator for e in itertools.chain(self._elements.values(), self.collapsed())
                 if isinstance(e, PlacedPart | Block)} | set(reserved)
        return next(f"{prefix}{n}" for n in itertools.count(1) if f"{prefix}{n}" not in taken)

    # -- observing ----------------------------------------------------------------------------
    def subscribe(self, listener: Listener) -> Callable[[], None]:
        """Call ``listener(change)`` after every change; returns a function that unsubscribes."""
        self._listeners.append(listener)
        return lambda: self._listeners.remove(listener) if listener in self._listeners else None

    @contextmanager
    def batch(self) -> Iterator[None]:
        """Group mutations into one notification (nesting allowed)."""
        self._pending.depth += 1
        try:
            yield
        finally:
            self._pending.depth -= 1
            if self._pending.depth == 0:
                change, self._pending.change = self._pending.change, Change()
                if change != Change():
                    self._emit(change)

    def _notify(self, change: Change) -> None:
        if self._pending.depth:
            self._pending.change = self._pending.change.merged(change)
        else:
            self._emit(change)

    def _emit(self, change: Change) -> None:
        for listener in list(self._listeners):
            listener(change)

    # -- mutating (the undo layer calls only these) -------------------------------------------
    def add(self, element: Element) -> None:
        """Add an element; its id must be new and its designator (if any) unused."""
        if element.id in self._elements:
            raise DocumentError(f"an element with id {element.id!r} is already in the document")
        self._check(element)
        self._index(element)
        self._notify(Change(added=frozenset({element.id})))

    def remove(self, element_id: str) -> Element:
        """Remove and return an element."""
        element = self[element_id]
        self._unindex(element)
        self._notify(Change(removed=frozenset({element_id})))
        return element

    def replace(self, element: Element) -> Element:
        """Put a new version of an existing element (same id, same type); returns the old one."""
        old = self[element.id]
        if type(old) is not type(element):
            raise DocumentError(f"{element.id}: cannot replace a {type(old).__name__} "
                                f"with a {type(element).__name__}")
        self._check(element, replacing=old)
        if isinstance(old, PlacedPart | Block):
            del self._designators[old.designator]
        self._index(element)  # same key: the element keeps its place in the document's order
        self._notify(Change(updated=frozenset({element.id})))
        return old

    def _index(self, element: Element) -> None:
        self._elements[element.id] = element
        if isinstance(element, PlacedPart | Block):
            self._designators[element.designator] = element.id
        if isinstance(element, _LISTED):
            self._listed[type(element)][element.id] = None

    def _unindex(self, element: Element) -> None:
        del self._elements[element.id]
        if isinstance(element, PlacedPart | Block):
            del self._designators[element.designator]
        if isinstance(element, _LISTED):
            del self._listed[type(element)][element.id]

    def arrange(self, order: Sequence[str]) -> None:
        """Put the elements in ``order`` (every id once), the order a file lists them in.
        Nothing about the elements changes, so nobody is notified."""
        if len(order) != len(self._elements) or set(order) != self._elements.keys():
            raise DocumentError("arrange: the order must name every element exactly once")
        self._elements = {i: self._elements[i] for i in order}
        self._listed = {kind: {i: None for i in order if i in ids}
                        for kind, ids in self._listed.items()}

    def set_analysis(self, analysis: Analysis) -> Analysis:
        """Set the analysis settings; returns the old ones."""
        if analysis.form not in ANALYSIS_FORMS:
            raise DocumentError(f"analysis.form: expected one of {ANALYSIS_FORMS}, "
                                f"got {analysis.form!r}")
        if analysis.basis not in ("peak", "rms"):
            raise DocumentError(f"analysis.basis: expected 'peak' or 'rms', got {analysis.basis!r}")
        _check_texts(analysis, "analysis")
        old, self._analysis = self._analysis, analysis
        self._notify(Change(analysis=True))
        return old

    def set_title(self, title: str) -> str:
        old, self._title = self._title, _title(str(title))
        self._notify(Change(title=True))
        return old

    def clear(self) -> None:
        """Remove every element (one notification)."""
        with self.batch():
            for element_id in list(self._elements):
                self.remove(element_id)

    # -- checks -------------------------------------------------------------------------------
    def _check(self, element: Element, replacing: Element | None = None) -> None:
        where = f"{type(element).__name__} {element.id}"
        _check_texts(element, where)
        if isinstance(element, PlacedPart | Block):
            if not re.fullmatch(r"[A-Za-z][A-Za-z0-9_]*", element.designator or ""):
                raise DocumentError(f"{where}: designator {element.designator!r} must start "
                                    "with a letter and hold only letters, digits and _")
            other = self.by_designator(element.designator)
            if other is not None and other.id != element.id:
                raise DocumentError(f"{where}: designator {element.designator!r} is already "
                                    f"used by {other.id}")
            hidden = next((e for e in self.collapsed() if isinstance(e, PlacedPart | Block)
                           and e.designator == element.designator), None)
            if hidden is not None:
                raise DocumentError(f"{where}: designator {element.designator!r} belongs to a "
                                    "part inside a collapsed block; choose another or expand "
                                    "the block")
            if element.rotation not in ROTATIONS:
                raise DocumentError(f"{where}: rotation must be one of {ROTATIONS}, "
                                    f"got {element.rotation!r}")
        if isinstance(element, Wire):
            _check_wire(element, where)
        if isinstance(element, Region):
            unknown = sorted(m for m in element.members if m not in self._elements)
            if unknown:
                raise DocumentError(f"{where}: members {', '.join(unknown)} are not in the "
                                    "document")
            problem = port_problem(element)
            if problem:
                raise DocumentError(f"{where}: {problem}")

    def check(self, element: Element) -> None:
        """Raise DocumentError (naming the field) if ``element`` could not be added, or could
        not replace the element with its id; changes nothing. Editors validate with this
        before they push an undo command."""
        self._check(element, replacing=self._elements.get(element.id))

    def replace_fields(self, element_id: str, **changes: object) -> Element:
        """Shorthand for ``replace(dataclasses.replace(doc[element_id], **changes))``."""
        return self.replace(replace(self[element_id], **changes))


def _title(title: str) -> str:
    problem = text_problem(title)
    if problem:
        raise DocumentError(f"title: {problem}")
    return title


def _check_texts(element: Element | Analysis, where: str) -> None:
    """Refuse text no file can store in the element's own fields (a block's contents were
    checked when they were on the sheet)."""
    for f in fields(element):
        value = getattr(element, f.name)
        if f.name == "params":  # (name, text) pairs: only a table of readings spans lines
            found = [e for k, t in value for e in ((k, False), (t, k == "table"))]
        else:
            found = [(t, False) for t in _texts(value)]
        for text, lines in found:
            problem = text_problem(text, lines)
            if problem:
                raise DocumentError(f"{where}: {f.name}: {problem}")


def _texts(value: object) -> list[str]:
    """The strings of a field: itself, or those in its tuples and sets (nested ones too)."""
    if isinstance(value, str):
        return [value]
    if isinstance(value, tuple | frozenset):
        return [text for v in value for text in _texts(v)]
    return []


def _check_wire(wire: Wire, where: str) -> None:
    if len(wire.points) < 2:
        raise DocumentError(f"{where}: a wire needs at least two points")
    for (x0, y0), (x1, y1) in itertools.pairwise(wire.points):
        if x0 != x1 and y0 != y1:
            raise DocumentError(f"{where}: segment ({x0}, {y0})-({x1}, {y1}) is not horizontal "
                                "or vertical")
