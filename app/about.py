"""The About box: what Portcut computes, how, and where its answers stop."""

from __future__ import annotations

from PySide6.QtWidgets import QMessageBox, QWidget

from .safety import AC_RMS_LIMIT, DC_LIMIT

__all__ = ["ABOUT_HTML", "show_about"]

ABOUT_HTML = f"""
<h3>Portcut</h3>
<p>Sketch a linear circuit, draw a boundary around a part of it, and read what that part looks
like from its two terminals: its Thevenin and Norton equivalents (open-circuit voltage,
short-circuit current, equivalent impedance) at DC, at one frequency as phasors, or over a
sweep.</p>
<p><b>Method.</b> The region's circuit is solved by sparse Modified Nodal Analysis: one LU
factorisation gives the open-circuit voltage and, with the independent sources zeroed (voltage
sources shorted, current sources opened; dependent sources kept), the impedance seen at the
port. A region is reduced only when it meets the rest of the circuit at exactly two nets and no
controlled source or magnetic coupling crosses its boundary.</p>
<p><b>Limits.</b> Parts are ideal and linear (resistors, capacitors, inductors, couplings,
independent and linear dependent sources, the ideal op-amp); AC results are small-signal,
sinusoidal steady state at the analysis frequency. Nothing here models non-linearity,
saturation, tolerances, temperature, parasitics, transients or noise.</p>
<p><b>Safety.</b> The results say nothing about electrical safety. For circuits with sources
above extra-low voltage ({AC_RMS_LIMIT:g} V AC rms / {DC_LIMIT:g} V DC), local codes and licensed
practice govern the work.</p>
"""


def show_about(parent: QWidget) -> None:
    QMessageBox.about(parent, "About Portcut", ABOUT_HTML)
