"""The equivalent panel and the command line's table say the same about the same region: which
forms exist and why one does not, Z as series parts, and the matched load. Each sheet is opened
in the window and saved for ``portcut reduce``; every sentence the panel shows must be a line of
the table. The cases are the ones where wording differs most: no Thevenin form, no Norton form,
a negative Z, and a reactive Z above DC."""

from __future__ import annotations

import pytest
from sheets import divider, open_sheet, settle

from portcut.engine.cli import commands as cli
from portcut.engine.schematic import Analysis, Document, PlacedPart, Region
from portcut.engine.schematic.fileformat import save


def _with_region(doc: Document, designators: list[str], analysis: Analysis) -> Document:
    members = frozenset(doc.by_designator(d).id for d in designators)
    doc.add(Region(doc.new_id(Region), "src", members))
    doc.set_analysis(analysis)
    return doc


def _current_source() -> Document:
    """The divider with V1 replaced by an ideal 2 mA source, I1 alone in the region."""
    doc = divider()
    doc.remove(doc.by_designator("V1").id)
    doc.add(PlacedPart(doc.new_id(PlacedPart), "current_source", "I1", (0, 4), 270, value="2m"))
    return _with_region(doc, ["I1"], Analysis())


def _panel_sentences(window) -> list[str]:
    panel = window.equivalent_dock
    lines = panel.forms.text().split("\n")
    lines += [label.text() for label in (panel.realisation, panel.power)]
    return [line.replace("\u00a0", " ") for line in lines]


def _table_lines(capsys, doc: Document, tmp_path) -> list[str]:
    path = tmp_path / "sheet.portcut.json"
    save(doc, path)
    code = cli.main(["reduce", str(path)])
    out, err = capsys.readouterr()
    assert code == 0, err
    return out.splitlines()


CASES = {
    # common practice: an ideal current source has infinite impedance: no Thevenin form
    "no Thevenin form": (_current_source, "No Thevenin form: Z is infinite"),
    # common practice: an ideal voltage source has zero impedance: no Norton form
    "no Norton form": (lambda: _with_region(divider(), ["V1"], Analysis(form="norton")),
                       "No Norton form: Z is zero"),
    # common practice (parallel resistors): Z = R1 R2 / (R1 + R2) = (-1k)(3k) / 2k = -1.5 kΩ
    "negative Z": (lambda: _with_region(divider(r1="-1k"), ["V1", "R1", "R2"], Analysis()),
                   "Z at DC = -1.5 kΩ (a negative resistance: the region is active)"),
    # common practice: R1 in parallel with C1 is resistive plus capacitive at 1 kHz
    "reactive Z above DC": (
        lambda: _with_region(divider(second="capacitor", second_value="100n"),
                             ["V1", "R1", "C1"], Analysis(freq="1k", basis="rms")),
        "in series with"),
}


@pytest.mark.parametrize("case", list(CASES))
def test_the_panel_and_the_command_line_say_the_same(window, capsys, tmp_path, case):
    make, expected = CASES[case]
    doc = make()
    table = _table_lines(capsys, doc, tmp_path)
    open_sheet(window, doc)
    settle()
    assert window.analysis.analysis is not None and window.analysis.analysis.ok
    sentences = _panel_sentences(window)
    assert any(expected in s for s in sentences), sentences
    for sentence in sentences:
        assert sentence in table, (sentence, table)
    # the chosen form's sentence comes first in both
    assert doc.analysis.form.title() in sentences[0]
    assert table.index(sentences[0]) < table.index(sentences[1])
