"""The docstring examples of the SAT, local and auto verification modules run and hold."""

from __future__ import annotations

import doctest
import importlib

import pytest

MODULES = [
    "thresholdc.verify.sat.circuit",
    "thresholdc.verify.sat.encode",
    "thresholdc.verify.sat.miter",
    "thresholdc.verify.sat.method",
    "thresholdc.verify.local",
    "thresholdc.verify.structural",
    "thresholdc.verify.cones",
    "thresholdc.verify.auto",
]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    pytest.importorskip("pysat.solvers")
    module = importlib.import_module(name)
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0
