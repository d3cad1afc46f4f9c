"""The two public entry points that are not the compiler: :func:`load` and :func:`verify`.

>>> import thresholdc
>>> rules = "input a\\nlow = not a\\n"
>>> thresholdc.verify(thresholdc.compile_rules(rules), rules).equal
True
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

from .compiler import rule_text
from .export import _module, load_any
from .ir.network import Network
from .ir.reference import Reference
from .logic import load_source, source_from_text
from .verification import Report, verify_network

__all__ = ["load", "verify", "as_source", "figure"]



def load(path: str | Path, *, like: Network | None = None) -> Network:
    """Read a network file: ``.json`` (the thresholdc network file), or a dense MLP saved as
    ``.npz`` or ``.onnx`` (unit names taken from ``like``, the compiled network it came from).

    >>> import os, tempfile
    >>> from thresholdc import compile_rules, save_any
    >>> p = os.path.join(tempfile.mkdtemp(), "n.json")
    >>> save_any(compile_rules("input a\\ny = not a\\n"), p)
    >>> load(p).output_names
    ('y',)
    """
    return load_any(str(path), like=like)


def as_source(source: Reference | str | Path) -> Reference:
    """A :class:`~thresholdc.ir.reference.Reference` from one, a ``Path`` to a file, or rule
    text (named ``<rules>`` in messages)."""
    if isinstance(source, Reference):
        return source
    if isinstance(source, os.PathLike):
        return load_source(os.fspath(source))
    return source_from_text(rule_text(source, function="verify", file_function="load_source"),
                            "<rules>", kind="rules")


def figure(network: Network, **options: Any) -> Any:
    """The drawing of ``network`` as a matplotlib ``Figure`` (extra ``plot``), for notebooks
    and reports; options as for :func:`thresholdc.export.drawing.figure` (``max_neurons``,
    ``max_labels``, ``min_weight``).

    >>> import thresholdc
    >>> fig = thresholdc.figure(thresholdc.compile_rules("input a, b\\ny = a or b\\n"))
    >>> type(fig).__name__
    'Figure'
    """
    return _module("drawing", "plot", "figure").figure(network, **options)


def verify(
    network: Network,
    source: Reference | str | Path,
    *,
    method: str = "auto",
    max_inputs: int = 24,
    time_limit: float = 60.0,
) -> Report:
    """Check that ``network`` computes ``source`` (rule text, a ``Path`` or a Reference).

    ``method`` is ``auto`` (exhaustive up to ``max_inputs`` inputs, then local + SAT),
    ``exhaustive``, ``local`` or ``sat``; the report carries the verdict
    (``equal``/``different``/``undecided``) and up to five counterexamples per output.

    >>> from thresholdc import compile_rules
    >>> verify(compile_rules("input a, b\\ny = a or b\\n"), "input a, b\\ny = a and b\\n").result
    'different'
    """
    return verify_network(
        network, as_source(source), method=method, max_inputs=max_inputs, time_limit=time_limit
    )
