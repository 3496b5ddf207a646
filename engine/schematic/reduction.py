"""Regions of a drawn schematic: their live equivalent, and collapsing them into blocks and back.

:func:`analyse_region` answers the product's question for one Region of a Document: is it a true
two-terminal cut, and if so what are its Thevenin and Norton equivalents at the document's analysis
frequency. Where the cut is not valid it says why in plain words and names the nets and parts to
highlight.

:func:`collapse_region` and :func:`expand_block` compute an :class:`Edit` (elements to take off
the sheet and to put on it) without touching the document; :meth:`Edit.apply` performs it in one
notification and :meth:`Edit.inverse` undoes it exactly. Collapse keeps every wire of the two port
nets on the sheet, takes off the region's parts and everything on its internal nets, puts a Block
where the parts were and wires its pins to the port nets; the result is checked by re-extracting
connectivity, so a stub never joins a net it should not.

The three live in region_analysis.py, collapse.py and edits.py; this module gathers them.
"""

from __future__ import annotations

from .collapse import collapse_region
from .edits import Edit, expand_block
from .region_analysis import RegionAnalysis, analyse_region, equivalence, region_part_names, swapped

__all__ = [
    "Edit",
    "RegionAnalysis",
    "analyse_region",
    "collapse_region",
    "equivalence",
    "expand_block",
    "region_part_names",
    "swapped",
]
