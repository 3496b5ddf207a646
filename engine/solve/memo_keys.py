"""The keys under which modules keep results in a netlist's memo (``mna.Netlist.memo``) that
another module must know by name: which of them outlive a value edit.

A result kept under a key (or a tuple key whose first item) in :data:`STRUCTURAL` depends on
the parts' kinds, nets and references only, not on their values, so
``Netlist.with_values`` carries it over. Keys that only their own module reads (mna's
branches and spans, equivalent's port problem) stay with that module.
"""

from __future__ import annotations

__all__ = ["CARRYING", "CONTROLLING", "ISLANDS", "STRUCTURAL"]

#: engine/solve/topology.py: per net, whether a part of the netlist can carry current there.
CARRYING = "carrying"
#: engine/solve/mna.py: per part, whether its current controls a CCVS or CCCS.
CONTROLLING = "controlling"
#: engine/solve/islands.py: ``(ISLANDS, dc, references, short)``, the netlist's islands.
ISLANDS = "islands"
#: The keys whose results outlive a value edit.
STRUCTURAL = frozenset({CARRYING, CONTROLLING, ISLANDS})
