"""Test-wide setup: Qt renders offscreen, so the suite runs on a machine without a display.

Set here, before any test module imports Qt, so every QApplication the tests make is headless.
"""

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
