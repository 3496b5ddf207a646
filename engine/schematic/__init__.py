"""The schematic document (placed parts, wires, labels, regions, collapsed blocks) and its views."""

from .document import DESIGNATOR_PREFIX, Change, Document
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
    "DESIGNATOR_PREFIX",
    "PART_KINDS",
    "Analysis",
    "Block",
    "Change",
    "Contents",
    "Document",
    "Element",
    "Junction",
    "NetLabel",
    "PlacedPart",
    "Region",
    "Wire",
]
