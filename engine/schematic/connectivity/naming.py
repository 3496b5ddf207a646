"""Naming: what each net is called (rules in :mod:`.extraction`), and the markers that join
nets by name."""

from __future__ import annotations

from collections import defaultdict

import numpy as np

from ...solve.circuit import GROUND
from ...solve.names import unused_name
from .faults import ConnectivityWarning, _fmt
from .sheet import _label_net, _natural_key, _Sheet


def label_edges(sheet: _Sheet,
                warnings: list[ConnectivityWarning]) -> tuple[np.ndarray, dict[int, str]]:
    """Edges joining markers of equal name; returns them with each marker pin's net name."""
    first_of: dict[str, int] = {}
    names: dict[int, str] = {}
    a, b = [], []
    for i in range(sheet.designated, len(sheet.owners)):
        label = sheet.owners[i]
        k = sheet.first_pin[i]
        name = _label_net(label)
        if not name:
            warnings.append(ConnectivityWarning(
                f"net label at {_fmt(label.at)} has no name, so it joins only what touches it",
                label.id, label.at))
            continue
        names[k] = name
        a.append(k)
        b.append(first_of.setdefault(name, k))
    return np.array([a, b], dtype=np.int64).reshape(2, -1), names


def net_names(sheet: _Sheet, net: np.ndarray, n_nets: int, label_names: dict[int, str],
              warnings: list[ConnectivityWarning], nodes: np.ndarray | None = None,
              kept: dict[int, str] | None = None) -> tuple[list[str], bool]:
    """The name of each net (``net`` gives each graph node's), and whether every automatic name
    is the one its net asks for, none made fresh with ``'``.

    Every labelled net is named (and its warnings given) here; ``kept`` names unlabelled nets
    whose names are known already, and ``nodes`` (ascending graph nodes; None: all) holds the
    nodes of every net left to name automatically.
    """
    names: list[str | None] = [None] * n_nets
    on_net: dict[int, dict[str, int]] = defaultdict(dict)
    for k, name in label_names.items():
        on_net[int(net[k])].setdefault(name, k)
    for n, found in on_net.items():
        names[n] = _chosen_name(found, sheet, warnings)
    taken = set(label_names.values())
    if kept:
        for n, name in kept.items():
            names[n] = name
        taken.update(kept.values())
    pins = np.arange(sheet.designated_pins) if nodes is None else \
        nodes[:np.searchsorted(nodes, sheet.designated_pins)]
    # designated pins are numbered in natural designator order, so a net's lowest pin comes first
    nets_seen, first = np.unique(net[pins], return_index=True)
    auto = sheet.auto
    plain = _name_fresh(names, [(n, auto[k]) for n, k in zip(
        nets_seen.tolist(), pins[first].tolist(), strict=True) if names[n] is None], taken)
    if None not in names:
        return names, plain
    unnamed: dict[int, list[str]] = defaultdict(list)
    others = [*sheet.wires, *sheet.junctions, *sheet.labels]
    other_nodes = [*range(sheet.pin_count, sheet.pin_count + len(sheet.wires)
                          + len(sheet.junctions)),
                   *sheet.first_pin[sheet.designated:-1]]
    for element, n in zip(others, net[other_nodes].tolist(), strict=True):
        if names[n] is None:
            unnamed[n].append(element.id)
    plain &= _name_fresh(names, [(n, f"{min(ids, key=_natural_key)}.net")
                                 for n, ids in unnamed.items()], taken)
    return names, plain


def _name_fresh(names: list[str | None], wanted: list[tuple[int, str]], taken: set[str]) -> bool:
    """``names[n] = fresh(name, taken)`` for each ``(n, name)`` of ``wanted`` in turn; whether
    every one got the name it wanted."""
    fresh = {name for _, name in wanted}
    if len(fresh) == len(wanted) and taken.isdisjoint(fresh):  # the usual case: none is taken
        for n, name in wanted:
            names[n] = name
        taken |= fresh
        return True
    for n, name in wanted:
        names[n] = unused_name(name, taken)
    return False


def _chosen_name(found: dict[str, int], sheet: _Sheet,
                 warnings: list[ConnectivityWarning]) -> str:
    """Ground first, then natural order; a warning for each name that loses."""
    ordered = sorted(found, key=lambda n: (n != GROUND, _natural_key(n)))
    chosen = ordered[0]
    shown = f"ground ({GROUND})" if chosen == GROUND else repr(chosen)
    for other in ordered[1:]:
        marker = sheet.pin(found[other])
        warnings.append(ConnectivityWarning(
            f"one net carries two names, {shown} and {other!r}; it is called {shown}. "
            "Remove one label or separate the nets", marker.element_id, marker.at))
    return chosen
