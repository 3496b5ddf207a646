"""The live analysis in the background: a burst of values typed in the inspector ends on the
last one and never shows an older result after a newer one; an answer or a check for a state
the document has left is discarded; the panel says it is updating while the numbers lag.

The worker runs here on the small divider (``inline_parts = 0`` and ``inline_ms = 0``: no
job counts as small or cheap); where a test needs an answer
to be late, it holds the worker at a gate instead of relying on timing. Numbers are judged
against the divider's Thevenin closed form (common practice): Voc = V1 R2 / (R1 + R2),
Z = R1 R2 / (R1 + R2).
"""

from __future__ import annotations

import threading

import pytest
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from PySide6.QtWidgets import QApplication
from sheets import SOURCE_SIDE, divider, lasso, open_sheet

from portcut.app import worker as worker_module
from portcut.app.analyser import Answer, Job, Reach
from portcut.engine import EquivalenceReport
from portcut.engine.schematic import Document
from portcut.engine.solve.units import parse_value

V1, R1 = 10.0, 1e3


def _thevenin_z(r2: float) -> float:
    return R1 * r2 / (R1 + r2)


def _in_background(window, drive, r2: str = "2k"):
    """The divider with its source side drawn as the region, R2 selected, analysed from now
    on by the worker."""
    open_sheet(window, divider(r2=r2))
    lasso(drive, SOURCE_SIDE)
    assert window.analysis.analysis.ok, window.analysis.analysis.message
    window.analysis.inline_parts = window.analysis.inline_ms = 0
    drive.key(Qt.Key.Key_S)
    drive.click(drive.by("R2").at)
    return window.analysis, window.inspector.editors["value"].edit


def _type(edit, text: str) -> None:
    """Real keys: select all, the text, Enter; then one pass of the event loop, as between
    keystrokes, so that the analysis of one edit may still run when the next is typed."""
    edit.setFocus()
    QTest.keyClick(edit, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    QTest.keyClicks(edit, text)
    QTest.keyClick(edit, Qt.Key.Key_Return)
    QApplication.processEvents()


def _settled(qtbot, live) -> None:
    qtbot.waitUntil(lambda: live.shown_generation == live.generation and not live.is_updating,
                    timeout=10000)


class _Gate:
    """Holds the worker inside ``function`` until opened; ``entered`` says it got there."""

    def __init__(self, function):
        self.function, self.entered, self.open = function, threading.Event(), threading.Event()

    def __call__(self, *args):
        self.entered.set()
        assert self.open.wait(10), "the test never opened the gate"
        return self.function(*args)


def test_a_burst_of_typed_values_ends_on_the_last_and_never_goes_back(window, drive, qtbot):
    live, edit = _in_background(window, drive)
    panel = window.equivalent_dock
    shown: list[tuple[int, int, float, str]] = []  # generation, document's, Z, R2 at the time
    checks: list[int] = []

    def record(analysis) -> None:  # connected after the panel: its numbers are set by now
        shown.append((live.shown_generation, live.generation, analysis.equivalent.z.real,
                      drive.by("R2").value))

    live.analysed.connect(record)
    live.checked.connect(lambda _: checks.append(live.generation))
    typed = [f"{k}k" for k in range(4, 23)] + ["3k"]  # 20 values, the last one 3 kΩ
    for text in typed:
        _type(edit, text)
    _settled(qtbot, live)
    qtbot.waitUntil(lambda: bool(checks) and checks[-1] == live.generation, timeout=10000)

    assert drive.by("R2").value == "3k"
    eq = live.analysis.equivalent
    assert eq.z.real == pytest.approx(_thevenin_z(3e3), rel=1e-12)  # 750 Ω
    assert eq.voc.real == pytest.approx(V1 * 3e3 / (R1 + 3e3), rel=1e-12)  # 7.5 V
    assert panel.values.text("z", "rectangular") == "750 Ω"
    assert panel.check.text().startswith("Reduced circuit matches")
    generations = [g for g, _, _, _ in shown]
    assert generations == sorted(set(generations)), generations  # never an older one again
    for generation, current, z, r2 in shown:
        assert generation == current  # only answers for the document as it was then
        assert z == pytest.approx(_thevenin_z(parse_value(r2)), rel=1e-12)
    assert checks == sorted(checks)


def test_an_answer_for_a_state_the_document_left_is_discarded(window, drive, qtbot):
    live, edit = _in_background(window, drive)
    gate = _Gate(live._analyser.analyse)
    live._analyser.analyse = gate
    arrived: list[int] = []
    live._answered.connect(lambda answer: arrived.append(answer.generation))
    shown: list[float] = []
    live.analysed.connect(lambda a: shown.append(a.equivalent.z.real))

    _type(edit, "5k")
    assert gate.entered.wait(10)  # the worker holds the 5 kΩ state
    stale = live.generation
    qtbot.waitUntil(lambda: live.is_updating, timeout=10000)  # older than a frame by now
    assert "updating" in window.equivalent_dock.windowTitle()
    _type(edit, "3k")  # waits while the worker is held
    gate.open.set()
    _settled(qtbot, live)

    assert stale in arrived and arrived[-1] == live.generation > stale
    assert shown == [pytest.approx(_thevenin_z(3e3), rel=1e-12)]  # the 5 kΩ one never shown
    assert window.equivalent_dock.windowTitle() == "Equivalent"


def test_the_check_of_a_state_left_behind_is_dropped(window, drive, qtbot, monkeypatch):
    live, edit = _in_background(window, drive)
    gate = _Gate(worker_module.check)
    monkeypatch.setattr(worker_module, "check", gate)
    reported: list[int] = []
    live._reported.connect(lambda generation, _: reported.append(generation))
    checked: list[object] = []
    live.checked.connect(checked.append)

    _type(edit, "5k")
    assert gate.entered.wait(10)  # the numbers are out, the check is held
    first = live.generation
    qtbot.waitUntil(lambda: live.shown_generation == first, timeout=10000)
    _type(edit, "3k")
    gate.open.set()
    _settled(qtbot, live)
    qtbot.waitUntil(lambda: bool(reported), timeout=10000)

    assert reported == [live.generation]  # the held check was never handed over
    assert len(checked) == 1 and isinstance(checked[0], EquivalenceReport)
    assert live.analysis.equivalent.z.real == pytest.approx(_thevenin_z(3e3), rel=1e-12)


class _NoRegion:
    """An analyser with nothing to analyse: every job answers at once."""

    def analyse(self, job):
        return Answer(job.generation, None, None, None, 0.0)


def test_the_check_waits_until_the_numbers_are_drawn(monkeypatch):
    # the check's Python work must not contend with the repaint of the numbers: it starts only
    # once the GUI thread says it has drawn them
    monkeypatch.setattr(worker_module, "DRAW_WAIT_S", 60.0)
    numbers, reported = threading.Event(), threading.Event()
    worker = worker_module.AnalysisWorker(_NoRegion(), lambda answer: numbers.set(),
                                          lambda generation, result: reported.set())
    worker.submit(Job(1, Document(), None, Reach()))
    assert numbers.wait(10)
    assert not reported.wait(0.2)  # not drawn yet: no check
    worker.drawn(1)
    assert reported.wait(10)
    worker.stop()


def test_the_check_of_a_state_the_document_moved_on_from_is_dropped(monkeypatch):
    # told that the document is at a newer state, the worker drops the check it was waiting
    # to run; a check handed over with its answer (analysed in the GUI thread) runs alone
    monkeypatch.setattr(worker_module, "DRAW_WAIT_S", 60.0)
    numbers, reported, generations = threading.Event(), threading.Event(), []

    def report(generation, result) -> None:
        generations.append(generation)
        reported.set()

    worker = worker_module.AnalysisWorker(_NoRegion(), lambda answer: numbers.set(), report)
    worker.submit(Job(1, Document(), None, Reach()))
    assert numbers.wait(10)
    numbers.clear()
    worker.moved_on(2)  # generation 1's check, waiting for the numbers to be drawn, is dropped
    worker.check(Job(3, Document(), None, Reach()), Answer(3, None, None, None, 0.0))
    assert not worker.busy  # a check leaves the analyser free for the GUI thread
    worker.drawn(3)
    assert reported.wait(10)
    worker.stop()
    assert generations == [3] and not numbers.is_set()  # its numbers were not handed over


def test_a_cheap_job_on_a_large_sheet_is_answered_at_once(window, drive, monkeypatch):
    # where a job of the same reach last took less than inline_ms, it runs in the GUI thread:
    # the numbers are there when the Enter key returns, with no job for the worker; the check
    # still runs in the background
    live, edit = _in_background(window, drive)
    live.inline_ms = 60e3
    submitted, checked_in = [], []
    worker = live._background()
    monkeypatch.setattr(worker, "submit", submitted.append)
    real = worker_module.check
    monkeypatch.setattr(worker_module, "check", lambda *args: (
        checked_in.append(threading.current_thread()), real(*args))[1])
    edit.setFocus()
    QTest.keyClick(edit, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    QTest.keyClicks(edit, "3k")
    QTest.keyClick(edit, Qt.Key.Key_Return)
    QApplication.sendPostedEvents()  # the analysis request, posted ahead of the paints

    assert live.shown_generation == live.generation and not submitted
    assert live.analysis.equivalent.z.real == pytest.approx(_thevenin_z(3e3), rel=1e-12)
    assert live.finish(10)
    assert checked_in and threading.main_thread() not in checked_in
