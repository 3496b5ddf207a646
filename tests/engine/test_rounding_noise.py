"""Rounding noise is shown as zero, the same way in every output: a component of a result far
below the result's own error scale (NOISE_RTOL of its larger component) reads 0, and JSON never
holds -0.0."""

from __future__ import annotations

import csv
import io
import math

import pytest

from portcut.engine import GROUND
from portcut.engine.cli.reduce import json_complex
from portcut.engine.solve.equivalent import Equivalent
from portcut.engine.solve.tables import sweep_csv
from portcut.engine.solve.units import NOISE_RTOL, UNDEFINED, denoised

# A resistive 100 Ω region seen with noise of the size a sparse solve leaves (IEEE 754 double:
# about 1e-16 relative per operation, well below NOISE_RTOL): j 3.675 pΩ and -j 55.51 zA.
NOISY = Equivalent(("out", GROUND), 1e3, -0.1 + 1e-18j, -1e-3 - 55.51e-21j,
                   100 + 3.675e-12j, True, True)


@pytest.mark.parametrize(("z", "expected"), [
    (100 + 3.675e-12j, 100 + 0j), (-1e-3 - 55.51e-21j, -1e-3 + 0j), (1e-20 + 1j, 1j),
    (complex(-0.0, 5), 5j), (complex(3, -0.0), 3 + 0j), (1 + 1e-6j, 1 + 1e-6j), (0j, 0j),
])
def test_a_component_below_the_error_scale_reads_zero(z: complex, expected: complex) -> None:
    got = denoised(z)
    assert got == expected
    assert all(math.copysign(1, part) == 1 for part in (got.real, got.imag) if part == 0)


def test_an_error_bound_given_replaces_the_relative_scale() -> None:
    assert denoised(1 + 1e-6j, scale=1e-5) == 1
    assert denoised(1 + 1e-6j, scale=1e-7) == 1 + 1e-6j
    assert denoised(complex(math.inf, 1)) == complex(math.inf, 1)
    assert NOISE_RTOL == 1e-12


def test_the_tables_print_the_noise_as_zero() -> None:
    rect, polar = NOISY.rectangular(), NOISY.polar()
    assert (rect.z, rect.isc, rect.voc) == ("100 Ω", "-1 mA", "-100 mV")
    assert polar.z == "100 Ω ∠ 0°" and polar.isc == "1 mA ∠ 180°"


def test_csv_and_json_keep_full_precision_without_noise_or_negative_zero() -> None:
    row = next(r for i, r in enumerate(csv.reader(io.StringIO(sweep_csv([NOISY])))) if i == 1)
    assert row[1:3] == ["-0.1", "0.0"] and row[5:7] == ["-0.001", "0.0"]
    assert row[9:11] == ["100.0", "0.0"] and row[12] == "0.0"
    assert json_complex(NOISY.z) == {"re": 100.0, "im": 0.0}
    got = json_complex(complex(-0.0, 2.5))
    assert got == {"re": 0.0, "im": 2.5} and math.copysign(1, got["re"]) == 1


def test_an_undefined_quantity_reads_the_same_in_the_tables_and_the_csv() -> None:
    # an ideal 5 V source at the port (common practice): Z = 0, so there is no Norton form and
    # Isc does not exist; reduce, sweep and the CSV all write the one word.
    stiff = Equivalent(("a", GROUND), 0.0, 5 + 0j, complex(math.inf, 0), 0j, True, False)
    assert stiff.rectangular().isc == stiff.polar().isc == UNDEFINED == "undefined"
    row = list(csv.reader(io.StringIO(sweep_csv([stiff]))))[1]
    assert row[5:9] == [UNDEFINED] * 4
