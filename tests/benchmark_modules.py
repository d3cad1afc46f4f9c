"""One loader for the scripts of benchmarks/ that tests reuse (they are not a package)."""

from __future__ import annotations

import importlib.util
import pathlib
import types

BENCHMARKS = pathlib.Path(__file__).resolve().parents[1] / "benchmarks"


def load_benchmark(name: str) -> types.ModuleType:
    """``benchmarks/NAME.py`` as a module (executed once per call)."""
    spec = importlib.util.spec_from_file_location(name, BENCHMARKS / f"{name}.py")
    assert spec is not None and spec.loader is not None, name
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module
