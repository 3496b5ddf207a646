"""``portcut reduce``: the equivalent of a region at one frequency, as a table or one JSON
object, with each part's sensitivity where asked."""

from __future__ import annotations

import argparse
import cmath
import json
import sys
from typing import Any, TextIO

from ..schematic.wording import forms_text, power_text, realisation_text
from ..solve.equivalent import Equivalent
from ..solve.mna import describe_freq
from ..solve.sensitivity import Sensitivity, influence, sensitivity
from ..solve.units import VALUE_UNITS, denoised, format_complex, format_eng, parse_frequency
from .selection import Selection, caution, document, selection, solve

__all__ = ["json_complex", "run_reduce"]


def json_complex(z: complex) -> dict[str, float] | None:
    z = denoised(z)  # full precision, but no rounding noise and never -0.0
    return {"re": z.real, "im": z.imag} if cmath.isfinite(z) else None


def _reduce_json(eq: Equivalent, sel: Selection, names: frozenset[str]) -> dict[str, Any]:
    """The stable --json object: port [plus, minus]; freq_hz; voc, isc, z as {"re", "im"} in
    volts, amperes and ohms, each null where it is undefined or infinite (no Thevenin form: z
    and voc are null; no Norton form: isc is null); has_thevenin, has_norton; region (its name,
    or null for --parts) and parts (the circuit part names reduced, sorted)."""
    return {
        "port": list(eq.port),
        "freq_hz": eq.freq,
        "voc": json_complex(eq.voc) if eq.has_thevenin else None,
        "isc": json_complex(eq.isc) if eq.has_norton else None,
        "z": json_complex(eq.z) if eq.has_thevenin else None,
        "has_thevenin": bool(eq.has_thevenin),
        "has_norton": bool(eq.has_norton),
        "region": sel.region.name if sel.drawn else None,
        "parts": sorted(names),
    }


def _reduce_table(eq: Equivalent, sel: Selection, form: str, basis: str) -> str:
    rect, polar = eq.rectangular(), eq.polar()
    at = describe_freq(eq.freq)
    out = [f"{sel.label} seen from port ({eq.port[0]}, {eq.port[1]}), plus first, at {at}", "",
           f"  {'':4} {'rectangular':<28} polar"]
    for name, defined, r, p in (("Voc", eq.has_thevenin, rect.voc, polar.voc),
                                ("Isc", eq.has_norton, rect.isc, polar.isc),
                                ("Z", True, rect.z, polar.z)):
        out.append(f"  {name:4} {r:<28} {p}" if defined else f"  {name:4} undefined")
    out.append("")
    out.extend(forms_text(eq, form))
    out.extend((realisation_text(eq), power_text(eq, basis)))
    return "\n".join(out)


_FIGURES = ("value", "dvoc", "disc", "dz", "svoc", "sisc", "sz")


def _sensitivity_json(table: dict[str, Sensitivity]) -> dict[str, dict[str, Any]]:
    """Per part: its value and the seven figures of :class:`engine.Sensitivity` as
    {"re", "im"} (null where undefined): dX/dp in V, A or Ω per unit of the value, and the
    normalised (p / X) dX/dp."""
    return {name: {"kind": s.kind, **{k: json_complex(getattr(s, k)) for k in _FIGURES}}
            for name, s in sorted(table.items())}


def _ratio_text(x: complex) -> str:
    """A normalised sensitivity: real where its imaginary part is rounding, else a + j b."""
    if cmath.isnan(x):
        return "-"
    if abs(x.imag) <= 1e-9 * abs(x):
        return f"{x.real:+.4f}"
    return f"{x.real:+.3f}{x.imag:+.3f}j"


def _sensitivity_table(table: dict[str, Sensitivity]) -> str:
    """The parts by influence, most first, with the % change of each figure per % of the part."""
    out = ["", "Sensitivity: % change of each figure per % change of the part, most "
           "influential first", f"  {'Part':8} {'Value':>14} {'Voc':>16} {'Isc':>16} {'Z':>16}"]
    for s in sorted(table.values(), key=lambda s: (-influence(s), s.name)):
        unit = VALUE_UNITS.get(s.kind, "")
        value = format_complex(s.value, unit) if s.value.imag else format_eng(s.value.real, unit,
                                                                              4)
        out.append(f"  {s.name:8} {value:>14} {_ratio_text(s.svoc):>16} "
                   f"{_ratio_text(s.sisc):>16} {_ratio_text(s.sz):>16}")
    return "\n".join(out)


def run_reduce(args: argparse.Namespace, out: TextIO) -> int:
    doc = document(args.file)
    freq = parse_frequency(doc.analysis.freq) if args.freq is None else args.freq
    sel = selection(doc, args)
    solved = solve(doc, sel, args.port, freq)
    table = sensitivity(solved.circuit, solved.names, solved.eq.port, freq) \
        if args.sensitivity else None
    if args.json:
        data = _reduce_json(solved.eq, sel, solved.names)
        if table is not None:
            data["sensitivity"] = _sensitivity_json(table)
        out.write(json.dumps(data, ensure_ascii=False) + "\n")
    else:
        form = args.form or doc.analysis.form
        out.write(_reduce_table(solved.eq, sel, form, doc.analysis.basis) + "\n")
        if table is not None:
            out.write(_sensitivity_table(table) + "\n")
    caution(solved.circuit, [solved.eq], doc.analysis.basis, sys.stderr)
    return 0
