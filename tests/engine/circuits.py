"""Circuits that several engine test modules reduce, written once."""

from __future__ import annotations

from portcut.engine import GROUND, Circuit


def divider(v: float = 10.0, r1: float = 6e3, r2: float = 4e3) -> Circuit:
    """A source ``v`` behind ``r1`` into ``r2`` to ground at net "out", loaded by RL = 1 kΩ."""
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, v)
    c.resistor("R1", "in", "out", r1)
    c.resistor("R2", "out", GROUND, r2)
    c.resistor("RL", "out", GROUND, "1k")
    return c
