"""Circuits that several engine test modules reduce, written once."""

from __future__ import annotations

from portcut.engine import GROUND, Circuit


def divider(v: float = 10.0, r1: float | str = 6e3, r2: float | str = 4e3,
            load: float | str | None = "1k", out: str = "out") -> Circuit:
    """A source ``v`` from "in" to ground behind ``r1`` into ``r2`` to ground at net ``out``,
    loaded by RL = ``load`` (None: no load)."""
    c = Circuit()
    c.voltage_source("V1", "in", GROUND, v)
    c.resistor("R1", "in", out, r1)
    c.resistor("R2", out, GROUND, r2)
    if load is not None:
        c.resistor("RL", out, GROUND, load)
    return c
