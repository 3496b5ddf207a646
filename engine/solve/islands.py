"""Existence rules at one frequency class (DC or not), see docs/method.md: the galvanically
separate islands of a netlist and whether each has a reference (:class:`Islands`), and loops of
branches that fix a voltage but not their current (:func:`check_voltage_loops`)."""

from __future__ import annotations

from collections.abc import Sequence

import networkx as nx
import numpy as np

from ..errors import SingularCircuitError
from . import memo_keys
from .branches import (
    CONDUCTING_EDGES,
    CURRENT_EDGES,
    LOOP_RANK,
    SENSE_EDGES,
    VOLTAGE_EDGES,
    components,
    has_loop,
    pairs,
)
from .circuit import KIND_CODE
from .mna import Netlist
from .names import listing, plural

__all__ = ["SHORT", "Islands", "check_voltage_loops", "islands"]

#: The name a port short takes in a loop's message.
SHORT = "the port short"


class Islands:
    """The galvanically separate islands of a netlist at one frequency class (DC or not).

    ``labels[net_id]`` is the island of each net; the island holding the first of the given
    references is the reference island. Every other island is classified:

    * nothing but magnetic coupling links it (no current source crosses to it, nothing senses a
      voltage between it and another island): it gets its own reference net (``pinned``);
    * a controlled current source crosses to it and a controlled source senses its potential:
      the equations fix that potential, so it is solved without a reference (``solved``);
    * anything else makes the equations singular: :meth:`problem` words why.
    """

    def __init__(self, netlist: Netlist, dc: bool, references: Sequence[str],
                 short: tuple[int, int] | None = None) -> None:
        self.netlist, self.dc = netlist, dc
        n = netlist.net_count
        a, b, _ = pairs(netlist, CONDUCTING_EDGES[dc])
        if short is not None:
            a, b = np.append(a, short[0]), np.append(b, short[1])
        self.labels = labels = components(n, a, b)
        ref_net = next((netlist.index[r] for r in references if r in netlist.index), 0)
        self.reference = int(labels[ref_net]) if n else 0
        count = int(labels.max()) + 1 if n else 0
        self.solved: set[int] = set()
        self._problems: dict[int, str] = {}
        if count <= 1:
            self.pinned = np.array([ref_net] if n else [], dtype=np.intp)
            return
        ca, cb, current = pairs(netlist, CURRENT_EDGES)
        controlled = netlist.codes.take(current) != KIND_CODE["current_source"]
        sa, sb, _ = pairs(netlist, SENSE_EDGES)
        self._crossing = labels[ca] != labels[cb]
        self._sensing = labels[sa] != labels[sb]
        crossed = self._touches(labels[ca], labels[cb], self._crossing, count)
        crossed_by_control = self._touches(labels[ca], labels[cb], self._crossing & controlled,
                                           count)
        sensed = self._touches(labels[sa], labels[sb], self._sensing, count)
        own = ~crossed & ~sensed
        solved = crossed_by_control & sensed
        own[self.reference] = solved[self.reference] = False
        self.solved = set(np.flatnonzero(solved).tolist())
        for label in np.flatnonzero(~own & ~solved).tolist():
            if label != self.reference:
                self._problems[label] = ""
        first_net = np.unique(labels, return_index=True)[1]
        chosen = {self.reference: ref_net}
        for r in references:
            net = netlist.index.get(r)
            if net is not None and own[labels[net]] and labels[net] not in chosen:
                chosen[int(labels[net])] = net
        for label in np.flatnonzero(own).tolist():
            chosen.setdefault(label, int(first_net[label]))
        self.pinned = np.array(sorted(chosen.values()), dtype=np.intp)

    @staticmethod
    def _touches(la: np.ndarray, lb: np.ndarray, mask: np.ndarray, count: int) -> np.ndarray:
        return (np.bincount(la[mask], minlength=count)
                + np.bincount(lb[mask], minlength=count)) > 0

    def island(self, net: str) -> int:
        return int(self.labels[self.netlist.index[net]])

    def joined(self, net: str) -> bool:
        """True when the equations fix ``net``'s potential relative to the reference."""
        label = self.island(net)
        return label == self.reference or label in self.solved

    def problem(self, label: int) -> str | None:
        """Why island ``label`` makes the equations singular, or None if it does not."""
        if label not in self._problems:
            return None
        if not self._problems[label]:
            self._problems[label] = self._word(label)
        return self._problems[label]

    def raise_problems(self, skip: int | None = None) -> None:
        """Raise SingularCircuitError for the islands with a problem (but ``skip``)."""
        found = [self.problem(label) for label in sorted(self._problems) if label != skip]
        if found:
            raise SingularCircuitError("; ".join(m for m in found[:3] if m))

    def _word(self, label: int) -> str:
        netlist, labels = self.netlist, self.labels
        members = np.flatnonzero(labels == label)
        nets = listing([netlist.nets[i] for i in members], 5)
        ca, cb, current = pairs(netlist, CURRENT_EDGES)
        current_names = netlist.part_names(current)
        on_edge = self._crossing & ((labels[ca] == label) | (labels[cb] == label))
        sources = [current_names[i] for i in np.flatnonzero(on_edge)]
        dc_note = ""
        if self.dc:
            caps = netlist["capacitor"]
            here = np.isin(caps.nodes, members).any(axis=1) if len(caps) else np.zeros(0, bool)
            if here.any():
                dc_note = (" (capacitors are open at DC: "
                           f"{listing([caps.names[i] for i in np.flatnonzero(here)], 4)})")
        if sources:
            return (f"{plural(len(members), 'net', 'nets')} {nets} "
                    f"{plural(len(members), 'connects', 'connect')} to the rest only through "
                    f"the current {plural(len(sources), 'source', 'sources')} "
                    f"{listing(sources, 4)}{dc_note}: that current has no return path, so the "
                    "circuit has no solution; add a conducting path (e.g. a resistor) from there "
                    "to the rest")
        sa, sb, sensing = pairs(netlist, SENSE_EDGES)
        sense_names = netlist.part_names(sensing)
        on_edge = self._sensing & ((labels[sa] == label) | (labels[sb] == label))
        i = int(np.flatnonzero(on_edge)[0])
        return (f"{sense_names[i]} senses the voltage between nets {netlist.nets[sa[i]]} and "
                f"{netlist.nets[sb[i]]}, which no conducting path joins{dc_note}, so that "
                "voltage is undefined; join the two sides (e.g. through a resistor) or sense "
                "within one side")


def islands(netlist: Netlist, dc: bool, references: Sequence[str],
            short: tuple[int, int] | None = None) -> Islands:
    """The :class:`Islands` of ``netlist`` (``short``: net ids of a port short to include),
    kept in its memo: they depend on which parts conduct where, not on their values."""
    key = (memo_keys.ISLANDS, dc, tuple(references), short)
    found = netlist.memo.get(key)
    if found is None:
        found = netlist.memo[key] = Islands(netlist, dc, references, short)
    return found



def check_voltage_loops(netlist: Netlist, dc: bool, short: tuple[int, int] | None = None
                        ) -> None:
    """Refuse a loop of branches that fix a voltage but not their current.

    Voltage sources, VCVS and CCVS outputs, 0 Ω wires, op-amp outputs and (at DC) inductors:
    around such a loop the current is undetermined and the voltages may contradict. Branches
    whose current controls a CCVS/CCCS are left out (their current enters another equation).
    Raises SingularCircuitError naming the loop's parts.
    """
    a, b, parts = pairs(netlist, VOLTAGE_EDGES[dc], _free_current(netlist))
    if short is not None:
        a, b = np.append(a, short[0]), np.append(b, short[1])
    if not has_loop(a, b):
        return
    names = netlist.part_names(parts)
    if short is not None:
        names.append(SHORT)
    # sources before wires and inductors, so that the message names the loop's sources first
    rank = [LOOP_RANK[code] for code in netlist.codes.take(parts).tolist()] + [len(LOOP_RANK)]
    ends = list(zip(a.tolist(), b.tolist(), strict=True))
    graph = nx.MultiGraph()
    graph.add_edges_from((*ends[i], names[i]) for i in sorted(range(len(names)),
                                                              key=rank.__getitem__))
    loop = [key for _u, _v, key in nx.find_cycle(graph)]
    notes = " (inductors are shorts at DC)" if dc and any(
        n in netlist["inductor"].names for n in loop) else ""
    raise SingularCircuitError(
        f"{listing(loop)} form a loop of voltage-defined branches{notes}: the current around "
        "it is undetermined and its voltages may contradict; break the loop (e.g. add a series "
        "resistance)")



def _free_current(netlist: Netlist) -> np.ndarray:
    """Per part: its current enters no other equation (it controls no CCVS/CCCS) and, for a
    resistor, it is a 0 Ω wire."""
    keep = ~netlist.controlling()
    resistors = netlist["resistor"]
    keep[resistors.span] &= resistors.values == 0
    return keep

