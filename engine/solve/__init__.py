"""The numeric core: the netlist and its device parts, sparse Modified Nodal Analysis, graph
checks of cuts and singular circuits, the Thevenin/Norton results, sensitivities, noise,
tolerances, limits and yield, standard values, value syntax and result tables.

Knows nothing of the schematic document, its drawing or the command line.
"""

__all__ = [
    "circuit", "devices", "equivalent", "eseries", "limits", "measured", "mna", "noise",
    "sensitivity", "stamps", "tables", "tolerance", "topology", "units",
]
