"""What the region controls of the equivalent panel make of a choice: a new version of the region
(renamed, or with a port net chosen, or back on the automatic port), or a clear refusal.
Qt-free; the panel wraps the result in an undo command.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

from portcut.engine.errors import DocumentError
from portcut.engine.schematic import Document, Region
from portcut.engine.schematic.text import text_problem
from portcut.engine.solve.circuit import GROUND

__all__ = ["ROLES", "net_shown", "port_text", "renamed", "with_port_net"]

#: The port's two sides, in the order of ``Region.port``.
ROLES = ("plus", "minus")


def renamed(doc: Document, region: Region, text: str) -> Region:
    """The region called ``text`` (stripped). Raises DocumentError for an empty name, one of
    several lines, or the name of another region of the sheet."""
    name = text.strip()
    if not name:
        raise DocumentError("region name: enter a name, e.g. input stage")
    if text_problem(name):
        raise DocumentError(f"region name: {text_problem(name)}")
    if not name.isprintable():
        raise DocumentError("region name: one line of text, without tabs or control "
                            "characters")
    other = next((r for r in doc.regions() if r.name == name and r.id != region.id), None)
    if other is not None:
        raise DocumentError(f"region name: another region is already called “{name}”; "
                            "choose a name of its own")
    return replace(region, name=name)


def with_port_net(region: Region, shown: tuple[str, str] | None, nets: Sequence[str],
                  role: str, net: str | None) -> Region:
    """The region once ``net`` is chosen as its ``role`` ("plus" or "minus") port net; None
    goes back to the automatic port.

    ``shown`` is the port in effect now: the chosen one, or the automatic one the analysis
    found (None where there is none). The other side keeps its net from ``shown``, unless that
    is ``net`` itself: then the two exchange, so choosing the minus net as plus swaps them.
    With no port shown, the other side is ground where the region has it, else its first other
    net of ``nets`` (the region's nets). Raises DocumentError where the region has no other
    net.
    """
    if net is None:
        return replace(region, port=None)  # a chosen port never goes with swap
    side = ROLES.index(role)
    if shown is not None:
        partner = shown[1 - side] if shown[1 - side] != net else shown[side]
    else:
        others = [n for n in nets if n != net]
        if not others:
            raise DocumentError(f"port: region “{region.name}” has no net besides {net}; a port "
                                "needs two")
        partner = GROUND if GROUND in others else others[0]
    port = (net, partner) if side == 0 else (partner, net)
    return replace(region, port=port, swap=False)


def port_text(region: Region) -> str:
    """The undo step's text for the port ``region`` now has."""
    if region.port is None:
        return f"Automatic port for “{region.name}”"
    plus, minus = region.port
    return f"Port of “{region.name}”: + {net_shown(plus)}, − {net_shown(minus)}"


def net_shown(net: str) -> str:
    """A net as the window names it: the ground net reads "ground"."""
    return "ground" if net == GROUND else net
