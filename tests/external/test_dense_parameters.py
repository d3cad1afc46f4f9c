"""Parameter counting of a dense network.

A dense 4-3-3-2 network has 4·3 + 3·3 + 3·2 = 27 weights and 3 + 3 + 2 = 8 biases: 35
parameters (common practice, counted by hand).
"""

from __future__ import annotations

import json

from thresholdc.cli import main
from thresholdc.export import save_any
from thresholdc.ir.network import Network, Neuron, Output


def dense(sizes):
    units = [f"x{i}" for i in range(sizes[0])]
    inputs = tuple(units)
    neurons = []
    for L, width in enumerate(sizes[1:], start=1):
        layer = [f"h{L}_{j}" for j in range(width)]
        neurons += [Neuron(name, L, tuple(units), (1.0,) * len(units), -0.5, "sigmoid")
                    for name in layer]
        units = layer
    return Network(inputs, tuple(neurons), tuple(Output(u, u) for u in units))


def test_api_counts_35_parameters_for_4_3_3_2():
    net = dense([4, 3, 3, 2])
    assert net.parameter_count == 35  # common practice: 27 weights + 8 biases
    assert [W.shape for W, _, _ in net.dense_layers()] == [(3, 4), (3, 3), (2, 3)]


def test_inspect_reports_35_parameters(tmp_path, capsys):
    p = tmp_path / "dense.json"
    save_any(dense([4, 3, 3, 2]), str(p))
    assert main(["inspect", str(p), "--json"]) == 0
    totals = json.loads(capsys.readouterr().out)["totals"]
    assert totals["parameters"] == 35 and totals["weights"] == 27 and totals["biases"] == 8
    assert main(["inspect", str(p)]) == 0
    assert "35 parameters (27 weights + 8 biases)" in capsys.readouterr().out
