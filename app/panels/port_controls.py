"""A region's port as controls: a box for each sign offering "automatic" (with the nets it
found) or any net of the region's parts, and a button that forgets a chosen port. A choice
becomes an undo command; one the region cannot take is refused with the reason."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace

from PySide6.QtCore import QObject, Signal
from PySide6.QtWidgets import QComboBox, QFormLayout, QPushButton

from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Connectivity, Region
from portcut.engine.schematic.ports import region_nets
from portcut.engine.schematic.reduction import RegionAnalysis

from ..analysis import LiveAnalysis
from ..commands import ReplaceElements
from ..region_edits import ROLES, net_shown, port_text, with_port_net
from ..workbench import Workbench

__all__ = ["PortControls"]


class PortControls(QObject):
    """The port boxes (:attr:`boxes`, by role) and :attr:`automatic_button` of the region
    ``region()`` names; :attr:`refused` carries the reason a choice was refused."""

    refused = Signal(str)

    def __init__(self, workbench: Workbench, live: LiveAnalysis,
                 region: Callable[[], Region | None], parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.workbench = workbench
        self.live = live
        self.region = region
        self.boxes: dict[str, QComboBox] = {}
        for role, sign in zip(ROLES, ("+", "−"), strict=True):
            box = QComboBox()
            box.setAccessibleName(f"Port {role} net")
            box.setToolTip(f"The net at the port's {sign}: automatic (where the region meets "
                           "the rest), or any net of the region's parts")
            box.activated.connect(lambda index, r=role: self._choose(r, index))
            self.boxes[role] = box
        self.automatic_button = QPushButton("Use the automatic port")
        self.automatic_button.setToolTip("Forget the chosen port and take the two nets where "
                                         "the region meets the rest")
        self.automatic_button.clicked.connect(self.automatic_port)
        # what the boxes list, and the region's nets with the connectivity they were read off
        self._listed: tuple | None = None
        self._nets_for: tuple[Connectivity, frozenset[str], tuple[str, ...]] | None = None

    def add_rows(self, layout: QFormLayout) -> None:
        """The Port + and Port − rows."""
        for sign, box in zip(("+", "−"), self.boxes.values(), strict=True):
            layout.addRow(f"Port {sign}", box)

    def show_port(self, analysis: RegionAnalysis | None) -> None:
        """Fill the boxes: "automatic" (with the nets it found) and the region's nets; a chosen
        net the region no longer has stays listed, marked gone. The boxes are filled again only
        when what they list changed: a large region has hundreds of nets, and most edits keep
        them."""
        region, conn = self.region(), self.live.conn
        usable = (region is not None and conn is not None and analysis is not None
                  and analysis.region_id == region.id)
        nets = self._nets(region, conn) if usable else ()
        automatic = analysis.equivalent.port if usable and analysis.ok and \
            region.port is None else None
        listed = (usable, nets, automatic, region.port if usable else None)
        if listed != self._listed:
            self._listed = listed
            self._fill(region, nets, automatic, usable)
        self.automatic_button.setVisible(usable and region.port is not None and not analysis.ok)

    def _nets(self, region: Region, conn: Connectivity) -> tuple[str, ...]:
        """The region's nets, worked out again only for new connectivity or a changed region."""
        if self._nets_for is None or self._nets_for[0] is not conn or \
                self._nets_for[1] != region.members:
            self._nets_for = (conn, region.members,
                              region_nets(self.workbench.doc, region, conn))
        return self._nets_for[2]

    def _fill(self, region: Region | None, nets: tuple[str, ...],
              automatic: tuple[str, str] | None, usable: bool) -> None:
        for i, (role, box) in enumerate(self.boxes.items()):
            box.clear()
            box.setEnabled(usable)
            if not usable:
                continue
            box.addItem(f"automatic ({net_shown(automatic[i])})" if automatic else "automatic",
                        None)
            for net in nets:
                box.addItem(net_shown(net), net)
            chosen = region.port[i] if region.port is not None else None
            if chosen is not None and chosen not in nets:
                box.addItem(f"{chosen} (gone)", chosen)
            box.setCurrentIndex(0 if chosen is None else box.findData(chosen))
            box.setAccessibleDescription(f"{role}: {box.currentText()}")

    def _choose(self, role: str, index: int) -> None:
        self._listed = None  # the boxes show the choice: the next answer puts them right
        doc, region, analysis = self.workbench.doc, self.region(), self.live.analysis
        if region is None or self.live.conn is None:
            return
        shown = region.port or (analysis.equivalent.port if analysis is not None and analysis.ok
                                and analysis.region_id == region.id else None)
        try:
            new = with_port_net(region, shown, region_nets(doc, region, self.live.conn),
                                role, self.boxes[role].itemData(index))
        except CircuitError as exc:
            self.refused.emit(str(exc))
            return
        if new != region:
            self.workbench.push(ReplaceElements(doc, [new], port_text(new)))

    def automatic_port(self) -> None:
        """Forget the region's chosen port."""
        region = self.region()
        if region is not None and region.port is not None:
            new = replace(region, port=None)
            self.workbench.push(ReplaceElements(self.workbench.doc, [new], port_text(new)))
