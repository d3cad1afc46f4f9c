"""Explaining trained networks against their rules: unit read-back and the rules diff.

- :func:`diff` compares a trained network with its rule file definition by definition;
- :func:`read_units` reads a network's units back as rule expressions;
- :func:`expr_text` writes an expression as rule text.
"""

from .comparison import (
    MAX_ENUMERATE,
    SAMPLES,
    DefinitionDiff,
    Diff,
    OutputAgreement,
    UnitDrift,
    diff,
)
from .printer import expr_text
from .readback import UnitReading, read_units

__all__ = [
    "MAX_ENUMERATE",
    "SAMPLES",
    "Diff",
    "DefinitionDiff",
    "OutputAgreement",
    "UnitDrift",
    "UnitReading",
    "diff",
    "expr_text",
    "read_units",
]
