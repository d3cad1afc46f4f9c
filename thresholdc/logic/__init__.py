"""The logic stage: rule semantics, lowering to gates, and the sources a network is checked
against.

- :func:`evaluate` is the reference evaluator of a rule program (numpy, no network);
- :func:`lower_to_gates` lowers a program to a gate graph;
- the typed-input helpers (:func:`network_features`, :func:`evaluate_units`, ...);
- :func:`load_source` / :func:`source_from_text` give a :class:`RuleSource` or a
  :class:`NetlistSource` (both implement :class:`thresholdc.ir.reference.Reference`).
"""

from .lower import DEFAULT_SIMPLIFY_SUPPORT, input_units, lower_to_gates
from .reference import evaluate, evaluate_columns
from .source import (
    NETLIST_SUFFIXES,
    NetlistSource,
    RuleSource,
    load_source,
    read_source_text,
    source_from_text,
)
from .support import network_support, source_support, unused_inputs
from .typed import (
    decode_units,
    evaluate_units,
    feature_scale,
    network_features,
    real_thresholds,
    strict_real_test,
)

__all__ = [
    "DEFAULT_SIMPLIFY_SUPPORT", "input_units", "lower_to_gates",
    "evaluate", "evaluate_columns",
    "NETLIST_SUFFIXES", "NetlistSource", "RuleSource", "load_source", "read_source_text",
    "source_from_text",
    "decode_units", "evaluate_units", "feature_scale", "network_features", "real_thresholds",
    "strict_real_test",
    "network_support", "source_support", "unused_inputs",
]
