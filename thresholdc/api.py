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

from .errors import UsageError
from .network.model import Network
from .source import Source, load_source
from .verify.report import Report

__all__ = ["load", "verify", "as_source", "rule_text", "figure"]

#: Suffixes of source files; a one-line string ending in one is taken for a file name.
SOURCE_SUFFIXES = (".rules", ".bench", ".blif", ".txt")


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


def rule_text(text: str, *, function: str = "compile_rules", file_function: str = "compile_file"
              ) -> str:
    """``text`` itself, unless it is a file name given where rule text was expected: then a
    UsageError that says how to pass the file.

    >>> rule_text("input a\\ny = a\\n") == "input a\\ny = a\\n"
    True
    >>> rule_text("loan.rules")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    thresholdc.errors.UsageError: loan.rules: compile_rules takes rule text, and ... \
call thresholdc.compile_file('loan.rules') or pass pathlib.Path('loan.rules')
    """
    if not isinstance(text, str):
        raise UsageError(f"{function} takes rule text (str) or a pathlib.Path, got "
                         f"{type(text).__name__}")
    name = text.strip()
    if "\n" not in name and name.lower().endswith(SOURCE_SUFFIXES):
        exists = "" if os.path.isfile(name) else " (no such file)"
        raise UsageError(
            f"{function} takes rule text, and {name!r} looks like a file name{exists}; to "
            f"read a file, call thresholdc.{file_function}({name!r}) or pass "
            f"pathlib.Path({name!r})", file=name)
    return text


def as_source(source: Source | str | Path) -> Source:
    """A :class:`Source` from a Source, a ``Path`` to a file, or rule text (named
    ``<rules>`` in messages)."""
    if isinstance(source, Source):
        return source
    if isinstance(source, os.PathLike):
        return load_source(os.fspath(source))
    return Source.from_text(rule_text(source, function="verify", file_function="load_source"),
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
    from .export import _module

    return _module("drawing", "plot", "figure").figure(network, **options)


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
