"""The examples in the engine's docstrings run and print what they say (they are the first code
a newcomer copies)."""

from __future__ import annotations

import doctest
import importlib
import pkgutil

import pytest

import portcut.engine as engine

MODULES = sorted(info.name for info in pkgutil.walk_packages(engine.__path__, "portcut.engine."))


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples_run(name: str) -> None:
    result = doctest.testmod(importlib.import_module(name), optionflags=doctest.ELLIPSIS)
    assert result.failed == 0


def test_the_public_entry_points_carry_examples() -> None:
    finder = doctest.DocTestFinder()
    for function in (engine.Circuit, engine.equivalent, engine.sweep):
        assert any(test.examples for test in finder.find(function)), function.__name__
