"""The docstring examples of the SAT, local and auto verification modules run and hold."""

from __future__ import annotations

import doctest
import importlib

import pytest

MODULES = [
    "thresholdc.verification.sat.circuit",
    "thresholdc.verification.sat.encode",
    "thresholdc.verification.sat.miter",
    "thresholdc.verification.sat.method",
    "thresholdc.verification.local",
    "thresholdc.verification.structural",
    "thresholdc.verification.cones",
    "thresholdc.verification.auto",
]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    pytest.importorskip("pysat.solvers")
    module = importlib.import_module(name)
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0
