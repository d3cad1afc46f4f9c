"""Scoring: how often a network's outputs match the labels of a data set.

An output reads as true above the network's decision threshold (:meth:`Network.decide`).
The result is the ``score --json`` layout::

    {"rows": N, "outputs": [{"name": …, "column": …, "accuracy": …, "errors": …}]}

>>> import numpy as np
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> from thresholdc.train.data import Dataset
>>> net = Network(("a",), (Neuron("y", 1, ("a",), (-1,), 0.5),), (Output("y", "y"),))
>>> d = Dataset("d.csv", np.array([[0.0], [1.0], [1.0]]), np.array([[1.0], [0.0], [1.0]]),
...             ("y",), ("label",), np.array([2, 3, 4]))
>>> result = score(net, d)
>>> result["rows"], result["outputs"][0]
(3, {'name': 'y', 'column': 'label', 'accuracy': 0.6666666666666666, 'errors': 1})
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..ir.network import Network
from .data import Dataset

__all__ = ["score"]


def score(network: Network, data: Dataset) -> dict[str, Any]:
    """Accuracy and error count of every labelled output of ``data`` (network order).

    Parameters
    ----------
    network : Network
    data : Dataset
        From :func:`thresholdc.train.data.load_data` for this network.

    Returns
    -------
    dict
        ``{"rows": N, "outputs": [{"name", "column", "accuracy", "errors"}]}``.
    """
    index = {name: i for i, name in enumerate(network.output_names)}
    cols = [index[name] for name in data.outputs]
    decided = network.decide(data.X)[:, cols] if cols else np.zeros((data.rows, 0), bool)
    wrong = decided != (data.y > 0.5)
    errors = wrong.sum(axis=0)
    rows = data.rows
    return {
        "rows": rows,
        "outputs": [
            {
                "name": name,
                "column": column,
                "accuracy": float((rows - errors[k]) / rows) if rows else 1.0,
                "errors": int(errors[k]),
            }
            for k, (name, column) in enumerate(zip(data.outputs, data.columns, strict=True))
        ],
    }
