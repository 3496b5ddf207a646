"""What the user can place: every part kind, ground, net label and junction, with the title,
tooltip and starting value each gets, and the prototype element a placement starts from."""

from __future__ import annotations

import itertools
from dataclasses import dataclass

from portcut.engine.schematic import Document, Element, Junction, NetLabel, PlacedPart
from portcut.engine.schematic.symbols import Point
from portcut.engine.solve.circuit import GROUND

__all__ = ["ENTRIES", "GROUPS", "Entry", "entry", "next_label_name", "prototype"]


@dataclass(frozen=True)
class Entry:
    """One placeable thing. ``key`` is a part kind or "ground", "label", "junction"; ``icon``
    the engine.schematic.symbols kind its icon shows ("" for a junction, drawn as a dot)."""

    key: str
    title: str
    tip: str
    value: str = ""
    icon: str = ""
    group: str = "Passive"
    params: tuple[tuple[str, str], ...] = ()


ENTRIES: tuple[Entry, ...] = (
    Entry("resistor", "Resistor", "Resistance in ohms: 4k7, 4.7k, 470R, 1M0", "1k", "resistor"),
    Entry("capacitor", "Capacitor", "Capacitance in farads: 100n, 4n7, 1µ0", "100n",
          "capacitor"),
    Entry("inductor", "Inductor", "Inductance in henries: 10m, 2.2u", "10m", "inductor"),
    Entry("impedance", "Impedance", "A fixed impedance in ohms", "50", "impedance"),
    Entry("coupling", "Coupling", "Magnetic coupling k between two inductors (|k| ≤ 1); "
          "select the two inductors first to couple them", "0.9", "coupling"),
    Entry("voltage_source", "Voltage source", "Independent voltage source: volts, with an "
          "optional phase in degrees", "5", "voltage_source", "Sources"),
    Entry("current_source", "Current source", "Independent current source: amperes from its "
          "first pin through itself into the pin its arrow points at", "1m", "current_source",
          "Sources"),
    Entry("vcvs", "VCVS", "Voltage-controlled voltage source: gain V/V of the sensed voltage",
          "10", "vcvs", "Controlled"),
    Entry("vccs", "VCCS", "Voltage-controlled current source: transconductance in siemens",
          "10m", "vccs", "Controlled"),
    Entry("ccvs", "CCVS", "Current-controlled voltage source: transresistance in ohms times "
          "the current in the controlling part", "100", "ccvs", "Controlled"),
    Entry("cccs", "CCCS", "Current-controlled current source: gain A/A times the current in "
          "the controlling part", "10", "cccs", "Controlled"),
    Entry("opamp", "Op-amp", "Ideal operational amplifier (nullor), output referred to ground",
          "", "opamp", "Controlled"),
    Entry("opamp_finite", "Op-amp, finite gain", "Operational amplifier of open-loop gain A0 "
          "with one pole (gain-bandwidth product), input and output resistance", "",
          "opamp_finite", "Controlled",
          (("a0", "100k"), ("gbw", "1M"), ("rin", "1M"), ("rout", "75"))),
    Entry("bjt", "Bipolar transistor", "Small-signal bipolar transistor (hybrid-π; NPN and PNP "
          "alike): from the bias point I_C, β, V_A, T or from gm, rπ, ro", "", "bjt",
          "Devices", (("ic", "1m"), ("beta", "100"), ("va", "50"), ("temp_k", "300"))),
    Entry("mosfet", "MOSFET", "Small-signal enhancement MOSFET (n- and p-channel alike): from "
          "the bias point I_D, V_ov, λ or from gm, ro", "", "mosfet", "Devices",
          (("id", "1m"), ("vov", "200m"), ("lam", "20m"))),
    Entry("measured_source", "Measured source", "A source known from bench readings, drawn as "
          "its Thevenin block: Voc and the voltage V_L under a known load R_L, or readings "
          "(load, voltage; one pair a line or ;-separated, 'open' for no load) fitted by least "
          "squares", "", "measured_source", "Sources",
          (("voc", "5"), ("rl", "1k"), ("vl", "4.5"))),
    Entry("ground", "Ground", "The reference net, gnd", icon="ground", group="Connections"),
    Entry("label", "Net label", "Names a net; equal names join anywhere on the sheet",
          icon="label", group="Connections"),
    Entry("junction", "Junction", "Joins every wire through its point, crossings included",
          group="Connections"),
)
GROUPS: tuple[str, ...] = tuple(dict.fromkeys(e.group for e in ENTRIES))
_BY_KEY = {e.key: e for e in ENTRIES}


def entry(key: str) -> Entry:
    return _BY_KEY[key]


def next_label_name(doc: Document) -> str:
    """The lowest free net label name N1, N2, ..."""
    taken = {label.name for label in doc.labels()}
    return next(f"N{n}" for n in itertools.count(1) if f"N{n}" not in taken)


def prototype(doc: Document, key: str, at: Point, couples: tuple[str, ...] = ()) -> Element:
    """A new element of ``key`` at ``at`` with a fresh id and designator (not yet added).
    ``couples`` are the inductors a coupling starts with."""
    if key == "junction":
        return Junction(doc.new_id(Junction), at)
    if key in ("ground", "label"):
        name = GROUND if key == "ground" else next_label_name(doc)
        return NetLabel(doc.new_id(NetLabel), name, at, style=key)
    return PlacedPart(doc.new_id(PlacedPart), key, doc.next_designator(key), at,
                      value=_BY_KEY[key].value,
                      couples=couples if key == "coupling" else (), params=_BY_KEY[key].params)
