"""Re-extraction after a patch: only the nets that the moved, added or removed elements touched
before or touch now are joined and named again; every other net keeps its nodes, its number's
order and its name, so the result is the one a whole extraction gives.

Why that holds: two unmoved nodes that touch on the new sheet touched on the old one, so an
edge between them stays inside one old net; every edge at a moved or added node ends at a node
:func:`touched` finds; a removed node's net is joined again whole. The nets re-joined are
therefore closed under the new edges, and the rest are the old components unchanged. Nets are
numbered by their lowest node, as the whole component search numbers them, and an automatic
name depends only on its own net's members, unless a name had to be made fresh (``'``): then,
and wherever a label's name meets a kept name, the caller extracts the whole sheet instead.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from .faults import ConnectivityWarning
from .joining import components, touched
from .naming import net_names
from .sheet import _Sheet


class Patched(NamedTuple):
    """The nets of a patched sheet: each graph node's net, each net's name, and the graph
    nodes (ascending) whose nets were joined again; the nodes outside kept their net names."""

    net: np.ndarray
    names: list[str]
    rejoined: np.ndarray


def patched(sheet: _Sheet, net_before: np.ndarray, names_before: list[str],
            label_pairs: np.ndarray, label_names: dict[int, str],
            warnings: list[ConnectivityWarning], gone: np.ndarray) -> Patched | None:
    """The nets of ``sheet``, patched from the sheet whose nets were ``names_before`` (with no
    name made fresh): ``net_before`` gives each graph node of ``sheet`` its net there (a node
    added since: ``len(names_before)``), and ``gone`` the nets there of the nodes removed
    since. None where a whole extraction must decide (see the module docstring).
    ``label_pairs`` and ``label_names`` are ``sheet``'s (naming.label_edges); the naming
    warnings are added to ``warnings`` only when the answer is not None."""
    n_before = len(names_before)
    moved = np.unique(np.array(sheet.moved, dtype=np.int64))
    hit = np.zeros(n_before + 1, dtype=bool)
    hit[net_before[touched(sheet, moved, label_pairs)]] = True
    hit[gone] = True  # a removed node may have held its net together
    hit[n_before] = True  # the added nodes
    rejoined = np.flatnonzero(hit[net_before])
    n_new, component = components(sheet, label_pairs, rejoined)
    net = net_before.copy()
    net[rejoined] = n_before + component
    # number the nets by their lowest node, as the whole search does
    found, lowest = np.unique(net, return_index=True)
    order = found[np.argsort(lowest)]
    number = np.empty(n_before + n_new, dtype=np.int64)
    number[order] = np.arange(len(order))
    net = number[net]
    labelled = set(net[list(label_names)].tolist())
    kept = {n: names_before[old] for n, old in enumerate(order.tolist())
            if old < n_before and n not in labelled}
    if not set(label_names.values()).isdisjoint(kept.values()):
        return None
    said: list[ConnectivityWarning] = []
    names, plain = net_names(sheet, net, len(order), label_names, said, rejoined, kept)
    if not plain:
        return None
    warnings += said
    return Patched(net, names, rejoined)
