"""The live analysis of the current region: recomputed after every document change that can
affect it (a value typed, a part taken into or out of the region, a wire drawn, the frequency
changed), without the user asking.

Changes are collected as the document announces them and the work runs once per burst, on a
zero timer, so that a batch of notifications costs one analysis. What the analysis needs is kept
between changes and renewed only as far as a change reaches:

* the sheet's connectivity, re-extracted only when something is drawn, moved or deleted (a
  move joins again only the nets it touches);
* the circuit, updated then too (engine.schematic.connectivity.updated_circuit: after a move,
  only the parts whose nets changed are rebuilt, none where the move kept its connections;
  rebuilt whole after an addition or removal and on a frequency change where collapsed blocks
  stand in for their contents); where only values were typed, just those parts are rebuilt and
  swapped in (engine.Circuit.replaced), so a value edit on a large sheet costs about one solve;
* a change of the region alone (members, outline, polarity) reuses both.

The equivalence check (the reduced circuit against the original, for the load as drawn) solves
the whole circuit twice, so it follows in a second step, after the numbers are shown.
"""

from __future__ import annotations

from dataclasses import fields, replace

import numpy as np
from PySide6.QtCore import QObject, QTimer, Signal

from portcut.engine import Circuit, Sweep, sweep
from portcut.engine.errors import CircuitError
from portcut.engine.schematic import (
    Block,
    Change,
    Connectivity,
    Document,
    PlacedPart,
    Region,
    build_circuit,
    extract,
)
from portcut.engine.schematic.connectivity import updated_circuit
from portcut.engine.schematic.reduction import (
    RegionAnalysis,
    analyse_region,
    equivalence,
    expand_block,
    region_part_names,
)
from portcut.engine.solve.kinds import REFERRING as _REFERRING  # parts naming others: rebuild
from portcut.engine.solve.units import parse_frequency

from .workbench import Workbench

__all__ = ["LiveAnalysis", "sweep_region"]

#: PlacedPart fields a value edit may change without touching nets or names.
_VALUE_FIELDS = frozenset({"value", "phase_deg", "tolerance"})


def _value_only(old: PlacedPart, new: PlacedPart) -> bool:
    changed = {f.name for f in fields(PlacedPart) if getattr(old, f.name) != getattr(new, f.name)}
    return changed <= _VALUE_FIELDS and new.kind not in _REFERRING


class LiveAnalysis(QObject):
    """Follows the workbench's document and keeps the current region's analysis up to date."""

    #: The current region's RegionAnalysis, or None when there is no region to analyse.
    analysed = Signal(object)
    #: The equivalence check of the current analysis: an EquivalenceReport, or the reason
    #: there is none (text).
    checked = Signal(object)
    #: The current region's id (None: none).
    currentChanged = Signal(object)
    #: Each Change of the current document, once noted here (views of the region follow it).
    documentChanged = Signal(object)

    def __init__(self, workbench: Workbench, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.workbench = workbench
        self.region_id: str | None = None
        self.analysis: RegionAnalysis | None = None
        self.conn: Connectivity | None = None
        self._circuit: Circuit | None = None
        self._circuit_hz: float | None = None
        self._parts: dict[str, PlacedPart] = {}
        self._region_ids: set[str] = set()
        self._stale_sheet = True
        self._stale_values: set[str] = set()
        self._timer = QTimer(self, singleShot=True, interval=0)
        self._timer.timeout.connect(self.refresh)
        self._check_timer = QTimer(self, singleShot=True, interval=0)
        self._check_timer.timeout.connect(self._check)
        self._unsubscribe = lambda: None
        workbench.documentReplaced.connect(self._follow)
        self._follow(workbench.doc)

    @property
    def doc(self) -> Document:
        return self.workbench.doc

    # -- following the document ---------------------------------------------------------------
    def _follow(self, doc: Document) -> None:
        self._unsubscribe()
        self._unsubscribe = doc.subscribe(self._on_change)
        self._region_ids = {r.id for r in doc.regions()}
        self._stale_sheet = True
        self._stale_values.clear()
        self.region_id = None
        self._schedule()

    def _on_change(self, change: Change) -> None:
        """Note how far the change reaches (while the old versions are still known)."""
        doc = self.doc
        if not (change.added or change.removed or change.updated or change.analysis):
            self.documentChanged.emit(change)  # the title: nothing to analyse again
            return
        for eid in change.added:
            if eid in doc and isinstance(doc[eid], Region):
                self._region_ids.add(eid)
            elif eid in doc:
                self._stale_sheet = True
        for eid in change.removed:
            if eid in self._region_ids:
                self._region_ids.discard(eid)
            elif eid not in doc:
                self._stale_sheet = True
        for eid in change.updated:
            new = doc[eid]
            if isinstance(new, Region):
                continue
            old = self._parts.get(eid)
            if isinstance(new, PlacedPart) and old is not None and _value_only(old, new):
                self._stale_values.add(eid)
                self._parts[eid] = new
            else:
                self._stale_sheet = True
        self._schedule()
        self.documentChanged.emit(change)

    def _schedule(self) -> None:
        self._check_timer.stop()
        self._timer.start()

    # -- the current region -------------------------------------------------------------------
    def set_region(self, region_id: str | None) -> None:
        """Show this region (None: the first one of the document, if any)."""
        if region_id != self.region_id:
            self.region_id = region_id
            self.currentChanged.emit(region_id)
            self._schedule()

    def _choose_region(self) -> str | None:
        doc = self.doc
        if self.region_id is not None and self.region_id in doc and \
                isinstance(doc[self.region_id], Region):
            return self.region_id
        regions = doc.regions()
        return regions[0].id if regions else None

    # -- the work -----------------------------------------------------------------------------
    def refresh(self) -> None:
        """Analyse the current region now (the timer calls this once per burst of changes)."""
        self._timer.stop()
        doc = self.doc
        chosen = self._choose_region()
        if chosen != self.region_id:
            self.region_id = chosen
            self.currentChanged.emit(chosen)
        if chosen is None:
            self.analysis = None
            self.analysed.emit(None)
            self.checked.emit("no region to check")
            return
        try:
            hz = parse_frequency(doc.analysis.freq)
        except CircuitError:
            self._update_sheet(doc, None)
            self.analysis = analyse_region(doc, chosen, conn=self.conn)  # says what is wrong
        else:
            self._update_sheet(doc, hz)
            self.analysis = analyse_region(doc, chosen, conn=self.conn, freq=hz,
                                           circuit=self._circuit)
        self.analysed.emit(self.analysis)
        self._check_timer.start()

    def _update_sheet(self, doc: Document, hz: float | None) -> None:
        """Bring the kept connectivity and circuit up to date with the document."""
        before = self.conn
        if self._stale_sheet or self.conn is None:
            self.conn = extract(doc, previous=self.conn)  # re-joins only the nets a move touched
            self._parts = {p.id: p for p in doc.parts()}
        if hz != self._circuit_hz and doc.blocks():
            self._circuit = None  # blocks stand in by their equivalent at the frequency
        self._stale_sheet = False
        changed, self._stale_values = self._stale_values, set()
        if hz is None:
            self._circuit = None
            return
        try:
            if self._circuit is None or before is None:
                self._circuit = build_circuit(doc, self.conn, hz)
            elif self.conn is not before:  # rebuilds only the parts the edit changed or rewired
                self._circuit = updated_circuit(self._circuit, doc, before, self.conn, hz)
            elif changed:
                sub = Document()
                for eid in sorted(changed):
                    sub.add(doc[eid])
                self._circuit = self._circuit.replaced(build_circuit(sub, self.conn, hz))
        except CircuitError:
            self._circuit = None  # analyse_region builds again and reports the reason
        self._circuit_hz = hz

    def _check(self) -> None:
        analysis = self.analysis
        if analysis is None or not analysis.ok:
            self.checked.emit("no equivalent to check" if analysis is None
                              else "no equivalent to check: the cut is not valid")
            return
        try:
            self.checked.emit(equivalence(analysis, self.doc.analysis.form))
        except CircuitError as exc:
            self.checked.emit(str(exc))

    # -- sweeps -------------------------------------------------------------------------------
    def sweep(self, freqs: np.ndarray) -> Sweep:
        """The current region's equivalent over ``freqs`` (Hz), for the port it shows now.
        Raises CircuitError saying why where there is nothing valid to sweep."""
        analysis = self.analysis
        if analysis is None:
            raise CircuitError("no region to sweep: draw a boundary around the parts to reduce")
        if not analysis.ok:
            raise CircuitError(analysis.message)
        return sweep_region(self.doc, analysis, freqs, self.conn)


def sweep_region(doc: Document, analysis: RegionAnalysis, freqs: np.ndarray,
                 conn: Connectivity | None = None) -> Sweep:
    """The equivalent of ``analysis``'s region (valid) at every frequency of ``freqs``, for its
    port. A collapsed block among the members is put back into its contents first (on a scratch
    copy), since its drawn values hold at one frequency only."""
    region: Region = doc[analysis.region_id]
    port = analysis.equivalent.port
    if not any(isinstance(doc[m], Block) for m in region.members if m in doc):
        return sweep(analysis.circuit, analysis.part_names, freqs, port=port)
    conn = conn or extract(doc)
    scratch, members = _expanded(doc, region)
    scratch_conn = extract(scratch)
    circuit = build_circuit(scratch, scratch_conn, 0.0)
    names = region_part_names(scratch, replace(region, members=members), circuit)
    mapped = tuple(_same_net(conn, scratch_conn, members, net) for net in port)
    return replace(sweep(circuit, names, freqs, port=mapped), port=port)


def _expanded(doc: Document, region: Region) -> tuple[Document, frozenset[str]]:
    """A copy of ``doc`` without ``region`` in which every block among its members (at any
    depth) is expanded, and the members standing for them."""
    scratch = Document(doc.title)
    for element in sorted(doc, key=lambda e: isinstance(e, Region)):
        if element.id != region.id:
            scratch.add(element)
    members = set(region.members)
    while blocks := [m for m in members if m in scratch and isinstance(scratch[m], Block)]:
        for block_id in blocks:
            block: Block = scratch[block_id]
            expand_block(scratch, block_id).apply(scratch)
            members.discard(block_id)
            members |= {e.id for e in (*block.contents.parts, *block.contents.blocks)}
    return scratch, frozenset(members)


def _same_net(conn: Connectivity, scratch_conn: Connectivity, members: frozenset[str],
              net: str) -> str:
    """The name, on the expanded copy, of port net ``net``: read off a pin outside the region
    (automatic net names follow the lowest pin, which expanding may change)."""
    for key, name in conn.net_of_pin.items():
        if name == net and key[0] not in members and key in scratch_conn.net_of_pin:
            return scratch_conn.net_of_pin[key]
    if net in scratch_conn.nets:
        return net
    raise CircuitError(f"the port net {net} cannot be found once the region's blocks are "
                       "expanded; expand them and draw the boundary again")
