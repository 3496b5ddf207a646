"""A move that leaves every pin on its net keeps the live analysis's circuit (no rebuild); one
that renames or changes a net builds it again. Either way the circuit is the one a fresh build
gives and the numbers are the divider's Thevenin closed form (common practice):
Voc = V1 R2 / (R1 + R2), Z = R1 R2 / (R1 + R2)."""

from __future__ import annotations

from dataclasses import replace

import pytest
from PySide6.QtCore import Qt
from sheets import SOURCE_SIDE, divider, lasso, open_sheet, settle

from portcut.app.commands import AddElements, RemoveElements, ReplaceElements
from portcut.engine.schematic import Wire, build_circuit, extract
from portcut.engine.solve.units import parse_frequency


def _fresh(doc):
    return build_circuit(doc, extract(doc), parse_frequency(doc.analysis.freq))


def _divider_numbers(live) -> None:
    eq = live.analysis.equivalent
    assert eq.voc.real == pytest.approx(10 * 3e3 / 4e3, rel=1e-12)  # 7.5 V
    assert eq.z.real == pytest.approx(1e3 * 3e3 / 4e3, rel=1e-12)   # 750 Ω


def _analysed(window, drive):
    """The divider with its source side as the region: the live analysis, the document and the
    circuit the analysis keeps."""
    open_sheet(window, divider())
    lasso(drive, SOURCE_SIDE)
    return window.analysis, drive.doc, window.analysis.analysis.circuit


def _push(window, command) -> None:
    window.workbench.push(command)
    settle()


def test_a_nudge_with_the_wires_following_keeps_the_circuit(window, drive):
    live, doc, kept = _analysed(window, drive)
    drive.key(Qt.Key.Key_S)
    drive.click(drive.by("RL").at)
    before = drive.by("RL").at
    drive.key(Qt.Key.Key_Right)  # the attached wires follow: every pin stays on its net
    settle()
    assert drive.by("RL").at != before
    assert live.analysis.circuit is kept and kept == _fresh(doc)
    _divider_numbers(live)
    drive.key(Qt.Key.Key_R)  # turned: its pins swap places, the wires follow
    settle()
    assert live.analysis.circuit == _fresh(doc)
    _divider_numbers(live)


def test_a_renamed_net_builds_the_circuit_again(window, drive):
    live, doc, kept = _analysed(window, drive)
    label = next(n for n in doc.labels() if n.name == "out")
    _push(window, ReplaceElements(doc, [replace(label, name="vout")], "rename"))
    circuit = live.analysis.circuit
    assert circuit is not kept and circuit == _fresh(doc)
    assert "vout" in circuit.nets() and "out" not in circuit.nets()
    _divider_numbers(live)


def test_a_stray_wire_keeps_the_circuit_and_a_deleted_part_rebuilds_it(window, drive):
    live, doc, kept = _analysed(window, drive)
    stray = Wire(doc.new_id(Wire), ((20, 0), (22, 0)))  # touches no pin
    _push(window, AddElements(doc, [stray], "wire"))
    _push(window, RemoveElements(doc, [stray.id], "unwire"))
    assert live.analysis.circuit is kept
    _push(window, RemoveElements(doc, [drive.by("RL").id], "delete"))
    circuit = live.analysis.circuit
    assert circuit is not kept and circuit == _fresh(doc) and "RL" not in circuit
