"""The docstring examples of the netlist importers run and hold."""

from __future__ import annotations

import doctest
import importlib

import pytest


@pytest.mark.parametrize("name", ["thresholdc.syntax.importers",
                                  "thresholdc.syntax.importers.bench",
                                  "thresholdc.syntax.importers.blif"])
def test_docstring_examples(name):
    module = importlib.import_module(name)
    result = doctest.testmod(module)
    assert result.attempted > 0
    assert result.failed == 0
