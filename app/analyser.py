"""The live analysis's work, free of Qt: one job analyses one state of the document.

A :class:`Job` carries the document (a snapshot when the work runs in the background), the
region to analyse, the generation number of that document state and how far the changes since
the last job reach (:class:`Reach`). The :class:`Analyser` keeps between jobs what the work
needs and renews it only as far as the reach goes:

* the sheet's connectivity, re-extracted only when something is drawn, moved or deleted (a
  move joins again only the nets it touches, those of the link wires it lays or takes back
  included);
* the circuit, updated then too (engine.schematic.connectivity.updated_circuit: after a move,
  only the parts whose nets changed are rebuilt, none where the move kept its connections;
  rebuilt whole after an addition or removal, and on a frequency change where collapsed blocks
  stand in for their contents); where only values were typed, just those parts are rebuilt and
  swapped in (engine.Circuit.replaced), so a value edit on a large sheet costs about one solve;
* a change of the region alone (members, outline, polarity) reuses both;
* the region's part names, kept while the region and the circuit's part names stay (a value
  typed, a move that updates the circuit rather than building it again).

Everything it hands out (Connectivity, Circuit, RegionAnalysis) is new for each job and never
changed afterwards (the part names, a frozenset, may be shared by several), so an answer may be
read in another thread while the next job runs. One Analyser runs one job at a time (the live
analysis runs a job in the GUI thread only while app.worker has none).
"""

from __future__ import annotations

import time
from dataclasses import dataclass, replace

from portcut.engine import Circuit, EquivalenceReport
from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Connectivity, Document, Region, build_circuit, extract
from portcut.engine.schematic.connectivity import updated_circuit
from portcut.engine.schematic.reduction import (
    RegionAnalysis,
    analyse_region,
    equivalence,
    region_part_names,
)
from portcut.engine.solve.units import parse_frequency

__all__ = ["EVERYTHING", "Analyser", "Answer", "Job", "Reach", "check"]


@dataclass(frozen=True)
class Reach:
    """How far the changes since the last analysis reach."""

    #: Something drawn, moved or deleted: connectivity is extracted again (only the nets the
    #: changed elements touch) and the circuit updated from it (only the parts that changed or
    #: whose pins changed nets).
    sheet: bool = False
    #: Ids of the parts whose value alone changed: just they are rebuilt.
    values: frozenset[str] = frozenset()

    def merged(self, later: Reach) -> Reach:
        """The reach of these changes followed by ``later``'s (a dropped job's reach is
        carried into the next)."""
        return Reach(self.sheet or later.sheet, self.values | later.values)


#: The reach of a new document: everything.
EVERYTHING = Reach(sheet=True)


@dataclass(frozen=True)
class Job:
    """One state of the document to analyse."""

    generation: int
    doc: Document
    region_id: str | None
    reach: Reach

    def after(self, dropped: Job) -> Job:
        """This job standing in for ``dropped`` as well, which will not run."""
        return replace(self, reach=dropped.reach.merged(self.reach))


@dataclass(frozen=True)
class Answer:
    """A job's result: the analysis (None: no region) with the connectivity it was read off,
    and how long the work took (seconds)."""

    generation: int
    region_id: str | None
    analysis: RegionAnalysis | None
    conn: Connectivity | None
    seconds: float


class Analyser:
    """The connectivity and circuit kept between jobs, and the work of one job."""

    def __init__(self) -> None:
        self.conn: Connectivity | None = None
        self._circuit: Circuit | None = None
        self._circuit_hz: float | None = None
        #: The processor time the last job took (seconds; the thread's own, so not the time it
        #: waited for the interpreter lock in the background), by whether it extracted the
        #: sheet again.
        self.took: dict[bool, float] = {}
        # what earlier jobs with no region to analyse left to do
        self._reach = EVERYTHING
        # a region, a circuit and the region's part names on it
        self._named: tuple[Region, Circuit, frozenset[str]] | None = None

    def analyse(self, job: Job) -> Answer:
        """Analyse ``job``'s region of ``job``'s document."""
        start, cpu = time.perf_counter(), time.thread_time()
        self._reach = self._reach.merged(job.reach)
        analysis = None if job.region_id is None else self._analysed(job.doc, job.region_id)
        self.took[job.reach.sheet] = time.thread_time() - cpu
        return Answer(job.generation, job.region_id, analysis, self.conn,
                      time.perf_counter() - start)

    def _analysed(self, doc: Document, region_id: str) -> RegionAnalysis:
        try:
            hz = parse_frequency(doc.analysis.freq)
        except CircuitError:
            self._update_sheet(doc, None)
            return analyse_region(doc, region_id, conn=self.conn)  # says what is wrong
        self._update_sheet(doc, hz)
        return analyse_region(doc, region_id, conn=self.conn, freq=hz, circuit=self._circuit,
                              part_names=self._part_names(doc, region_id))

    def _part_names(self, doc: Document, region_id: str) -> frozenset[str] | None:
        """The region's part names on the kept circuit (None: no circuit kept): the ones found
        before while the region is the same and the circuit holds parts of the same names
        (engine.Circuit.same_names), since only a change to either can change them."""
        region, circuit = doc[region_id], self._circuit
        if circuit is None or not isinstance(region, Region):
            return None
        named = self._named
        if named is None or named[0] is not region or not circuit.same_names(named[1]):
            named = self._named = (region, circuit, region_part_names(doc, region, circuit))
        return named[2]

    def _update_sheet(self, doc: Document, hz: float | None) -> None:
        """Bring the kept connectivity and circuit up to date with ``doc``."""
        reach, self._reach = self._reach, Reach()
        before = None
        if reach.sheet or self.conn is None:
            # joins again only the nets a move touched
            before, self.conn = self.conn, extract(doc, previous=self.conn)
            if before is None:
                self._circuit = None
        if hz != self._circuit_hz and doc.blocks():
            self._circuit = None  # blocks stand in by their equivalent at the frequency
        if hz is None:
            self._circuit = None
            return
        try:
            if self._circuit is None:
                self._circuit = build_circuit(doc, self.conn, hz)
            elif before is not None:  # rebuilds only the parts the edits changed or rewired
                self._circuit = updated_circuit(self._circuit, doc, before, self.conn, hz)
            elif reach.values:
                sub = Document()
                for eid in sorted(reach.values):
                    if eid in doc:
                        sub.add(doc[eid])
                self._circuit = self._circuit.replaced(build_circuit(sub, self.conn, hz))
        except CircuitError:
            self._circuit = None  # analyse_region builds again and reports the reason
        self._circuit_hz = hz


def check(analysis: RegionAnalysis | None, form: str) -> EquivalenceReport | str:
    """The equivalence check of ``analysis`` in ``form``, or the reason there is none."""
    if analysis is None or not analysis.ok:
        return ("no region to check" if analysis is None
                else "no equivalent to check: the cut is not valid")
    try:
        return equivalence(analysis, form)
    except CircuitError as exc:
        return str(exc)
