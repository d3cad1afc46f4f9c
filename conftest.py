"""Collection rules for the whole suite (docstring examples included).

Modules that import an optional dependency at the top are collected for their docstring
examples only when that dependency is installed, so the suite runs cleanly without extras.
"""

from __future__ import annotations

import importlib.util

_NEEDS = {
    "thresholdc/export/torch.py": "torch",
    "thresholdc/export/onnx.py": "onnx",
    "thresholdc/export/onnx_import.py": "onnx",
    "thresholdc/export/drawing.py": "matplotlib",
}

collect_ignore = [path for path, module in _NEEDS.items()
                  if importlib.util.find_spec(module) is None]
