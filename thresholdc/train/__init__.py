"""Training: data files, scoring, and warm-start training of compiled networks.

- :func:`load_data` reads a CSV file into the input units and labels of a network;
- :func:`score` counts how often the network's outputs match the labels;
- :func:`train` fits the network to labelled rows, starting from its rules with certified
  sigmoid gains and an anchor toward them (see :mod:`thresholdc.train.fit` for the defaults).

>>> import numpy as np
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> rules = Network(("a",), (Neuron("y", 1, ("a",), (1,), -0.5, origin="y"),), (Output("y", "y"),))
>>> X = np.array([[0.0], [1.0]] * 4)
>>> train(rules, X, X, epochs=5, anchor=0.01).network.decide([[0], [1]]).ravel().tolist()
[False, True]
"""

from .data import Dataset, Table, load_data, parse_label_specs, read_table
from .fit import DEFAULT_LR, DEFAULTS, TrainResult, train
from .loop import Epoch
from .scoring import decisions, score
from .warmstart import prepare_start

__all__ = [
    "DEFAULT_LR",
    "DEFAULTS",
    "Dataset",
    "Epoch",
    "Table",
    "decisions",
    "TrainResult",
    "load_data",
    "parse_label_specs",
    "prepare_start",
    "read_table",
    "score",
    "train",
]
