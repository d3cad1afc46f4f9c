"""Collection rules and test profiles for the whole suite (docstring examples included).

Modules that import an optional dependency at the top are collected for their docstring
examples only when that dependency is installed, so the suite runs cleanly without extras.

Hypothesis runs under one of two profiles:

- ``ci`` (the default): derandomised (the examples follow from each test's source, not a
  random seed), no example database, no timing-based health checks. Every run of
  ``python3 -m pytest -q`` tries the same examples, so the suite cannot fail at random.
- ``explore`` (``python3 -m pytest --hypothesis-profile=explore``): random seeds, the example
  database on, and every property test given ``EXPLORE_FACTOR`` times its usual number of
  examples. Use it to hunt for new failures; add each one found as an explicit ``@example``.
"""

from __future__ import annotations

import importlib.util

import pytest
from hypothesis import HealthCheck, settings

_NEEDS = {
    "thresholdc/export/torch.py": "torch",
    "thresholdc/export/onnx.py": "onnx",
    "thresholdc/export/onnx_import.py": "onnx",
    "thresholdc/export/drawing.py": "matplotlib",
}

collect_ignore = [path for path, module in _NEEDS.items()
                  if importlib.util.find_spec(module) is None]

EXPLORE_FACTOR = 20

settings.register_profile(
    "ci", derandomize=True, database=None, deadline=None, print_blob=True,
    suppress_health_check=[HealthCheck.too_slow])
settings.register_profile(
    "explore", derandomize=False, deadline=None, print_blob=True,
    suppress_health_check=[HealthCheck.too_slow])
settings.load_profile("ci")


def pytest_collection_modifyitems(config: pytest.Config, items: list[pytest.Item]) -> None:
    """Under the explore profile, give every property test more examples."""
    if config.getoption("hypothesis_profile", None) != "explore":
        return
    done: set[int] = set()
    for item in items:
        test = getattr(item, "obj", None)
        if getattr(test, "hypothesis", None) is None or id(test) in done:
            continue
        done.add(id(test))  # parametrised items share one function: scale it once
        own = getattr(test, "_hypothesis_internal_use_settings", None)
        if own is not None:
            test._hypothesis_internal_use_settings = settings(
                own, max_examples=own.max_examples * EXPLORE_FACTOR, derandomize=False)
