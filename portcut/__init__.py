"""Portcut: the Thevenin and Norton equivalents of any two-terminal region of a linear circuit.

The distribution installs this one import name. Its sub-packages:

* :mod:`portcut.engine` — the circuit, its analysis, the schematic document and its drawing
  (no Qt);
* :mod:`portcut.app` — the PySide6 workbench;
* :mod:`portcut.assets` — bundled example sheets and icons.

In the repository the sub-packages stay at the top level (engine/, app/, assets/); the package
mapping in pyproject.toml puts them under this package when installed.
"""

__all__ = ["__version__"]

__version__ = "0.2.0"
