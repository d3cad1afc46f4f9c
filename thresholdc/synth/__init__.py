"""The synth stage: a gate graph to threshold neurons.

:func:`map_to_neurons` builds one construction per gate; :func:`collapse` synthesises larger
threshold neurons over cuts; :func:`is_threshold` (and ``identify`` in
:mod:`thresholdc.synth.identify`) decide whether a truth table is one threshold neuron.
No public name here equals a submodule's name, so every submodule stays importable.
"""

from .collapsing import SUPPORT_LIMIT, collapse
from .identify import MAX_VARIABLES, Realisation, is_threshold
from .mapping import map_to_neurons

__all__ = [
    "SUPPORT_LIMIT", "collapse", "MAX_VARIABLES", "Realisation", "is_threshold",
    "map_to_neurons",
]
