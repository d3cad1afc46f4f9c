"""The shared representations every stage reads and writes (the ground floor).

- :mod:`~thresholdc.ir.program`: the rule program (the AST of DESIGN.md §3);
- :mod:`~thresholdc.ir.gates`: the gate graph rules are lowered to and netlists are read into;
- :mod:`~thresholdc.ir.network`: the Network of neurons, its structural checker, and the facts
  about its real-valued input units;
- :mod:`~thresholdc.ir.activations`: the activation functions a neuron may use;
- :mod:`~thresholdc.ir.reference`: the protocol of what a network is verified against;
- :mod:`~thresholdc.ir.options`: the options of a compile, validated once.

Nothing here imports a stage package (syntax, logic, network, synth, verify, export, train).

>>> from thresholdc.ir import Network, Neuron, Output
>>> Network(("a",), (Neuron("y", 1, ("a",), (-1,), 0.5),), (Output("y", "y"),)).depth
1
"""

from .activations import ACTIVATIONS, Activation
from .gates import GATE_OPS, Gate, GateGraph
from .network import (
    DEFAULT_SCALE,
    ENCODINGS,
    ROLES,
    Network,
    Neuron,
    Output,
    check_network,
    real_margins,
    real_units,
)
from .options import CompileOptions
from .program import Program
from .reference import Reference

__all__ = [
    "ACTIVATIONS", "Activation",
    "GATE_OPS", "Gate", "GateGraph",
    "DEFAULT_SCALE", "ENCODINGS", "ROLES", "Network", "Neuron", "Output", "check_network",
    "real_margins", "real_units",
    "CompileOptions",
    "Program",
    "Reference",
]
