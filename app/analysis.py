"""The live analysis of the current region: recomputed after every document change that can
affect it (a value typed, a part taken into or out of the region, a wire drawn, the frequency
changed), without the user asking.

Changes are collected as the document announces them, with how far they reach (app.analyser:
a value edit rebuilds one part, a drawing change re-extracts), and the work runs once per
burst: where it runs at once (below), on a request posted at high priority, delivered before
the layouts and paints the edit posted, so that the window paints the edit and its numbers in
one frame; where it runs in the background, on a zero timer, after the edit is painted, so that
the worker does not contend with that paint for the interpreter lock. Each state of the
document it analyses has a generation number, one more with every change; an answer is shown
only while its generation is still the document's, so a late answer never crosses a newer one.

Where the work runs: at once in the GUI thread on a sheet of fewer than
:attr:`LiveAnalysis.inline_parts` parts (such a sheet analyses in about a millisecond, and
tests and small sheets see their numbers without waiting), and on a larger sheet where a job of
the same reach (re-extracting the sheet or not) last took less than
:attr:`LiveAnalysis.inline_ms`: handing such a job to the worker and its answer back would cost
about as much as the job. Otherwise in the background (app.worker) on a snapshot of the
document, the newest state only, so that typing, dragging and panning never wait for a solve.
The equivalence check (the reduced circuit against the original, for the load as drawn)
solves the whole circuit twice, so it follows in a second step, after the numbers are shown
(in the background on a large sheet, wherever the numbers were worked out), and is dropped
when a newer edit arrives. While the numbers shown are older than the document by more than
:data:`FRAME_MS`, :attr:`LiveAnalysis.updating` says so.
"""

from __future__ import annotations

import time
from dataclasses import fields, replace
from functools import partial

import numpy as np
from PySide6.QtCore import QCoreApplication, QEvent, QObject, Qt, QTimer, Signal

from portcut.engine import Sweep, sweep
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
from portcut.engine.schematic.reduction import (
    RegionAnalysis,
    expand_block,
    region_part_names,
)
from portcut.engine.solve.kinds import REFERRING as _REFERRING  # parts naming others: rebuild

from .analyser import EVERYTHING, Analyser, Answer, Job, Reach, check
from .workbench import Workbench
from .worker import AnalysisWorker

__all__ = ["FRAME_MS", "INLINE_MS", "INLINE_PARTS", "LiveAnalysis", "sweep_region"]

#: PlacedPart fields a value edit may change without touching nets or names.
_VALUE_FIELDS = frozenset({"value", "phase_deg", "tolerance"})
#: Sheets with fewer parts are analysed at once in the GUI thread (see docs/architecture.md).
INLINE_PARTS = 50
#: A job the analyser last did in less (ms) runs at once in the GUI thread on a large sheet
#: too: handing it to the worker and its answer back costs about as much.
INLINE_MS = 5.0
#: The request to analyse the document as it is at once, posted once per burst of changes at
#: high priority: delivered before the layouts and paints the edit itself posted.
_REFRESH = QEvent.Type(QEvent.registerEventType())
#: One frame at 60 Hz (ms): numbers older than the document by more are marked "updating".
FRAME_MS = 16


def _part_reach(old: PlacedPart, new: PlacedPart) -> Reach:
    """How far replacing part ``old`` by ``new`` reaches."""
    changed = {f.name for f in fields(PlacedPart) if getattr(old, f.name) != getattr(new, f.name)}
    if changed <= _VALUE_FIELDS and new.kind not in _REFERRING:
        return Reach(values=frozenset({new.id}))
    return Reach(sheet=True)


class LiveAnalysis(QObject):
    """Follows the workbench's document and keeps the current region's analysis up to date."""

    #: The current region's RegionAnalysis, or None when there is no region to analyse; always
    #: of the document as it is (:attr:`shown_generation` equals :attr:`generation`).
    analysed = Signal(object)
    #: The equivalence check of the current analysis: an EquivalenceReport, or the reason
    #: there is none (text).
    checked = Signal(object)
    #: The current region's id (None: none).
    currentChanged = Signal(object)
    #: Each Change of the current document, once noted here (views of the region follow it).
    documentChanged = Signal(object)
    #: True once the numbers shown are older than the document by more than a frame; False
    #: when the newest are shown.
    updating = Signal(bool)
    # the worker's hand-overs, queued into the GUI thread
    _answered = Signal(object)
    _reported = Signal(int, object)

    def __init__(self, workbench: Workbench, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.workbench = workbench
        self.region_id: str | None = None
        self.analysis: RegionAnalysis | None = None
        self.conn: Connectivity | None = None
        #: The document state's number (one more with every change the analysis follows) and
        #: that of the analysis shown.
        self.generation = 0
        self.shown_generation = 0
        self._checked_generation = 0
        #: Sheets with fewer parts are analysed at once (0: always in the background).
        self.inline_parts = INLINE_PARTS
        #: On a larger sheet, a job is analysed at once where the last of the same reach took
        #: less (milliseconds; 0: always in the background).
        self.inline_ms = INLINE_MS
        self.is_updating = False
        self._analyser = Analyser()
        self._worker: AnalysisWorker | None = None
        self._parts: dict[str, PlacedPart] = {}
        self._region_ids: set[str] = set()
        self._reach = EVERYTHING
        self._timer = QTimer(self, singleShot=True, interval=0)
        self._timer.timeout.connect(self.refresh)
        self._refresh_posted = False
        self._check_timer = QTimer(self, singleShot=True, interval=0)
        self._check_timer.timeout.connect(self._check)
        self._frame_timer = QTimer(self, singleShot=True, interval=FRAME_MS)
        self._frame_timer.timeout.connect(self._frame_passed)
        self._answered.connect(self._show, Qt.ConnectionType.QueuedConnection)
        self._reported.connect(self._show_check, Qt.ConnectionType.QueuedConnection)
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
        self._parts = {p.id: p for p in doc.parts()}
        self._reach = EVERYTHING
        self.region_id = None
        self._schedule()

    def _on_change(self, change: Change) -> None:
        """Note how far the change reaches (while the old versions are still known)."""
        doc = self.doc
        if not (change.added or change.removed or change.updated or change.analysis):
            self.documentChanged.emit(change)  # the title: nothing to analyse again
            return
        reach = self._reach
        for eid in change.added:
            if eid not in doc:
                continue
            element = doc[eid]
            if isinstance(element, Region):
                self._region_ids.add(eid)
                continue
            reach = reach.merged(Reach(sheet=True))
            if isinstance(element, PlacedPart):
                self._parts[eid] = element
        for eid in change.removed:
            if eid in self._region_ids:
                self._region_ids.discard(eid)
            elif eid not in doc:  # gone for good, not replaced within the change
                self._parts.pop(eid, None)
                reach = reach.merged(Reach(sheet=True))
        for eid in change.updated:
            new = doc[eid]
            if isinstance(new, Region):
                continue
            old = self._parts.get(eid)
            if isinstance(new, PlacedPart) and old is not None:
                reach = reach.merged(_part_reach(old, new))
            else:
                reach = reach.merged(Reach(sheet=True))
            if isinstance(new, PlacedPart):
                self._parts[eid] = new
        self._reach = reach
        self._schedule()
        self.documentChanged.emit(change)

    def _schedule(self) -> None:
        """A new state of the document (or another region) to analyse."""
        if self.shown_generation == self.generation:
            self._frame_timer.start()  # the shown numbers start to age
        self.generation += 1
        if self._worker is not None:
            self._worker.moved_on(self.generation)
        self._check_timer.stop()
        if not self._at_once(self._reach, len(self._parts) < self.inline_parts):
            self._timer.start()  # after the edit is painted: the worker then has the lock
        elif not self._refresh_posted:
            self._refresh_posted = True
            QCoreApplication.postEvent(self, QEvent(_REFRESH),
                                       Qt.EventPriority.HighEventPriority.value)

    def event(self, event: QEvent) -> bool:
        if event.type() == _REFRESH:
            if self._refresh_posted:  # else refresh() ran meanwhile
                self.refresh()
            return True
        return super().event(event)

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
        """Analyse the current state now (the posted request calls this once per burst of
        changes): at once where that is cheap (see :meth:`_at_once`), else in the
        background."""
        self._timer.stop()
        self._refresh_posted = False
        chosen = self._choose_region()
        if chosen != self.region_id:
            self.region_id = chosen
            self.currentChanged.emit(chosen)
        reach, self._reach = self._reach, Reach()
        small = len(self._parts) < self.inline_parts
        if not self._at_once(reach, small):
            self._background().submit(Job(self.generation, self.doc.snapshot(), chosen, reach))
            return
        answer = self._analyser.analyse(Job(self.generation, self.doc, chosen, reach))
        self._show(answer)
        if small:
            self._check_timer.start()
        else:  # the check solves the whole circuit twice: in the background
            self._background().check(Job(self.generation, self.doc.snapshot(), chosen, reach),
                                     answer)

    def _at_once(self, reach: Reach, small: bool) -> bool:
        """Analyse in the GUI thread? On a small sheet, and where a job of the same reach (a
        re-extraction or not) last took under :attr:`inline_ms`; never while the worker has
        the analyser."""
        worker = self._worker
        if worker is not None and worker.busy:
            return False
        if small:
            return True
        took = self._analyser.took.get(reach.sheet)
        return took is not None and took * 1e3 < self.inline_ms

    def _background(self) -> AnalysisWorker:
        if self._worker is None:
            self._worker = AnalysisWorker(self._analyser, self._answered.emit,
                                          self._reported.emit)
            self.destroyed.connect(self._worker.stop)
        return self._worker

    def _show(self, answer: Answer) -> None:
        if answer.generation != self.generation:
            return  # the document has moved on: a newer answer is on its way
        self.analysis, self.conn = answer.analysis, answer.conn
        self.shown_generation = answer.generation
        self._frame_timer.stop()
        self._set_updating(False)
        self.analysed.emit(self.analysis)
        if self._worker is not None:  # after the repaint this posts: then the check may start
            QTimer.singleShot(0, partial(self._worker.drawn, answer.generation))

    def _check(self) -> None:
        self._checked_generation = self.generation
        self.checked.emit(check(self.analysis, self.doc.analysis.form))

    def _show_check(self, generation: int, result: object) -> None:
        if generation == self.generation == self.shown_generation:
            self._checked_generation = generation
            self.checked.emit(result)

    def finish(self, timeout_s: float = 60.0) -> bool:
        """Run the event loop until the numbers and the check shown are of the document as it
        is (a screenshot, a script); False if ``timeout_s`` seconds pass first."""
        deadline = time.monotonic() + timeout_s
        while (self._refresh_posted or self._timer.isActive() or self._check_timer.isActive()
               or self._checked_generation != self.generation):
            if time.monotonic() > deadline:
                return False
            QCoreApplication.processEvents()
            time.sleep(0.001)  # the worker's answer is on its way
        return True

    def _frame_passed(self) -> None:
        if self.shown_generation != self.generation:
            self._set_updating(True)

    def _set_updating(self, on: bool) -> None:
        if on != self.is_updating:
            self.is_updating = on
            self.updating.emit(on)

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
