"""Collection rules for the whole suite (docstring examples included), and hypothesis profiles.

Modules that import an optional dependency at the top are collected for their docstring
examples only when that dependency is installed, so the suite runs cleanly without extras.

Hypothesis runs under the ``ci`` profile unless told otherwise: derandomised (the same examples
on every run and every machine), no example database, no deadline, and a failing example is
printed with its reproduction blob.  ``python3 -m pytest --hypothesis-profile=explore`` runs
random examples, ten times as many per test, for long searches on a developer's machine.
"""

from __future__ import annotations

import importlib.util

from hypothesis import HealthCheck, settings

_NEEDS = {
    "thresholdc/export/torch.py": "torch",
    "thresholdc/export/onnx.py": "onnx",
    "thresholdc/export/onnx_import.py": "onnx",
    "thresholdc/export/drawing.py": "matplotlib",
}

collect_ignore = [path for path, module in _NEEDS.items()
                  if importlib.util.find_spec(module) is None]

# How many times each test's own ``max_examples`` the explore profile runs.
EXPLORE_FACTOR = 10

settings.register_profile(
    "ci",
    derandomize=True,
    database=None,
    print_blob=True,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow],
)
settings.register_profile(
    "explore",
    derandomize=False,
    max_examples=1000,
    deadline=None,
    print_blob=True,
    suppress_health_check=[HealthCheck.too_slow],
)
settings.load_profile("ci")  # the default; hypothesis' --hypothesis-profile option overrides it


def pytest_collection_modifyitems(config, items):
    """Under the explore profile, scale every test's own ``max_examples`` by EXPLORE_FACTOR
    (a ``@settings(max_examples=…)`` on a test would otherwise win over the profile)."""
    if config.getoption("hypothesis_profile", None) != "explore":
        return
    seen = set()
    for item in items:
        func = getattr(item, "obj", None)
        own = getattr(func, "_hypothesis_internal_use_settings", None)
        if own is None or id(func) in seen:
            continue
        seen.add(id(func))
        func._hypothesis_internal_use_settings = settings(
            own, max_examples=own.max_examples * EXPLORE_FACTOR, derandomize=False
        )
