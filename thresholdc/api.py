"""The two public entry points that are not the compiler: :func:`load` and :func:`verify`.

>>> import thresholdc
>>> rules = "input a\\nlow = not a\\n"
>>> thresholdc.verify(thresholdc.compile_rules(rules), rules).equal
True
"""

from __future__ import annotations

from pathlib import Path

from .export import load_any
from .ir.network import Network
from .ir.reference import Reference
from .logic import load_source, source_from_text
from .verification import Report, verify_network

__all__ = ["load", "verify", "as_source"]


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
    """A :class:`~thresholdc.ir.reference.Reference` from one, a ``Path`` or rule text."""
    if isinstance(source, Reference):
        return source
    if isinstance(source, Path):
        return load_source(str(source))
    return source_from_text(source, "<rules>", kind="rules")


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
