"""Readers of combinational netlists in the trade's open formats.

:func:`parse_bench` reads the ISCAS ``.bench`` format, :func:`parse_blif` BLIF; both return a
:class:`~thresholdc.ir.gates.GateGraph` with signal names kept verbatim, and raise
:class:`~thresholdc.errors.RuleError` naming the line and column of what they cannot read.

>>> parse_bench("INPUT(a)\\nOUTPUT(b)\\nb = NOT(a)\\n", "n.bench").gates["b"]
not(a)
"""

from .bench import parse_bench
from .blif import parse_blif

__all__ = ["parse_bench", "parse_blif"]
