"""ONNX export, checked with onnx.checker and run by onnxruntime on every input row."""

from __future__ import annotations

import json

import numpy as np
import pytest

from tests.export._export_nets import all_rows, full_adder, random_network, strict_xor
from thresholdc.export.onnx import onnx_bytes, save_onnx, to_onnx
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.network.soften import apply_activation

onnx = pytest.importorskip("onnx")
ort = pytest.importorskip("onnxruntime")


def run_onnx(net: Network, X: np.ndarray) -> np.ndarray:
    """The outputs onnxruntime computes for ``X``  # onnxruntime as a second runtime"""
    session = ort.InferenceSession(onnx_bytes(net), providers=["CPUExecutionProvider"])
    return session.run(None, {"inputs": X.astype(np.float32)})[0]


def check(net: Network, X: np.ndarray, atol: float = 0.0) -> onnx.ModelProto:
    """Check the model and compare onnxruntime with Network.evaluate on every row of X."""
    model = to_onnx(net)
    onnx.checker.check_model(model, full_check=True)
    got = run_onnx(net, X)
    assert got.dtype == np.float32
    assert got.shape == (len(X), len(net.outputs))
    np.testing.assert_allclose(got, net.evaluate(X), rtol=1e-5, atol=atol)
    return model


def test_general_form_for_direct_connections_across_layers():
    model = check(full_adder(), all_rows(3))
    meta = {p.key: json.loads(p.value) for p in model.metadata_props}
    assert meta["form"] == "general"
    ops = [n.op_type for n in model.graph.node]
    # sum reads the inputs and carry: one Gemm on each, joined by a Sum
    assert ops == ["Gemm", "Greater", "Cast", "Gemm", "Gemm", "Sum", "Greater", "Cast",
                   "Gemm", "Gemm", "Sum"]


def test_strict_network_is_a_plain_mlp_chain():
    model = check(strict_xor(), all_rows(2))
    assert [n.op_type for n in model.graph.node] == [
        "Gemm", "Greater", "Cast", "Gemm", "Greater", "Cast"]


def test_model_interface_opset_and_symbolic_batch():
    model = to_onnx(full_adder())
    assert model.opset_import[0].domain == "" and model.opset_import[0].version >= 17
    (inp,), (out,) = model.graph.input, model.graph.output
    for value, width in ((inp, 3), (out, 2)):
        t = value.type.tensor_type
        assert t.elem_type == onnx.TensorProto.FLOAT
        assert t.shape.dim[0].dim_param == "batch"
        assert t.shape.dim[1].dim_value == width


def test_metadata_names_inputs_outputs_and_origins():
    net = Network(
        ("a", "b"),
        (Neuron("both", 1, ("a", "b"), (1, 1), -1.5, origin="both"),
         Neuron("both~1", 1, ("a",), (-1,), 0.5, origin="neither")),
        (Output("both", "both"), Output("copy", "b"), Output("not_a", "both~1")),
    )
    model = check(net, all_rows(2))
    meta = {p.key: json.loads(p.value) for p in model.metadata_props}
    assert meta["inputs"] == ["a", "b"]
    assert meta["outputs"] == ["both", "copy", "not_a"]
    assert meta["output_origins"] == ["both", "b", "neither"]
    assert meta["encoding"] == "binary"


def test_a_step_is_greater_and_cast():
    net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    ops = [n.op_type for n in to_onnx(net).graph.node]
    assert ops == ["Gemm", "Greater", "Cast"]


def test_soft_activations_are_the_onnx_operators():
    net = apply_activation(full_adder(), activation="sigmoid", layered=True)
    model = check(net, all_rows(3), atol=1e-6)
    assert {n.op_type for n in model.graph.node} == {"Gemm", "Sigmoid"}
    bip = apply_activation(full_adder(), activation="tanh", encoding="bipolar", layered=True)
    model = check(bip, all_rows(3, bipolar=True), atol=1e-6)
    assert {n.op_type for n in model.graph.node} == {"Gemm", "Tanh"}


def test_relu_form_with_linear_outputs():
    net = apply_activation(full_adder(), activation="relu")
    model = check(net, all_rows(3))
    assert "Relu" in {n.op_type for n in model.graph.node}
    # The ReLU form is exact: the outputs are the full adder's truth table.
    X = all_rows(3)
    assert run_onnx(net, X).tolist() == full_adder().evaluate(X).tolist()


def test_bipolar_step_network():
    net = apply_activation(full_adder(), encoding="bipolar")
    check(net, all_rows(3, bipolar=True))


def test_network_without_neurons_and_constant_neurons():
    check(Network(("a", "b"), (), (Output("b", "b"), Output("a", "a"))), all_rows(2))
    const = Network(("a",), (Neuron("one", 1, (), (), 0.5),), (Output("one", "one"),
                                                              Output("a", "a")))
    check(const, all_rows(1))


@pytest.mark.parametrize("seed", range(12))
def test_random_step_networks_on_every_row(seed):
    net = random_network(seed, n_inputs=6, n_neurons=10, max_fan_in=4)
    check(net, all_rows(6))


@pytest.mark.parametrize("seed", range(6))
def test_random_mixed_soft_networks_on_every_row(seed):
    net = random_network(100 + seed, n_inputs=5, n_neurons=9,
                         activations=("sigmoid", "tanh", "relu", "linear"))
    check(net, all_rows(5), atol=1e-5)


def test_same_network_same_bytes(tmp_path):
    assert onnx_bytes(full_adder()) == onnx_bytes(full_adder())
    a, b = tmp_path / "a.onnx", tmp_path / "b.onnx"
    save_onnx(full_adder(), str(a))
    save_onnx(full_adder(), str(b))
    assert a.read_bytes() == b.read_bytes()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.onnx", "b.onnx"]
    model = onnx.load(str(a))
    assert model.producer_name == "thresholdc"
    assert all(n.name for n in model.graph.node)
