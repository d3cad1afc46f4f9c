"""The syntax stage: rule text and netlists to the shared representations.

:func:`parse` reads a rule file into a :class:`~thresholdc.ir.program.Program`;
:func:`parse_bench` and :func:`parse_blif` read netlists into a
:class:`~thresholdc.ir.gates.GateGraph`.
"""

from .importers import parse_bench, parse_blif
from .parser import KEYWORDS, parse

__all__ = ["KEYWORDS", "parse", "parse_bench", "parse_blif"]
