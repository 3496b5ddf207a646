"""The editable fields of each kind of element, and how text typed into them becomes a new
version of the element (or a clear refusal). Qt-free; the inspector shows these.

A field's :meth:`Field.write` returns the new elements to put in the document: the edited one
and any that follow it (renaming a part renames it where a controlled source or a coupling names
it; renaming a part or a net label carries a region's chosen port along to its nets' new
names). A refusal is a CircuitError whose message names the part, the field and what is
accepted; the document is never touched here.
"""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass, replace

from portcut.engine.errors import CircuitError, DocumentError, ValueParseError
from portcut.engine.schematic import Block, Document, Element, NetLabel, PlacedPart
from portcut.engine.schematic.captions import UNITS
from portcut.engine.schematic.ports import follow_renames
from portcut.engine.schematic.text import text_problem
from portcut.engine.solve.devices import DEVICE_KINDS, FORMS, PARAMETERS, SYMBOLS
from portcut.engine.solve.kinds import CONTROLLED_BY_CURRENT, CURRENT_CARRYING, SOURCES
from portcut.engine.solve.measured import fit_table, parse_table
from portcut.engine.solve.tolerance import parse_tolerance
from portcut.engine.solve.units import VALUE_UNITS, implausible, parse_value

__all__ = ["QUANTITY", "Field", "fields_for"]

#: What each kind's value is, as the field title.
QUANTITY: dict[str, str] = {
    "resistor": "Resistance", "capacitor": "Capacitance", "inductor": "Inductance",
    "impedance": "Impedance", "voltage_source": "Voltage", "current_source": "Current",
    "vcvs": "Voltage gain", "vccs": "Transconductance", "ccvs": "Transresistance",
    "cccs": "Current gain", "coupling": "Coupling k",
}

Writer = Callable[[Document, Element, str], list[Element]]


@dataclass(frozen=True)
class Field:
    """One line of the inspector: ``name`` (the element attribute), a title, a tooltip, and how
    to read it from and write it to an element; ``lines``: the text may hold tabs and line
    breaks (a table of readings)."""

    name: str
    title: str
    tip: str
    writer: Writer
    unit: str = ""
    warner: Callable[[Element, str], str] | None = None
    reader: Callable[[Element], str] | None = None
    lines: bool = False

    def read(self, element: Element) -> str:
        if self.reader is not None:
            return self.reader(element)
        value = getattr(element, self.name)
        return ", ".join(value) if isinstance(value, tuple) else str(value)

    def write(self, doc: Document, element: Element, text: str) -> list[Element]:
        """The new elements for ``text``; raises CircuitError (ValueParseError or
        DocumentError) with the reason when the text cannot be taken."""
        problem = text_problem(text, self.lines)
        if problem:
            owner = getattr(element, "designator", None) or getattr(element, "name", "")
            raise DocumentError(f"{owner} {self.title.lower()}: {problem}".lstrip())
        return self.writer(doc, element, text)

    def warning(self, element: Element, text: str) -> str:
        """A caution about text the field takes (an unusual magnitude), or ""."""
        return self.warner(element, text) if self.warner else ""


def _designator(doc: Document, element: Element, text: str) -> list[Element]:
    new = replace(element, designator=text.strip())
    if new == element:
        return [new]
    doc.check(new)
    out: list[Element] = [new]
    old_name = element.designator
    for p in doc.parts():
        if p.id == element.id:
            continue
        if p.control == old_name or old_name in p.couples:
            out.append(replace(p, control=new.designator if p.control == old_name else p.control,
                               couples=tuple(new.designator if c == old_name else c
                                             for c in p.couples)))
    # automatic net names hold designators (R1.b): a chosen port follows its nets
    return out + follow_renames(doc, out)


def _value(doc: Document, part: PlacedPart, text: str) -> list[Element]:
    what = f"{part.designator} {QUANTITY[part.kind].lower()}"
    if not text.strip():
        raise ValueParseError(f"{what}: enter a value, e.g. {_EXAMPLE[part.kind]}")
    value = parse_value(text, what=what, unit=VALUE_UNITS[part.kind])
    if part.kind == "coupling" and not abs(value) <= 1:
        raise ValueParseError(f"{what}: {text.strip()!r} is outside -1 … 1; a coupling "
                              "coefficient k has |k| ≤ 1")
    return [replace(part, value=text.strip())]


def _value_warning(part: PlacedPart, text: str) -> str:
    try:
        value = parse_value(text, unit=VALUE_UNITS[part.kind])
    except CircuitError:
        return ""  # the refusal says what is wrong
    reason = implausible(part.kind, value)
    return f"Taken, but check the prefix: {text.strip()} is {reason}" if reason else ""


_EXAMPLE = {"resistor": "4k7", "capacitor": "100n", "inductor": "10m", "impedance": "50",
            "voltage_source": "5", "current_source": "1m", "vcvs": "10", "vccs": "40m",
            "ccvs": "100", "cccs": "100", "coupling": "0.9"}


def _phase(doc: Document, part: PlacedPart, text: str) -> list[Element]:
    if text.strip():
        phase = parse_value(text.strip().removesuffix("°"), what=f"{part.designator} phase")
        if isinstance(phase, complex):
            raise ValueParseError(f"{part.designator} phase: {text!r} must be a real number of "
                                  "degrees")
    return [replace(part, phase_deg=text.strip())]


def _tolerance(doc: Document, part: PlacedPart, text: str) -> list[Element]:
    if text.strip():
        parse_tolerance(text)
    return [replace(part, tolerance=text.strip())]


def _control(doc: Document, part: PlacedPart, text: str) -> list[Element]:
    name = text.strip()
    where = f"{part.designator} control"
    target = doc.by_designator(name) if name else None
    if not name:
        raise DocumentError(f"{where}: name the part whose current controls "
                            f"{part.designator}, e.g. R1")
    if target is None or not isinstance(target, PlacedPart):
        raise DocumentError(f"{where}: there is no part {name!r} on the sheet")
    if target.id == part.id:
        raise DocumentError(f"{where}: {part.designator} cannot be controlled by its own "
                            "current")
    if target.kind not in CURRENT_CARRYING:
        raise DocumentError(f"{where}: {name} is a {target.kind.replace('_', ' ')}, which has "
                            "no single current to sense")
    return [replace(part, control=name)]


def _couples(doc: Document, part: PlacedPart, text: str) -> list[Element]:
    names = tuple(n for n in re.split(r"[\s,;]+", text.strip()) if n)
    where = f"{part.designator} couples"
    if len(names) != 2 or names[0] == names[1]:
        raise DocumentError(f"{where}: name two different inductors, e.g. L1, L2")
    for name in names:
        target = doc.by_designator(name)
        if not (isinstance(target, PlacedPart) and target.kind == "inductor"):
            raise DocumentError(f"{where}: {name!r} is not an inductor on the sheet")
    return [replace(part, couples=names)]


def _name(doc: Document, label: NetLabel, text: str) -> list[Element]:
    name = text.strip()
    if not name:
        raise DocumentError("net label name: enter a name, e.g. vout")
    new = replace(label, name=name)
    return [new] if new == label else [new, *follow_renames(doc, [new])]


#: Device parameters the model does without (it then leaves that element out).
_OPTIONAL = frozenset({"va", "temp_k", "ro", "rx", "cpi", "cmu", "lam", "cgs", "cgd", "gbw",
                       "rin", "rout", "voc", "rl", "vl", "table"})
#: Parameters that may be 0 (an element of zero size: left out).
_ZERO_OK = frozenset({"rx", "cpi", "cmu", "lam", "cgs", "cgd", "rout"})


def _param_field(kind: str, name: str, description: str, unit: str) -> Field:
    """The field of one device parameter. Typing a parameter of one entry form clears the
    other form's, so the part always holds one form (bias point or small-signal values)."""

    def write(doc: Document, part: PlacedPart, text: str) -> list[Element]:
        what = f"{part.designator} {description}"
        text = text.strip()
        if text and name == "table":
            fit_table(parse_table(text, name=what), name=what)
        elif text:
            value = parse_value(text, what=what)
            if isinstance(value, complex) or value != value or abs(value) == float("inf"):
                raise ValueParseError(f"{what}: {text!r} must be a finite real number")
            if value < 0 or (value == 0 and name not in _ZERO_OK):
                bound = "0 or more" if name in _ZERO_OK else "more than 0"
                raise ValueParseError(f"{what}: {text!r} must be {bound}")
        # an empty field is taken: the other form's fields stand empty, and a part left
        # incomplete says what it misses under its derived values
        given = dict(part.params)
        other = [f for f in FORMS.get(kind, ()) if name not in f]
        for key in (other[0] if len(other) == 1 else ()):
            given.pop(key, None)
        given[name] = text
        order = [p[0] for p in PARAMETERS[kind]]
        return [replace(part, params=tuple((k, given[k]) for k in order if given.get(k)))]

    return Field(f"param:{name}", SYMBOLS[name], f"{description[0].upper()}{description[1:]}"
                 f"{' (optional)' if name in _OPTIONAL else ''}", write, unit,
                 reader=lambda part: dict(part.params).get(name, ""), lines=name == "table")


def _device_fields(kind: str) -> list[Field]:
    return [_param_field(kind, *p) for p in PARAMETERS[kind]]


_DESIGNATOR = Field("designator", "Designator", "Reference designator, unique on the sheet: "
                    "a letter, then letters, digits or _", _designator)


def fields_for(element: Element) -> list[Field]:
    """The editable fields of ``element`` (none for wires and junctions)."""
    if isinstance(element, Block):
        return [_DESIGNATOR]
    if isinstance(element, NetLabel):
        if element.style == "ground":
            return []
        return [Field("name", "Net name", "Labels with the same name join anywhere on the "
                      "sheet; gnd is ground", _name)]
    if not isinstance(element, PlacedPart):
        return []
    out = [_DESIGNATOR]
    kind = element.kind
    if kind in QUANTITY:
        unit = UNITS.get(kind, "")
        out.append(Field("value", QUANTITY[kind], f"SI prefixes (4.7k, 100n, 2M; u or µ for "
                         f"micro) or IEC 60062 codes (4k7, 2R2, R47, 4n7), e.g. "
                         f"{_EXAMPLE[kind]}", _value, unit, _value_warning))
    if kind in QUANTITY:
        out.append(Field("tolerance", "Tolerance", "IEC 60062 letter (B 0.1 %, C 0.25 %, "
                         "D 0.5 %, F 1 %, G 2 %, J 5 %, K 10 %, M 20 %) or a percentage, e.g. "
                         "1 %; empty for none", _tolerance))
    if kind in SOURCES:
        out.append(Field("phase_deg", "Phase", "Phase of the source phasor in degrees; empty "
                         "for 0", _phase, "°"))
    if kind in CONTROLLED_BY_CURRENT:
        out.append(Field("control", "Controlled by", "Designator of the part whose current "
                         "(first pin to second, inside the part) controls this source",
                         _control))
    if kind in DEVICE_KINDS:
        out += _device_fields(kind)
    if kind == "coupling":
        out.append(Field("couples", "Couples", "The two inductors coupled, e.g. L1, L2; their "
                         "dots mark each one's first pin", _couples))
    return out
