"""The schematic document (placed parts, wires, labels, regions, collapsed blocks) and its views:
connectivity, the file format, reduction and block layout, wiring checks, and the geometry that
every drawing shares (symbols, captions and their placement).

Builds on :mod:`portcut.engine.solve`; knows nothing of the SVG writer or the command line.
"""

from .connectivity import (
    BLOCK_ROLES,
    Connectivity,
    ConnectivityWarning,
    block_equivalent,
    build_circuit,
    contents_document,
    extract,
    net_at,
    updated_circuit,
)
from .document import DESIGNATOR_PREFIX, Change, Document
from .fileformat import FORMAT, VERSION, dumps, load, loads, save
from .model import (
    ANALYSIS_FORMS,
    PART_KINDS,
    Analysis,
    Block,
    Contents,
    Element,
    Junction,
    NetLabel,
    PlacedPart,
    Region,
    Wire,
)

__all__ = [
    "ANALYSIS_FORMS",
    "BLOCK_ROLES",
    "DESIGNATOR_PREFIX",
    "FORMAT",
    "PART_KINDS",
    "VERSION",
    "Analysis",
    "Block",
    "Change",
    "Connectivity",
    "ConnectivityWarning",
    "Contents",
    "Document",
    "Element",
    "Junction",
    "NetLabel",
    "PlacedPart",
    "Region",
    "Wire",
    "block_equivalent",
    "build_circuit",
    "contents_document",
    "dumps",
    "extract",
    "load",
    "loads",
    "net_at",
    "save",
    "updated_circuit",
]
