"""The two public entry points that are not the compiler: :func:`load` and :func:`verify`.

>>> import thresholdc
>>> rules = "input a\\nlow = not a\\n"
>>> thresholdc.verify(thresholdc.compile_rules(rules), rules).equal
True
"""

from __future__ import annotations

import os
from pathlib import Path

from .network.model import Network
from .source import Source, load_source
from .verify.report import Report

__all__ = ["load", "verify", "as_source"]


def load(path: str | Path, *, like: Network | None = None) -> Network:
    """Read a network file: ``.json`` (the thresholdc network file), or a dense MLP saved as
    ``.npz`` or ``.onnx`` (unit names taken from ``like``, the compiled network it came from).

    >>> import tempfile
    >>> from thresholdc import compile_rules
    >>> p = os.path.join(tempfile.mkdtemp(), "n.json")
    >>> compile_rules("input a\\ny = not a\\n").save(p)
    >>> load(p).output_names
    ('y',)
    """
    path = str(path)
    if os.path.splitext(path)[1].lower() == ".json":
        from .network.fileformat import load as load_json

        return load_json(path)
    from .export import load_any

    return load_any(path, like=like)


def as_source(source: Source | str | Path) -> Source:
    """A :class:`Source` from a Source, a ``Path`` to a file, or rule text."""
    if isinstance(source, Source):
        return source
    if isinstance(source, Path):
        return load_source(str(source))
    return Source.from_text(source, "<rules>", kind="rules")


def verify(
    network: Network,
    source: Source | str | Path,
    *,
    method: str = "auto",
    max_inputs: int = 24,
    time_limit: float = 60.0,
) -> Report:
    """Check that ``network`` computes ``source`` (rule text, a ``Path`` or a Source).

    ``method`` is ``auto`` (exhaustive up to ``max_inputs`` inputs, then local + SAT),
    ``exhaustive``, ``local`` or ``sat``; the report carries the verdict
    (``equal``/``different``/``undecided``) and up to five counterexamples per output.

    >>> from thresholdc import compile_rules
    >>> verify(compile_rules("input a, b\\ny = a or b\\n"), "input a, b\\ny = a and b\\n").result
    'different'
    """
    src = as_source(source)
    try:
        from .verify.auto import verify_network
    except ImportError:  # pragma: no cover
        from .verify.exhaustive import verify_exhaustive

        return verify_exhaustive(network, src, max_inputs=max_inputs)
    return verify_network(
        network, src, method=method, max_inputs=max_inputs, time_limit=time_limit
    )
