"""Training: data files, scoring, and training of networks started from their rules.

- :func:`load_data` reads a CSV file into the input units and labels of a network;
- :func:`score` counts how often the network's outputs match the labels;
- :func:`rule_network` builds the rule-structured start of a rule file;
- :func:`train` fits a network to labelled rows (every choice in :class:`TrainOptions`).

>>> import numpy as np
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> rules = Network(("a",), (Neuron("y", 1, ("a",), (1,), -0.5, origin="y"),), (Output("y", "y"),))
>>> X = np.array([[0.0], [1.0]] * 4)
>>> train(rules, X, X, anchor=0.1, workers=1).network.decide([[0], [1]]).ravel().tolist()
[False, True]
"""

from .data import MAX_DATA_BYTES, Dataset, Table, load_data, parse_label_specs, read_table
from .fit import TrainResult, train
from .kbstart import rule_network
from .loop import Epoch
from .options import ANCHOR_GRID, CHOICES, WEIGHT_GRID, TrainOptions
from .scoring import decisions, score
from .tolerance import start_tolerance
from .warmstart import prepare_start

__all__ = [
    "ANCHOR_GRID",
    "CHOICES",
    "WEIGHT_GRID",
    "Dataset",
    "Epoch",
    "Table",
    "decisions",
    "TrainOptions",
    "TrainResult",
    "load_data",
    "MAX_DATA_BYTES",
    "parse_label_specs",
    "prepare_start",
    "read_table",
    "rule_network",
    "score",
    "start_tolerance",
    "train",
]
