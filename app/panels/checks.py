"""The checks panel: every wiring fault of the sheet (engine.schematic.checks), one line each,
and a warning triangle on the canvas where each one is. A click on a line selects the element
at fault and centres the view on it. Lines and marks follow every edit: the drawing's checks on a
zero timer, so a burst of changes costs one check (where the live analysis follows a region, on
the nets its answer brings, after the numbers are painted), the circuit's once the edits pause,
on the circuit of the last check updated where the edits changed it.
"""

from __future__ import annotations

from PySide6.QtCore import Qt, QTimer
from PySide6.QtWidgets import QDockWidget, QListWidget, QListWidgetItem, QWidget
from shiboken6 import isValid

from portcut.engine import Circuit
from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Change, Connectivity, Document, build_circuit, extract
from portcut.engine.schematic.checks import SheetCheck, circuit_checks, drawing_checks
from portcut.engine.schematic.connectivity import updated_circuit
from portcut.engine.solve.units import parse_frequency

from ..analysis import LiveAnalysis
from ..canvas import Canvas
from ..canvas.grid import to_scene
from ..canvas.marks import CheckMarksItem
from ..workbench import Workbench

__all__ = ["ChecksDock"]

#: How long (ms) the edits must pause before the circuit is checked again: building it costs
#: about half a second on a sheet of 2,000 parts, too long to run after every nudge.
CIRCUIT_PAUSE_MS = 250
#: What each kind of check is called at the head of its line.
_HEADS = {"unconnected": "Unconnected", "shorted": "Shorted", "floating": "Floating",
          "sources": "Ideal sources", "drawing": "Drawing"}


class ChecksDock(QDockWidget):
    """The list of failed checks over the workbench's document, and their marks on the canvas."""

    def __init__(self, workbench: Workbench, canvas: Canvas,
                 parent: QWidget | None = None) -> None:
        super().__init__("Checks", parent)
        self.setObjectName("checks")
        self.workbench, self.canvas = workbench, canvas
        self.list = QListWidget()
        self.list.setAccessibleName("Wiring checks")
        self.list.setWordWrap(True)
        self.list.setSpacing(2)
        self.list.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.list.itemClicked.connect(self._go_to)
        self.list.itemActivated.connect(self._go_to)
        self.setWidget(self.list)
        self.checks: list[SheetCheck] = []
        self._conn: Connectivity | None = None
        self._marks: CheckMarksItem | None = None
        self._drawn: list[SheetCheck] = []
        self._circuit: list[SheetCheck] = []
        # the circuit the last circuit check built, the nets and the frequency it was built on
        self._built: tuple[Circuit, Connectivity, float] | None = None
        self._live: LiveAnalysis | None = None
        self._awaited = False  # the drawing is checked once the live analysis answers
        self._timer = QTimer(self, singleShot=True, interval=0)
        self._timer.timeout.connect(self.refresh)
        self._circuit_timer = QTimer(self, singleShot=True, interval=CIRCUIT_PAUSE_MS)
        self._circuit_timer.timeout.connect(self.refresh_circuit)
        self._unsubscribe = lambda: None
        workbench.documentReplaced.connect(self._follow)
        self._follow(workbench.doc)

    def _follow(self, doc: Document) -> None:
        self._unsubscribe()
        self._circuit_timer.stop()
        self._built, self._awaited = None, False
        self._unsubscribe = doc.subscribe(self._on_change)
        self._timer.start()

    def _on_change(self, change: Change) -> None:
        if change.added or change.removed or change.updated or change.analysis:
            self._circuit_timer.stop()  # the drawing's checks come first, then the circuit's
            self._timer.start()

    def read_nets_from(self, live: LiveAnalysis) -> None:
        """Take the nets from ``live``'s answers while it follows a region, instead of
        extracting them a second time in the GUI thread."""
        self._live = live
        live.analysed.connect(self._answered)

    def refresh(self) -> None:
        """Check the drawing now (the timer calls this once per burst of changes); the
        circuit's checks, which cost a circuit build, follow once the edits pause. Where the
        live analysis follows a region, on the nets its answer brings, once it is in."""
        self._timer.stop()
        live = self._live
        following = live is not None and bool(self.workbench.doc.regions())
        self._awaited = following and live.shown_generation != live.generation
        if not self._awaited:  # the answer for the document as it is came first, if any
            self._check_drawing(live.conn if following and live.analysis is not None else None)

    def _answered(self, analysis: object) -> None:
        if self._awaited:
            self._timer.start()  # after the numbers are painted

    def _check_drawing(self, conn: Connectivity | None) -> None:
        """The drawing's checks on nets ``conn`` (extracted here when None)."""
        doc = self.workbench.doc
        self._conn = conn or extract(doc, previous=self._conn)
        self._drawn = drawing_checks(doc, self._conn)
        # until the circuit is checked again, its last findings stay where their parts do
        self._show(self._drawn + [c for c in self._circuit if c.element_id in doc])
        self._circuit_timer.start()

    def refresh_circuit(self) -> None:
        """Check the circuit the drawing makes (islands, ideal loops) at the analysis
        frequency."""
        self._circuit_timer.stop()
        doc = self.workbench.doc
        self._conn = extract(doc, previous=self._conn)  # the same object when nothing changed
        try:
            freq = parse_frequency(doc.analysis.freq)
        except CircuitError:
            freq = 0.0  # the equivalent panel says what is wrong with the frequency
        try:
            circuit = self._built_circuit(doc, freq)
        except CircuitError:
            self._circuit = []  # the inspector says which value does not read
        else:
            self._circuit = circuit_checks(doc, self._conn, freq, self._drawn, circuit)
        self._show(self._drawn + self._circuit)

    def _built_circuit(self, doc: Document, freq: float) -> Circuit:
        """The circuit of ``doc`` on the current nets at ``freq`` hertz: the one the last check
        built, with only the parts changed or rewired since rebuilt (the engine's
        updated_circuit), so a check after a nudge on a large sheet costs no circuit build."""
        built = self._built
        self._built = None  # until this one is known to be good
        if built is not None and built[2] == freq:
            circuit = updated_circuit(built[0], doc, built[1], self._conn, freq)
        else:
            circuit = build_circuit(doc, self._conn, freq)
        self._built = (circuit, self._conn, freq)
        return circuit

    def _show(self, checks: list[SheetCheck]) -> None:
        if checks == self.checks and self._marks is not None and isValid(self._marks) and \
                self._marks.scene() is self.canvas.scene:
            return  # most edits change no finding: the list and marks stay
        self.checks = checks
        self.list.clear()
        for check in checks:
            line = QListWidgetItem(f"{_HEADS[check.kind]}: {check.message}")
            line.setToolTip(check.message)
            self.list.addItem(line)
        self.setWindowTitle(f"Checks ({len(checks)})" if checks else "Checks")
        self._marks_item().show_points(tuple(dict.fromkeys(c.at for c in checks)))

    def _marks_item(self) -> CheckMarksItem:
        """The canvas item, made again where the scene was cleared (a document replaced)."""
        if self._marks is None or not isValid(self._marks) or \
                self._marks.scene() is not self.canvas.scene:
            self._marks = CheckMarksItem(self.canvas.scene.look)
            self.canvas.scene.addItem(self._marks)
        return self._marks

    def _go_to(self, line: QListWidgetItem) -> None:
        check = self.checks[self.list.row(line)]
        if check.element_id in self.workbench.doc:
            self.canvas.scene.select_ids([check.element_id])
        self.canvas.view.centerOn(to_scene(check.at))
