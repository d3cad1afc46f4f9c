"""The network stage: passes from a Network to a Network, and the network file.

- the network file (DESIGN.md §4): :func:`dumps`, :func:`loads`, :func:`load`, :func:`save`;
- layering: :func:`assign_layers`, :func:`insert_relays`, :func:`prune_dead`;
- activations: :func:`apply_activation` (soft gains with a certificate), :func:`to_relu`.

The Network itself is :class:`thresholdc.ir.network.Network`.
"""

from .fileformat import atomic_write, check_writable, dumps, from_dict, load, loads, save
from .layering import assign_layers, fresh_name, insert_relays, prune_dead
from .relu import to_relu
from .soften import (
    ACTIVATION_CHOICES,
    DEFAULT_TOLERANCE,
    ENCODING_CHOICES,
    MAX_MARGIN_INPUTS,
    apply_activation,
    certificate_bound,
    deviation,
    misread_limit,
    neuron_margins,
    survives,
    to_bipolar,
)

__all__ = [
    "atomic_write", "check_writable", "dumps", "from_dict", "load", "loads", "save",
    "assign_layers", "fresh_name", "insert_relays", "prune_dead",
    "to_relu",
    "ACTIVATION_CHOICES", "DEFAULT_TOLERANCE", "ENCODING_CHOICES", "MAX_MARGIN_INPUTS",
    "apply_activation", "deviation",
    "certificate_bound", "misread_limit", "neuron_margins", "survives", "to_bipolar",
]
