"""From drawing to netlist, in three steps each of its own module:

* :mod:`.sheet` flattens a document into arrays (pins, wire vertices, junctions, markers);
* :mod:`.extraction` joins them into nets and names each net (``extract``; the joining and
  naming rules are in its docstring), and :mod:`.faults` adds the drawing's warnings;
* :mod:`.netlist` builds the engine Circuit on those nets (``build_circuit``), a collapsed
  block standing in by its contents' equivalent, and after a move or a value typed rebuilds
  only the parts that changed (``updated_circuit``).

A re-extraction from the previous result joins and names again only the nets the replaced
elements touch (:mod:`.incremental`).
"""

from .extraction import Connectivity, extract, joined_nets, net_at
from .faults import ConnectivityWarning
from .netlist import block_equivalent, build_circuit, contents_document, updated_circuit
from .sheet import BLOCK_ROLES
from .sheet import _natural_key as _natural_key  # the naming order, shared with reduction

__all__ = [
    "BLOCK_ROLES",
    "Connectivity",
    "ConnectivityWarning",
    "block_equivalent",
    "build_circuit",
    "contents_document",
    "extract",
    "joined_nets",
    "net_at",
    "updated_circuit",
]
