"""Scoring: how well a network's outputs match the labels of a data set.

An output reads as true above the network's decision threshold (:meth:`Network.decide`).
The result is the ``score --json`` layout::

    {"rows": N, "outputs": [{"name", "column", "accuracy", "errors", "positives",
                             "precision", "recall", "f1",
                             "confusion": {"tp", "fp", "fn", "tn"}}]}

``positives`` counts the rows labelled true.  Precision is tp / (tp + fp), recall
tp / (tp + fn), F1 their harmonic mean 2·tp / (2·tp + fp + fn); a ratio whose denominator is
0 is ``None`` (printed ``-``), not a made-up 0 or 1.

>>> import numpy as np
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> from thresholdc.train.data import Dataset
>>> net = Network(("a",), (Neuron("y", 1, ("a",), (-1,), 0.5),), (Output("y", "y"),))
>>> d = Dataset("d.csv", np.array([[0.0], [1.0], [1.0]]), np.array([[1.0], [0.0], [1.0]]),
...             ("y",), ("label",), np.array([2, 3, 4]))
>>> out = score(net, d)["outputs"][0]
>>> out["accuracy"], out["errors"], out["confusion"], out["recall"]
(0.6666666666666666, 1, {'tp': 1, 'fp': 0, 'fn': 1, 'tn': 1}, 0.5)
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..ir.network import Network
from .data import Dataset

__all__ = ["score", "decisions"]


def decisions(network: Network, data: Dataset) -> tuple[np.ndarray, np.ndarray]:
    """The network's Boolean decisions and the Boolean labels, ``(rows, labelled outputs)``.

    >>> import numpy as np
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> from thresholdc.train.data import Dataset
    >>> net = Network(("a",), (Neuron("y", 1, ("a",), (1,), -0.5),), (Output("y", "y"),))
    >>> d = Dataset("d", np.array([[1.0]]), np.array([[0.0]]), ("y",), ("y",), np.array([2]))
    >>> [a.tolist() for a in decisions(net, d)]
    [[[True]], [[False]]]
    """
    index = {name: i for i, name in enumerate(network.output_names)}
    cols = [index[name] for name in data.outputs]
    decided = network.decide(data.X)[:, cols] if cols else np.zeros((data.rows, 0), bool)
    return np.asarray(decided, dtype=bool), data.y > 0.5


def _ratio(num: int, den: int) -> float | None:
    return float(num / den) if den else None


def score(network: Network, data: Dataset) -> dict[str, Any]:
    """Accuracy, errors, precision, recall, F1 and confusion counts of every labelled output.

    Parameters
    ----------
    network : Network
    data : Dataset
        From :func:`thresholdc.train.data.load_data` for this network.

    Returns
    -------
    dict
        The layout of the module docstring, outputs in network order.

    >>> import numpy as np
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> from thresholdc.train.data import Dataset
    >>> net = Network(("a",), (Neuron("y", 1, ("a",), (1,), -0.5),), (Output("y", "y"),))
    >>> d = Dataset("d", np.zeros((2, 1)), np.zeros((2, 1)), ("y",), ("y",), np.array([2, 3]))
    >>> o = score(net, d)["outputs"][0]; o["precision"], o["recall"], o["f1"]
    (None, None, None)
    """
    decided, truth = decisions(network, data)
    tp = (decided & truth).sum(axis=0)
    fp = (decided & ~truth).sum(axis=0)
    fn = (~decided & truth).sum(axis=0)
    tn = (~decided & ~truth).sum(axis=0)
    rows = data.rows
    outputs = []
    for k, (name, column) in enumerate(zip(data.outputs, data.columns, strict=True)):
        t_p, f_p, f_n, t_n = int(tp[k]), int(fp[k]), int(fn[k]), int(tn[k])
        errors = f_p + f_n
        outputs.append({
            "name": name,
            "column": column,
            "accuracy": float((rows - errors) / rows) if rows else 1.0,
            "errors": errors,
            "positives": t_p + f_n,
            "precision": _ratio(t_p, t_p + f_p),
            "recall": _ratio(t_p, t_p + f_n),
            "f1": _ratio(2 * t_p, 2 * t_p + f_p + f_n),
            "confusion": {"tp": t_p, "fp": f_p, "fn": f_n, "tn": t_n},
        })
    return {"rows": rows, "outputs": outputs}
