"""A background thread that runs the live analysis's jobs, newest first and only the newest.

Jobs wait in one slot: a job submitted while another waits takes its place (carrying the
dropped job's reach), so the thread never works on a state the document has already left
behind. After each job it hands over the numbers, waits until the GUI thread says it has drawn
them (:meth:`AnalysisWorker.drawn`; at most :data:`DRAW_WAIT_S`), so that the check's Python
work does not contend with that repaint for the interpreter lock, then runs the equivalence
check of the same analysis unless the document has moved on (a newer job waits, or the GUI
thread said so with :meth:`AnalysisWorker.moved_on`), and hands that over too unless it moved
on meanwhile. A job the GUI thread analysed itself (a cheap one) comes with its answer
(:meth:`AnalysisWorker.check`): only its check runs here. The hand-over functions are called
in the worker thread; the app passes the emit of a queued Qt signal, so they reach the GUI
thread through its event loop.

A Python thread (not a QThread): the work needs no event loop of its own, and a daemon thread
never holds up the application's exit. It shares the interpreter with the GUI thread: numpy and
SuperLU release the interpreter lock while they compute, and for the Python parts of the work
the interpreter hands the lock over at every switch interval, which the worker sets to
:data:`SWITCH_S` so that an input event waits at most about that long.
"""

from __future__ import annotations

import sys
import threading
from collections.abc import Callable

from .analyser import Analyser, Answer, Job, check

__all__ = ["DRAW_WAIT_S", "SWITCH_S", "AnalysisWorker"]

#: The interpreter's thread switch interval while a worker exists (seconds; Python's own
#: default is 5 ms, a third of a frame).
SWITCH_S = 0.001
#: The longest the check waits for the numbers to be drawn (seconds): an answer the GUI thread
#: drops as stale is never drawn, and a newer job is then on its way.
DRAW_WAIT_S = 0.1


class AnalysisWorker:
    """Runs ``analyser``'s jobs in one daemon thread; ``numbers(answer)`` and
    ``report(generation, check result)`` receive the results, in the worker thread."""

    def __init__(self, analyser: Analyser, numbers: Callable[[Answer], None],
                 report: Callable[[int, object], None]) -> None:
        self.analyser = analyser
        self._numbers, self._report = numbers, report
        self._cond = threading.Condition()
        # the next job, with its answer where only its check is left to run
        self._waiting: tuple[Job, Answer | None] | None = None
        self._analysing = False
        self._stopped = False
        self._drawn = 0  # the newest generation whose numbers the GUI thread has drawn
        self._latest = 0  # the document's newest generation, as far as the worker knows
        self._thread: threading.Thread | None = None

    @property
    def busy(self) -> bool:
        """True while a job is analysed or waits to be (the analyser is the worker's then); a
        check running or waiting leaves the analyser free."""
        with self._cond:
            return self._analysing or (self._waiting is not None and self._waiting[1] is None)

    def submit(self, job: Job) -> None:
        """Analyse ``job`` next, in place of any job still waiting."""
        with self._cond:
            if self._waiting is not None:
                job = job.after(self._waiting[0])
            self._put(job, None)

    def check(self, job: Job, answer: Answer) -> None:
        """Run the equivalence check of ``answer``, ``job``'s analysis worked out in the GUI
        thread, next (in place of any check waiting; the GUI thread analyses only while the
        worker is not :attr:`busy`)."""
        with self._cond:
            self._put(job, answer)

    def _put(self, job: Job, answer: Answer | None) -> None:
        self._waiting = (job, answer)
        self._latest = max(self._latest, job.generation)
        if self._thread is None:
            sys.setswitchinterval(SWITCH_S)
            self._thread = threading.Thread(target=self._run, name="live analysis",
                                            daemon=True)
            self._thread.start()
        self._cond.notify()

    def moved_on(self, generation: int) -> None:
        """The document is at ``generation`` now: the check of an older one is dropped."""
        with self._cond:
            self._latest = max(self._latest, generation)
            self._cond.notify()

    def drawn(self, generation: int) -> None:
        """The GUI thread has drawn the numbers of ``generation``: its check may start."""
        with self._cond:
            self._drawn = max(self._drawn, generation)
            self._cond.notify()

    def stop(self) -> None:
        """End the thread after the job it runs (the waiting one is dropped)."""
        with self._cond:
            self._stopped, self._waiting = True, None
            self._cond.notify()

    def _moved_on(self, job: Job) -> bool:
        with self._cond:
            return self._waiting is not None or self._stopped or self._latest > job.generation

    def _run(self) -> None:
        while True:
            with self._cond:
                self._analysing = False
                while self._waiting is None and not self._stopped:
                    self._cond.wait()
                if self._stopped:
                    return
                (job, answer), self._waiting = self._waiting, None
                self._analysing = answer is None
            try:
                self._work(job, answer)
            except RuntimeError:  # the receiving Qt object is gone: the window closed
                self.stop()

    def _work(self, job: Job, answer: Answer | None) -> None:
        if answer is None:
            answer = self.analyser.analyse(job)
            with self._cond:
                self._analysing = False
            self._numbers(answer)
        with self._cond:
            self._cond.wait_for(lambda: self._drawn >= job.generation or self._stopped
                                or self._waiting is not None or self._latest > job.generation,
                                timeout=DRAW_WAIT_S)
        if self._moved_on(job):
            return  # the check of a state already left behind: dropped
        result = check(answer.analysis, job.doc.analysis.form)
        if not self._moved_on(job):
            self._report(job.generation, result)
