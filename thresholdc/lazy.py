"""Third-party modules loaded on first use, so that start-up only pays for what a command needs.

``--help``, parsing a rule file or loading a network need neither scipy's optimisers nor sympy;
the modules that use them bind a :func:`lazy_module` at import time (an ordinary top-level
name, so the import graph stays visible) and the real import happens at the first attribute
access. It uses the standard library's :class:`importlib.util.LazyLoader`.

>>> m = lazy_module("json")
>>> m.dumps([1])
'[1]'
"""

from __future__ import annotations

import importlib
import importlib.util
import sys
import types

__all__ = ["lazy_module"]


def lazy_module(name: str) -> types.ModuleType:
    """The module ``name``, imported on first attribute access (at once if already loaded).

    Parameters
    ----------
    name : str
        Absolute module name, e.g. ``"scipy.optimize"``.

    Returns
    -------
    types.ModuleType
        The module, or a lazily loading stand-in registered in ``sys.modules``.

    Examples
    --------
    >>> lazy_module("math").sqrt(4.0)
    2.0
    """
    if name in sys.modules:
        return sys.modules[name]
    parent = name.rpartition(".")[0]
    if parent:  # a submodule is looked up through its package, which is imported for real
        importlib.import_module(parent)
    spec = importlib.util.find_spec(name)
    if spec is None or spec.loader is None:
        raise ModuleNotFoundError(f"No module named {name!r}", name=name)
    loader = importlib.util.LazyLoader(spec.loader)
    spec.loader = loader
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module
    loader.exec_module(module)
    if parent:
        setattr(sys.modules[parent], name.rpartition(".")[2], module)
    return module
