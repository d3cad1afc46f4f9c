"""How to install an optional extra, worded for the way thresholdc was installed.

From a source checkout (the package sits next to a ``pyproject.toml`` naming thresholdc, as
with ``pip install -e .``) the hint is ``pip install -e '<checkout>[extra]'``; from an
installed wheel it is ``pip install 'thresholdc[extra]'``.

>>> hint = install_hint("onnx")
>>> hint.startswith("pip install ") and "[onnx]" in hint
True
"""

from __future__ import annotations

import os
from functools import lru_cache

__all__ = ["install_hint", "checkout_root"]


@lru_cache(maxsize=1)
def checkout_root() -> str | None:
    """The source checkout this package runs from, or None for an installed wheel.

    >>> root = checkout_root()
    >>> root is None or os.path.isfile(os.path.join(root, "pyproject.toml"))
    True
    """
    root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    project = os.path.join(root, "pyproject.toml")
    try:
        with open(project, encoding="utf-8") as fh:
            text = fh.read()
    except OSError:
        return None
    return root if 'name = "thresholdc"' in text else None


def install_hint(extra: str) -> str:
    """The pip command that installs ``extra`` for this installation.

    >>> install_hint("sat").endswith("[sat]'")
    True
    """
    root = checkout_root()
    if root is None:
        return f"pip install 'thresholdc[{extra}]'"
    where = "." if os.path.abspath(os.getcwd()) == root else root
    return f"pip install -e '{where}[{extra}]'"
