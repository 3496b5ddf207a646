"""The live analysis's jobs (app.analyser.Analyser, Qt-free) after each kind of edit: every answer
equals a fresh extraction, build and analysis of the same document, the region's part names are
found again only when an edit can change them, and nothing handed out changes afterwards.

The numbers are judged against the closed form of a divider's Thevenin equivalent (common
practice): voc = V R2 / (R1 + R2), z = R1 R2 / (R1 + R2).
"""

from __future__ import annotations

from dataclasses import replace

import pytest
from drawn import divider

from portcut.app.analyser import EVERYTHING, Analyser, Answer, Job, Reach
from portcut.engine.schematic import Document, PlacedPart, Region, Wire, extract
from portcut.engine.schematic.reduction import analyse_region


def source_side() -> Document:
    """The divider (V1 10 V, R1 1k, R2 3k, RL 2k) with a region around V1, R1 and R2; beside
    it a row of 24 resistors in series, wired to nothing else, that the edits leave alone, as
    on a large sheet (where a re-extraction is patched rather than done whole)."""
    doc = divider()
    for i in range(24):
        doc.add(PlacedPart(f"f{i}", "resistor", f"F{i + 1}", (100 + 4 * i, 0), value="1k"))
    members = frozenset(doc.by_designator(d).id for d in ("V1", "R1", "R2"))
    doc.add(Region("reg", "source side", members, ((-3, -1), (11, -1), (11, 8), (-3, 8))))
    return doc


def fresh(answer: Answer, doc: Document) -> None:
    """The answer is the one a fresh extraction and analysis of ``doc`` give."""
    conn = extract(doc)
    assert (answer.conn.net_of_pin, answer.conn.net_of_wire, answer.conn.warnings) == (
        conn.net_of_pin, conn.net_of_wire, conn.warnings)
    again = analyse_region(doc, "reg")
    assert answer.analysis.ok and again.ok
    assert answer.analysis.part_names == again.part_names
    assert list(answer.analysis.circuit) == list(again.circuit)
    assert answer.analysis.equivalent.voc == pytest.approx(again.equivalent.voc, rel=1e-12)
    assert answer.analysis.equivalent.z == pytest.approx(again.equivalent.z, rel=1e-12)


def held(answer: Answer) -> tuple:
    """What an answer hands out, copied, to check later that nothing changed it."""
    a = answer.analysis
    return (dict(answer.conn.net_of_pin), dict(answer.conn.net_of_wire), list(a.circuit),
            set(a.part_names), a.equivalent)


def test_each_job_answers_as_a_fresh_analysis_and_keeps_what_the_edit_cannot_change() -> None:
    doc = source_side()
    analyser = Analyser()
    answers: list[Answer] = []

    def job(reach: Reach) -> Answer:
        answers.append(analyser.analyse(Job(len(answers), doc.snapshot(), "reg", reach)))
        fresh(answers[-1], doc)
        return answers[-1]

    first = job(EVERYTHING)
    assert first.analysis.equivalent.voc == pytest.approx(10 * 3 / 4, rel=1e-12)
    assert first.analysis.equivalent.z == pytest.approx(1e3 * 3e3 / 4e3, rel=1e-12)
    kept = [held(first)]

    r1, r2 = doc.by_designator("R1"), doc.by_designator("R2")
    doc.replace(replace(r1, value="3k"))  # a value typed
    typed = job(Reach(values=frozenset({r1.id})))
    assert typed.analysis.equivalent.voc == pytest.approx(10 * 3 / 6, rel=1e-12)
    assert typed.analysis.equivalent.z == pytest.approx(3e3 * 3e3 / 6e3, rel=1e-12)
    assert typed.analysis.part_names is first.analysis.part_names
    kept.append(held(typed))

    # R2 one step right, its pins still on the top wire and the rail, a link wire laid from
    # its old top pin as a move lays one; then back, the link taken away
    with doc.batch():
        doc.replace(replace(r2, at=(9, 4)))
        doc.add(Wire("link", ((8, 2), (9, 2))))
    moved = job(Reach(sheet=True))
    with doc.batch():
        doc.remove("link")
        doc.replace(r2)
    back = job(Reach(sheet=True))
    for answer in (moved, back):
        assert answer.analysis.equivalent.voc == pytest.approx(5, rel=1e-12)
        assert answer.analysis.part_names is first.analysis.part_names
        kept.append(held(answer))
    assert moved.conn is not back.conn and moved.analysis is not back.analysis

    doc.replace(replace(doc[r1.id], designator="R5"))  # a rename changes the part names
    renamed = job(Reach(sheet=True))
    assert "R5" in renamed.analysis.part_names and "R1" not in renamed.analysis.part_names
    kept.append(held(renamed))

    # nothing handed out was changed by the jobs after it
    assert [held(a) for a in answers] == kept
