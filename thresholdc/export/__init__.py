"""Exports, imports of dense MLPs, and drawings.

The suffix of a path picks the format: ``.json`` (the network file, DESIGN.md §4), ``.npz``
(NumPy arrays of the strict layered form), ``.onnx`` (opset 17).  :func:`save_any` writes any
of them and :func:`load_any` reads any of them back; ``.npz`` and ONNX models trained elsewhere
are read with :func:`load_dense`, which takes names from the compiled network they came from.
PyTorch (:func:`to_torch`, :func:`from_torch`) and drawings (:func:`draw`) need the optional
extras ``torch`` and ``plot``; ONNX needs ``onnx`` (and ``onnxruntime`` to run it).  Those
modules are imported only when used.

>>> import os, tempfile
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
>>> path = os.path.join(tempfile.mkdtemp(), "n.npz")
>>> save_any(net, path)
>>> load_any(path).evaluate([[0], [1]]).tolist()
[[1.0], [0.0]]
"""

from __future__ import annotations

import importlib
import os
from typing import Any

from ..errors import UsageError
from ..extras import install_hint
from ..ir.network import Network
from ..network import load as load_network_file
from ..network import save as save_network_file

__all__ = [
    "SUFFIXES", "check_suffix", "save_any", "load_any", "load_dense",
    "to_onnx", "save_onnx", "from_onnx", "load_onnx",
    "to_arrays", "save_npz", "load_npz",
    "to_torch", "from_torch", "Step",
    "dense_form", "network_from_layers",
    "draw",
]

SUFFIXES = (".json", ".npz", ".onnx")

# Public name -> (module, optional extra that provides its dependency).
_LAZY = {
    "to_onnx": ("onnx", "onnx"), "save_onnx": ("onnx", "onnx"),
    "from_onnx": ("onnx_import", "onnx"), "load_onnx": ("onnx_import", "onnx"),
    "to_arrays": ("npz", None), "save_npz": ("npz", None), "load_npz": ("npz", None),
    "to_torch": ("torch", "torch"), "from_torch": ("torch", "torch"), "Step": ("torch", "torch"),
    "dense_form": ("dense", None), "network_from_layers": ("dense", None),
    "draw": ("drawing", "plot"), "render": ("drawing", "plot"), "figure": ("drawing", "plot"),
    "MAX_DEPTH": ("drawing", "plot"),
}
_PACKAGES = {"onnx": "onnx", "torch": "torch", "plot": "matplotlib"}


def _module(name: str, extra: str | None, doing: str) -> Any:
    """Import ``thresholdc.export.<name>``; a missing optional package is a UsageError."""
    try:
        return importlib.import_module(f".{name}", __name__)
    except ImportError as exc:
        if extra is None or (exc.name or "").split(".")[0] != _PACKAGES[extra]:
            raise
        raise UsageError(
            f"{doing} needs the optional package {_PACKAGES[extra]!r} "
            f"({install_hint(extra)})"
        ) from None


def __getattr__(name: str) -> Any:
    """Lazy access to the exporters, so importing this package loads no optional library."""
    if name not in _LAZY:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    module, extra = _LAZY[name]
    return getattr(_module(module, extra, name), name)


def check_suffix(path: str, kinds: tuple[str, ...] = SUFFIXES,
                 doing: str = "to write a network") -> str:
    """The lower-case suffix of ``path``; UsageError listing ``kinds`` if it is none of them.

    The one place a network file's format is told from its name: :func:`save_any`,
    :func:`load_any` and the commands that write networks call it before doing any work.

    >>> check_suffix("net.ONNX")
    '.onnx'
    >>> check_suffix("net.txt")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    thresholdc.errors.UsageError: net.txt: unknown output suffix '.txt' to write a network; ...
    """
    suffix = os.path.splitext(path)[1].lower()
    if suffix not in kinds:
        side = "output " if doing.startswith("to write") else ""
        shown = f"unknown {side}suffix {suffix!r}" if suffix else "no suffix"
        raise UsageError(f"{shown} {doing}; supported: {', '.join(kinds)}", file=path)
    return suffix


def save_any(net: Network, path: str) -> None:
    """Write ``net`` at ``path`` in the format its suffix names (atomically).

    Parameters
    ----------
    net : Network
    path : str
        Ends in ``.json``, ``.npz`` or ``.onnx``.

    Raises
    ------
    UsageError
        Any other suffix (the message lists the supported ones), a missing optional
        package, or a network that the format cannot hold.

    >>> from thresholdc.ir.network import Network, Output
    >>> save_any(Network(("a",), (), (Output("a", "a"),)), "net.txt")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    thresholdc.errors.UsageError: net.txt: unknown output suffix '.txt' ...; supported: ..., .onnx
    """
    suffix = check_suffix(path, SUFFIXES, "to write a network")
    try:
        if suffix == ".json":
            save_network_file(net, path)
        elif suffix == ".npz":
            _module("npz", None, "writing .npz").save_npz(net, path)
        else:
            _module("onnx", "onnx", "writing .onnx").save_onnx(net, path)
    except UsageError as err:  # say which file could not be written
        if err.file is None:
            err.file = path
        raise


def load_dense(path: str, like: Network | None = None) -> Network:
    """Read a dense MLP trained elsewhere from ``.npz`` or ONNX, named after ``like``.

    Parameters
    ----------
    path : str
        An ``.npz`` file in the layout of :mod:`thresholdc.export.npz`, or an ONNX model of
        ``Gemm`` or ``MatMul`` + ``Add`` with ``Sigmoid``, ``Tanh`` or ``Relu`` (as PyTorch's
        exporter writes them), or one written by :func:`save_any`.
    like : Network, optional
        The compiled network it came from: unit names, features, encoding and output names.
        Needed for ONNX models without thresholdc metadata.

    Returns
    -------
    Network

    Raises
    ------
    UsageError
        A shape that does not fit ``like`` (naming the layer), or no names for the units.
    NetworkFileError
        A file that cannot be read.

    >>> import os, tempfile
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> path = os.path.join(tempfile.mkdtemp(), "n.npz"); save_any(net, path)
    >>> [n.name for n in load_dense(path, like=net).neurons]
    ['n']
    """
    suffix = check_suffix(path, (".npz", ".onnx"), "to read a dense network from")
    if suffix == ".npz":
        return _module("npz", None, "reading .npz").load_npz(path, like)
    return _module("onnx_import", "onnx", "reading .onnx").load_onnx(path, like)


def load_any(path: str, like: Network | None = None) -> Network:
    """Read a network from ``.json``, ``.npz`` or ``.onnx`` (chosen by suffix).

    ``like`` is used by ``.npz`` and ``.onnx`` (see :func:`load_dense`); a ``.json`` network
    file names everything itself.

    >>> load_any("net.csv")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    thresholdc.errors.UsageError: net.csv: unknown suffix '.csv' ...; supported: .json, .npz, .onnx
    """
    suffix = check_suffix(path, SUFFIXES, "to read a network from")
    if suffix == ".json":
        return load_network_file(path)
    return load_dense(path, like)
