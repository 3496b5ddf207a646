"""Adjoint sensitivities against sympy differentiation of the exact reference solve.

Reference: tests/references/sympy_nodal.py solves each region of test_against_sympy.py exactly
with one part's value left as a symbol p; sympy differentiates voc, isc and z in p and the result
is evaluated at the part's value. The engine's derivatives come from one LU factorization and one
transposed solve, so they carry the same floating-point error as its port quantities (RTOL there),
measured here against the size of the derivatives of the whole region.
"""

from __future__ import annotations

import cmath
import math
from dataclasses import replace

import pytest
import sympy
import sympy_nodal
from sympy_nodal import exact, port_reference
from test_against_sympy import CASES

from portcut.engine import CircuitError, sensitivity

RTOL = 1e-8
P = sympy.Symbol("p")


def _derivative(expr: sympy.Expr | None, value: object) -> complex:
    if expr is None:
        return complex(math.nan, math.nan)
    return complex(sympy.N(sympy.diff(expr, P).subs(P, exact(value)), 30))


@pytest.mark.parametrize("name", sorted(CASES))
def test_adjoint_sensitivities_equal_exact_derivatives(name: str,
                                                      monkeypatch: pytest.MonkeyPatch) -> None:
    # the solution scales are numbers only without a symbol; they are not read here
    monkeypatch.setattr(sympy_nodal, "_largest", lambda values: 0.0)
    circuit, region, port, freq = CASES[name]()
    try:
        got = sensitivity(circuit, region, port, freq=float(freq))
    except CircuitError:
        ref = port_reference(circuit.subcircuit(region), port, freq)
        assert not ref.has_thevenin  # the only case the method declines
        return
    parts = list(circuit.subcircuit(region))
    assert set(got) == {p.name for p in parts if p.kind != "opamp"}
    for i, part in enumerate(parts):
        if part.kind == "opamp":
            continue
        symbolic = [*parts[:i], replace(part, value=P), *parts[i + 1:]]
        ref = port_reference(symbolic, port, freq)
        s = got[part.name]
        want = {"dvoc": _derivative(ref.voc, part.value), "dz": _derivative(ref.z, part.value),
                "disc": _derivative(ref.isc, part.value)}
        for field, expected in want.items():
            value = getattr(s, field)
            if cmath.isnan(expected) or (field == "disc" and ref.z == 0):
                continue
            scale = max(abs(getattr(t, field)) for t in got.values()
                        if not cmath.isnan(getattr(t, field)))
            assert abs(value - expected) <= RTOL * max(abs(expected), scale), \
                f"{part.name} {field}: got {value!r}, expected {expected!r}"
